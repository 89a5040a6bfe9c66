//! A plain-text table for the human summary each command prints by default.

use std::fmt::Write as _;

/// Rows of cells, printed with aligned columns. The first row is the header
/// when [`Table::with_header`] is used.
#[derive(Debug, Default, Clone)]
pub struct Table {
    title: Option<String>,
    header: Option<Vec<String>>,
    rows: Vec<Vec<String>>,
    notes: Vec<String>,
}

impl Table {
    /// An empty table with an optional title line.
    pub fn new(title: impl Into<String>) -> Self {
        Table {
            title: Some(title.into()),
            ..Default::default()
        }
    }

    /// Sets the header row.
    pub fn with_header<S: Into<String>>(mut self, cells: impl IntoIterator<Item = S>) -> Self {
        self.header = Some(cells.into_iter().map(Into::into).collect());
        self
    }

    /// Appends a row.
    pub fn row<S: Into<String>>(&mut self, cells: impl IntoIterator<Item = S>) -> &mut Self {
        self.rows.push(cells.into_iter().map(Into::into).collect());
        self
    }

    /// Appends a note printed under the table.
    pub fn note(&mut self, text: impl Into<String>) -> &mut Self {
        self.notes.push(text.into());
        self
    }

    /// Renders the table: columns left-aligned for text, right-aligned for
    /// cells that parse as numbers.
    pub fn render(&self) -> String {
        let all: Vec<&Vec<String>> = self.header.iter().chain(self.rows.iter()).collect();
        let ncol = all.iter().map(|r| r.len()).max().unwrap_or(0);
        let mut width = vec![0usize; ncol];
        for r in &all {
            for (i, c) in r.iter().enumerate() {
                width[i] = width[i].max(c.chars().count());
            }
        }
        let mut out = String::new();
        if let Some(t) = &self.title {
            let _ = writeln!(out, "{t}");
        }
        let line = |out: &mut String, r: &Vec<String>| {
            let mut s = String::new();
            for (i, c) in r.iter().enumerate() {
                let numeric = c.trim().parse::<f64>().is_ok();
                let pad = width[i] - c.chars().count();
                if i > 0 {
                    s.push_str("  ");
                }
                if numeric {
                    s.push_str(&" ".repeat(pad));
                    s.push_str(c);
                } else {
                    s.push_str(c);
                    s.push_str(&" ".repeat(pad));
                }
            }
            let _ = writeln!(out, "  {}", s.trim_end());
        };
        if let Some(h) = &self.header {
            line(&mut out, h);
            let total: usize = width.iter().sum::<usize>() + 2 * ncol.saturating_sub(1);
            let _ = writeln!(out, "  {}", "-".repeat(total));
        }
        for r in &self.rows {
            line(&mut out, r);
        }
        for n in &self.notes {
            let _ = writeln!(out, "  {n}");
        }
        out
    }
}

/// Formats a value with `digits` significant figures, no exponent for the
/// usual magnitudes of ride results.
pub fn sig(value: f64, digits: usize) -> String {
    if !value.is_finite() {
        return format!("{value}");
    }
    if value == 0.0 {
        return "0".to_string();
    }
    let mag = value.abs().log10().floor() as i32;
    if !(-4..6).contains(&mag) {
        return format!("{:.*e}", digits.saturating_sub(1), value);
    }
    let decimals = (digits as i32 - 1 - mag).max(0) as usize;
    format!("{value:.decimals$}")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn aligns_numbers_right_and_text_left() {
        let mut t = Table::new("t").with_header(["name", "value"]);
        t.row(["a", "1.5"]).row(["longer", "10.25"]);
        let s = t.render();
        assert!(s.contains("  a         1.5\n"), "{s}");
        assert!(s.contains("  longer  10.25\n"), "{s}");
    }

    #[test]
    fn significant_figures() {
        assert_eq!(sig(0.012345, 3), "0.0123");
        assert_eq!(sig(1234.6, 3), "1235");
        assert_eq!(sig(1.0, 3), "1.00");
        assert_eq!(sig(1e-7, 2), "1.0e-7");
    }
}
