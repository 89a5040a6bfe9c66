//! Reading back the life spectra that `roughride lifetime` writes
//! (`--exceedance`, `--matrix`), one axle and quantity at a time, for the
//! pictures. The formats are those of [`super::spectra`]; every value is
//! checked (finite, ranges ordered) and a message names the file, the line
//! and the column.

use std::path::Path;

/// The quantities of the life spectra, as their CSV `quantity` column names them.
pub const QUANTITIES: [&str; 3] = ["travel_m", "suspension_force_n", "tyre_load_n"];

/// One exceedance series (a part, or `total`): cycles whose range is at or
/// above each range, ranges ascending.
#[derive(Debug, Clone, PartialEq)]
pub struct ExceedanceSeries {
    /// The part's name, or `total`.
    pub name: String,
    /// (range, cycles at or above it), in the file's unit.
    pub points: Vec<(f64, f64)>,
}

/// One cell of a range–mean matrix.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MatrixCell {
    /// Range bin, lower and upper edge.
    pub range: (f64, f64),
    /// Mean bin, lower and upper edge.
    pub mean: (f64, f64),
    /// Life cycles in the cell.
    pub cycles: f64,
}

fn bad(path: &Path, line: u64, message: impl std::fmt::Display) -> crate::Error {
    crate::Error::Usage(format!("{}: line {line}: {message}", path.display()))
}

/// The rows of `path` with `axle` and `quantity`, each as its line number
/// and its fields after the first two, checked to have `header` as header.
fn rows_of(
    path: &Path,
    header: &[&str],
    axle: &str,
    quantity: &str,
) -> Result<Vec<(u64, Vec<String>)>, crate::Error> {
    let text = std::fs::read_to_string(path)
        .map_err(|e| crate::Error::Usage(format!("{}: cannot read: {e}", path.display())))?;
    let mut rdr = csv::ReaderBuilder::new()
        .has_headers(true)
        .trim(csv::Trim::All)
        .from_reader(text.as_bytes());
    let got: Vec<String> = rdr
        .headers()
        .map_err(|e| bad(path, 1, crate::error::csv_message(e.kind())))?
        .iter()
        .map(String::from)
        .collect();
    if got != header {
        return Err(bad(
            path,
            1,
            format!(
                "header `{}`, expected `{}` (a file written by `roughride lifetime`)",
                got.join(","),
                header.join(",")
            ),
        ));
    }
    let mut rows = Vec::new();
    let mut seen = std::collections::BTreeSet::new();
    for rec in rdr.records() {
        let rec = rec.map_err(|e| {
            let line = e.position().map_or(0, |p| p.line());
            bad(path, line, crate::error::csv_message(e.kind()))
        })?;
        let line = rec.position().map_or(0, |p| p.line());
        seen.insert(format!("{}/{}", &rec[0], &rec[1]));
        if &rec[0] == axle && &rec[1] == quantity {
            rows.push((line, rec.iter().skip(2).map(String::from).collect()));
        }
    }
    if rows.is_empty() {
        let have: Vec<String> = seen.into_iter().collect();
        return Err(crate::Error::Usage(format!(
            "{}: no rows for axle `{axle}` and quantity `{quantity}` (the file has: {})",
            path.display(),
            if have.is_empty() {
                "no rows".to_string()
            } else {
                have.join(", ")
            }
        )));
    }
    Ok(rows)
}

fn number(path: &Path, line: u64, column: &str, text: &str) -> Result<f64, crate::Error> {
    match text.parse::<f64>() {
        Ok(v) if v.is_finite() => Ok(v),
        _ => Err(bad(
            path,
            line,
            format!("`{column}`: `{text}` is not a finite number"),
        )),
    }
}

/// Reads the exceedance series of one axle and quantity, in file order
/// (the parts, then `total`).
pub fn read_exceedance(
    path: &Path,
    axle: &str,
    quantity: &str,
) -> Result<Vec<ExceedanceSeries>, crate::Error> {
    let header = ["axle", "quantity", "series", "range", "cycles_at_or_above"];
    let mut out: Vec<ExceedanceSeries> = Vec::new();
    for (line, f) in rows_of(path, &header, axle, quantity)? {
        let range = number(path, line, "range", &f[1])?;
        let cycles = number(path, line, "cycles_at_or_above", &f[2])?;
        if range < 0.0 || cycles < 0.0 {
            return Err(bad(path, line, "range and cycles must not be negative"));
        }
        match out.last_mut() {
            Some(s) if s.name == f[0] => {
                if s.points.last().is_some_and(|&(r, _)| r >= range) {
                    return Err(bad(path, line, "ranges of a series must ascend"));
                }
                s.points.push((range, cycles));
            }
            _ => {
                if out.iter().any(|s| s.name == f[0]) {
                    return Err(bad(path, line, format!("series `{}` appears twice", f[0])));
                }
                out.push(ExceedanceSeries {
                    name: f[0].clone(),
                    points: vec![(range, cycles)],
                });
            }
        }
    }
    Ok(out)
}

/// Reads the range–mean matrix of one axle and quantity.
pub fn read_matrix(
    path: &Path,
    axle: &str,
    quantity: &str,
) -> Result<Vec<MatrixCell>, crate::Error> {
    let header = [
        "axle",
        "quantity",
        "range_lower",
        "range_upper",
        "mean_lower",
        "mean_upper",
        "cycles",
    ];
    let names = &header[2..];
    let mut out = Vec::new();
    for (line, f) in rows_of(path, &header, axle, quantity)? {
        let mut v = [0.0; 5];
        for (i, slot) in v.iter_mut().enumerate() {
            *slot = number(path, line, names[i], &f[i])?;
        }
        if !(v[0] < v[1] && v[2] < v[3] && v[4] >= 0.0 && v[0] >= 0.0) {
            return Err(bad(
                path,
                line,
                "a cell needs lower < upper edges, ranges and cycles not negative",
            ));
        }
        out.push(MatrixCell {
            range: (v[0], v[1]),
            mean: (v[2], v[3]),
            cycles: v[4],
        });
    }
    Ok(out)
}
