//! `roughride comfort`: ISO 2631-1 evaluation of a measured acceleration
//! record (CSV with `time_s` and a named column in m/s²): aw, VDV, MTVV,
//! crest factor, comfort reactions, health caution zone and daily exposure.
//! The exposure duration is converted to seconds here, at the edge.

use std::path::PathBuf;

use clap::Args as ClapArgs;
use roughride::comfort::{self, Guidance, Measures, Meter, Weighting};
use roughride::report::{self, Table, sig};
use serde::Serialize;

/// Options of `roughride comfort`.
#[derive(Debug, ClapArgs)]
pub struct Args {
    /// Record CSV with a time_s column (s) and the acceleration column (m/s^2).
    #[arg(value_name = "FILE")]
    pub file: PathBuf,
    /// Name of the acceleration column to evaluate.
    #[arg(long, value_name = "NAME")]
    pub column: String,
    /// Frequency weighting: wk, wd, wf, wc, we, wj or none.
    #[arg(long, value_name = "W", default_value = "wk")]
    pub weighting: Weighting,
    /// Daily exposure duration for the health guidance, with a unit: 8h, 30min, 3600s.
    #[arg(long, value_name = "DURATION", default_value = "8h", allow_hyphen_values = true,
          value_parser = parse_duration_s)]
    pub exposure: f64,
    /// Print one JSON object instead of the table.
    #[arg(long)]
    pub json: bool,
}

/// Parses `8h`, `30min`, `3600s` (also `1.5 h`) into seconds; a unit is required.
fn parse_duration_s(text: &str) -> Result<f64, String> {
    roughride::batch::values::parse_duration_s(text).map_err(|e| e.to_string())
}

/// The JSON object: the documented keys of the measures at top level, then
/// the guidance.
#[derive(Debug, Serialize)]
struct Output<'a> {
    file: String,
    column: &'a str,
    sample_rate_hz: f64,
    samples: usize,
    #[serde(flatten)]
    measures: &'a Measures,
    guidance: &'a Guidance,
    caution: &'static str,
}

/// Reads, evaluates and prints.
pub fn run(args: Args) -> Result<(), roughride::Error> {
    let rec = comfort::read_record(&args.file, &args.column)?;
    let mut meter = Meter::new(args.weighting, rec.sample_rate_hz)
        .map_err(|e| comfort::ComfortError::Unusable(format!("{}: {e}", args.file.display())))?;
    for &a in &rec.accel_m_s2 {
        meter.push(a);
    }
    let m = meter.finish();
    let g = comfort::guidance(&m, args.exposure);
    if args.json {
        let out = Output {
            file: args.file.display().to_string(),
            column: &args.column,
            sample_rate_hz: rec.sample_rate_hz,
            samples: rec.accel_m_s2.len(),
            measures: &m,
            guidance: &g,
            caution: comfort::HEALTH_CAUTION,
        };
        report::print_stdout(&report::json_line(&out, "comfort evaluation")?)?;
        return Ok(());
    }
    let mut text = measures_table(&args, rec.sample_rate_hz, &m).render();
    text.push('\n');
    text.push_str(&guidance_table(&g).render());
    report::print_stdout(&text)?;
    Ok(())
}

fn measures_table(args: &Args, fs: f64, m: &Measures) -> Table {
    let mut t = Table::new(format!(
        "ISO 2631-1 evaluation of {} column {} (weighting {})",
        args.file.display(),
        args.column,
        m.weighting
    ))
    .with_header(["quantity", "value", "unit"]);
    let mut row = |q: &str, v: String, u: &str| {
        t.row([q.to_string(), v, u.to_string()]);
    };
    row("sample rate", sig(fs, 6), "Hz");
    row("duration", sig(m.duration_s, 6), "s");
    row("unweighted r.m.s.", sig(m.accel_rms, 4), "m/s^2");
    row("aw (weighted r.m.s.)", sig(m.aw, 4), "m/s^2");
    row("VDV", sig(m.vdv, 4), "m/s^1.75");
    row("MTVV (1 s running r.m.s.)", sig(m.mtvv, 4), "m/s^2");
    row("peak weighted", sig(m.peak_weighted, 4), "m/s^2");
    row("crest factor", sig(m.crest_factor, 3), "");
    row("MTVV / aw", sig(m.mtvv_ratio, 3), "");
    row("VDV / (aw T^1/4)", sig(m.vdv_ratio, 3), "");
    let advice = if m.additional_methods_advised {
        "Crest factor > 9, MTVV/aw > 1.5 or VDV/(aw T^1/4) > 1.75: report MTVV and VDV beside aw (ISO 2631-1 6.3)."
    } else {
        "The basic r.m.s. method suffices (crest factor and ratios below the ISO 2631-1 6.3 limits)."
    };
    t.note(advice);
    t
}

fn hours(s: Option<f64>) -> String {
    match s {
        Some(v) if v.is_finite() => sig(v / 3600.0, 3),
        _ => "-".into(),
    }
}

fn guidance_table(g: &Guidance) -> Table {
    let mut t = Table::new(format!(
        "Guidance for a daily exposure of {} h",
        sig(g.exposure_s / 3600.0, 3)
    ))
    .with_header(["item", "value", "reference", "note"]);
    t.row([
        "comfort reaction (Annex C)".to_string(),
        g.comfort_label.clone(),
        String::new(),
        "bands overlap; all that apply".to_string(),
    ]);
    for z in [&g.caution_zone_b1, &g.caution_zone_b2] {
        t.row([
            format!("caution zone, eq. {} (m/s^2)", z.equation),
            format!("{} – {}", sig(z.lower_m_s2, 3), sig(z.upper_m_s2, 3)),
            z.position.to_string(),
            format!(
                "reached after {} h, exceeded after {} h",
                hours(z.time_to_lower_s),
                hours(z.time_to_upper_s)
            ),
        ]);
    }
    t.row([
        "A(8) (m/s^2)".to_string(),
        sig(g.a8_m_s2, 3),
        format!("action {}, limit {}", g.a8_action_m_s2, g.a8_limit_m_s2),
        g.a8_status.to_string(),
    ]);
    t.row([
        "daily VDV (m/s^1.75)".to_string(),
        sig(g.vdv_exposure_m_s175, 3),
        format!(
            "action {}, limit {}",
            g.vdv_action_m_s175, g.vdv_limit_m_s175
        ),
        g.vdv_status.to_string(),
    ]);
    t.note(format!(
        "Health values use k = {} on aw and VDV (EU Directive 2002/44/EC, ISO 2631-1 Annex B).",
        g.health_k
    ));
    if !g.health_applicable {
        t.note("ISO 2631-1 Annex B and the Directive address Wk (z) and Wd (x, y) on seated persons only; the health rows are for reference.");
    }
    t.note("Caution zone bounds at 8 h: 0.45 – 0.9 m/s^2 (approximate reading of ISO 2631-1 Fig. B.1).");
    t.note(g.caution);
    t
}
