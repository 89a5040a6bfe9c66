//! `roughride classify`: roughness of a profile CSV — ISO 8608 class from the
//! fitted Gd(n0), the free waviness fit, octave-band PSD and IRI (whole
//! profile and, with `--segment`, per segment).

use std::path::PathBuf;

use clap::Args as ClapArgs;
use roughride::report::{self, Table, sig};
use roughride::road::{self, Classification};
use serde::Serialize;

/// Options of `roughride classify`.
#[derive(Debug, ClapArgs)]
pub struct Args {
    /// Profile CSV with columns distance_m, elevation_m (m).
    #[arg(value_name = "FILE")]
    pub file: PathBuf,
    /// Print one JSON object instead of the table.
    #[arg(long)]
    pub json: bool,
    /// Also report the IRI per segment of this many metres.
    #[arg(long, value_name = "M", allow_hyphen_values = true,
          value_parser = super::options::quantity(&roughride::limits::SEGMENT))]
    pub segment: Option<f64>,
    /// Write the per-segment IRI as CSV (start_m,end_m,iri_m_per_km) to FILE.
    #[arg(
        short = 'o',
        long = "output",
        value_name = "FILE",
        requires = "segment"
    )]
    pub output: Option<PathBuf>,
}

/// IRI of one segment.
#[derive(Debug, Serialize)]
struct Segment {
    start_m: f64,
    end_m: f64,
    iri_m_per_km: f64,
}

/// The JSON object: the classification plus the file and segments.
#[derive(Debug, Serialize)]
struct Output<'a> {
    file: String,
    #[serde(flatten)]
    classification: &'a Classification,
    #[serde(skip_serializing_if = "Option::is_none")]
    segments: Option<&'a [Segment]>,
}

/// Reads, classifies and prints.
pub fn run(args: Args) -> Result<(), roughride::Error> {
    report::FilePlan::new()
        .input("FILE", &args.file)
        .output("-o", args.output.as_deref())
        .check()?;
    let (profile, warnings) = road::read_profile_csv(&args.file)?;
    for w in &warnings {
        eprintln!("roughride: warning: {w}");
    }
    let c = road::classify(&profile)?;
    if let Some(note) = &c.iri_note {
        eprintln!(
            "roughride: warning: {}: IRI not computed: {note}",
            args.file.display()
        );
    }
    let segments: Option<Vec<Segment>> = match args.segment {
        Some(len) => Some(
            road::iri_segments(&profile, len)?
                .into_iter()
                .map(|(start_m, end_m, iri_m_per_km)| Segment {
                    start_m,
                    end_m,
                    iri_m_per_km,
                })
                .collect(),
        ),
        None => None,
    };
    if let (Some(path), Some(segs)) = (args.output.as_deref(), segments.as_deref()) {
        write_segments(path, segs)?;
    }
    if args.json {
        let out = Output {
            file: args.file.display().to_string(),
            classification: &c,
            segments: segments.as_deref(),
        };
        report::print_stdout(&report::json_line(&out, "classification")?)?;
        return Ok(());
    }
    report::print_stdout(&render(&args, &c, segments.as_deref()))?;
    Ok(())
}

/// The per-segment IRI CSV (`-o`).
fn write_segments(path: &std::path::Path, segs: &[Segment]) -> Result<(), roughride::Error> {
    report::write_to(Some(path), |w| {
        let io = |e| report::io_error(path, e);
        writeln!(w, "start_m,end_m,iri_m_per_km").map_err(io)?;
        for s in segs {
            writeln!(w, "{},{},{}", s.start_m, s.end_m, s.iri_m_per_km).map_err(io)?;
        }
        Ok::<(), roughride::Error>(())
    })
}

/// The human report: summary, octave bands, segments (or where they went).
fn render(args: &Args, c: &Classification, segments: Option<&[Segment]>) -> String {
    let mut text = summary_table(args, c).render();
    text.push('\n');
    text.push_str(&bands_table(c).render());
    if let Some(segs) = segments {
        text.push('\n');
        match args.output.as_deref() {
            Some(path) => text.push_str(&format!(
                "IRI of {} segments written to {}\n",
                segs.len(),
                path.display()
            )),
            None => text.push_str(&segments_table(segs).render()),
        }
    }
    text
}

fn opt(v: Option<f64>, digits: usize) -> String {
    v.map(|x| sig(x, digits)).unwrap_or_else(|| "-".into())
}

fn summary_table(args: &Args, c: &Classification) -> Table {
    let mut t = Table::new(format!(
        "Roughness of {} (ISO 8608 PSD fit, IRI per ASTM E1926)",
        args.file.display()
    ))
    .with_header(["quantity", "value", "unit"]);
    t.row(["length".into(), sig(c.length_m, 6), "m".to_string()]);
    t.row(["spacing".into(), sig(c.spacing_m, 4), "m".to_string()]);
    t.row([
        "Gd(n0), n0 = 0.1 cycle/m, w = 2".into(),
        format!("{:.4e}", c.gd_n0),
        "m^3".to_string(),
    ]);
    t.row(["ISO 8608 class".into(), c.class.to_string(), String::new()]);
    t.row([
        "Gd(n0), free fit".into(),
        c.gd_n0_free
            .map(|g| format!("{g:.4e}"))
            .unwrap_or_else(|| "-".into()),
        "m^3".to_string(),
    ]);
    t.row([
        "waviness, free fit".into(),
        opt(c.waviness_fit, 3),
        String::new(),
    ]);
    t.row([
        "fitting band".into(),
        format!(
            "{} – {}",
            sig(c.fit_min_cycle_m, 3),
            sig(c.fit_max_cycle_m, 3)
        ),
        "cycle/m".to_string(),
    ]);
    t.row(["IRI".into(), opt(c.iri_m_per_km, 3), "m/km".to_string()]);
    t.note(format!(
        "Welch PSD: {} segments of {} m, Hann window, 50 % overlap, linear detrend.",
        c.welch_segments,
        sig(c.welch_segment_m, 4)
    ));
    if let Some(n) = &c.iri_note {
        t.note(format!("IRI not computed: {n}"));
    }
    t
}

fn bands_table(c: &Classification) -> Table {
    let mut t = Table::new("Octave bands (mean Welch PSD; * = used in the fit)").with_header([
        "centre cycle/m",
        "lower",
        "upper",
        "Gd m^3",
        "bins",
        "fit",
    ]);
    for b in &c.bands {
        t.row([
            sig(b.band.centre_cycle_m, 4),
            sig(b.band.lower_cycle_m, 4),
            sig(b.band.upper_cycle_m, 4),
            format!("{:.3e}", b.band.mean_gd_m3),
            b.band.bins.to_string(),
            if b.used { "*".into() } else { String::new() },
        ]);
    }
    t
}

fn segments_table(segs: &[Segment]) -> Table {
    let mut t = Table::new("IRI per segment").with_header(["start m", "end m", "IRI m/km"]);
    for s in segs {
        t.row([
            format!("{:.2}", s.start_m),
            format!("{:.2}", s.end_m),
            sig(s.iri_m_per_km, 3),
        ]);
    }
    t
}
