//! `roughride plot`: every picture parses as XML (roxmltree, a general
//! XML parser), holds one line per series, labels its axes with units, and
//! shows the data it was given (checked against values computed here from
//! the input files).

mod common;

use common::{demo, roughride, scratch};

const CAR: &str = "vehicles/demo_hatchback.toml";

fn ok(args: &[&str]) {
    let out = roughride().args(args).output().expect("roughride ran");
    assert!(
        out.status.success(),
        "roughride {args:?} failed:\n{}",
        String::from_utf8_lossy(&out.stderr)
    );
}

/// The SVG's text elements and its polylines (as lists of pixel points).
struct Svg {
    texts: Vec<String>,
    polylines: Vec<Vec<(f64, f64)>>,
}

fn parse_svg(path: &std::path::Path) -> Svg {
    let text = common::read(path);
    let doc = roxmltree::Document::parse(&text)
        .unwrap_or_else(|e| panic!("{} is not XML: {e}", path.display()));
    assert_eq!(doc.root_element().tag_name().name(), "svg");
    let texts = doc
        .descendants()
        .filter(|n| n.has_tag_name("text"))
        .map(|n| n.text().unwrap_or("").trim().to_string())
        .collect();
    let polylines = doc
        .descendants()
        .filter(|n| n.has_tag_name("polyline"))
        .map(|n| {
            n.attribute("points")
                .unwrap_or("")
                .split_whitespace()
                .map(|p| {
                    let (x, y) = p.split_once(',').unwrap();
                    (x.parse().unwrap(), y.parse().unwrap())
                })
                .collect()
        })
        .collect();
    Svg { texts, polylines }
}

fn has_text(svg: &Svg, needle: &str) -> bool {
    svg.texts.iter().any(|t| t.contains(needle))
}

#[test]
fn the_comfort_picture_has_one_line_per_class_over_the_annex_c_bands() {
    let dir = scratch();
    let csv = dir.path().join("grid.csv");
    let jsonl = dir.path().join("grid.jsonl");
    let car = demo(CAR);
    let sweep = [
        "sweep",
        "--vehicle",
        car.to_str().unwrap(),
        "--classes",
        "A,B,C",
        "--speeds",
        "10:30:10",
        "--seeds",
        "2",
        "--length",
        "100",
    ];
    ok(&[&sweep[..], &["-o", csv.to_str().unwrap()][..]].concat());
    ok(&[&sweep[..], &["--json", "-o", jsonl.to_str().unwrap()][..]].concat());
    let svg_path = dir.path().join("aw.svg");
    ok(&[
        "plot",
        "comfort",
        csv.to_str().unwrap(),
        "--title",
        "grid",
        "-o",
        svg_path.to_str().unwrap(),
    ]);
    let svg = parse_svg(&svg_path);
    // One line per class through the three speeds (the legend's samples are
    // two-point lines).
    let series: Vec<&Vec<(f64, f64)>> = svg.polylines.iter().filter(|p| p.len() == 3).collect();
    assert_eq!(series.len(), 3, "one 3-speed line per class");
    for class in ["class A", "class B", "class C"] {
        assert_eq!(
            svg.texts.iter().filter(|t| *t == class).count(),
            1,
            "legend entry {class}"
        );
    }
    // Drawn in class order; a rougher class lies higher (smaller pixel y) at
    // every speed, as aw rises with class (common practice).
    for w in series.windows(2) {
        for (a, b) in w[0].iter().zip(w[1].iter()) {
            assert_eq!(a.0, b.0, "same speeds");
            assert!(b.1 < a.1, "a rougher class is drawn higher");
        }
    }
    assert!(
        has_text(&svg, "speed (m/s)") && has_text(&svg, "(m/s²)"),
        "axis labels with units"
    );
    // ISO 2631-1 Annex C bands within the range drawn (aw up to about 1.1 m/s² here).
    for band in [
        "not uncomfortable",
        "a little uncomfortable",
        "fairly uncomfortable",
        "uncomfortable",
    ] {
        assert!(svg.texts.iter().any(|t| t == band), "band label {band}");
    }
    // The health caution as a footnote (product rule: every picture with a
    // comfort figure carries it), and what the bars over the seeds are.
    assert!(
        has_text(&svg, "not measurements") && has_text(&svg, "ISO 2631-1, local regulation"),
        "caution footnote: {:?}",
        svg.texts
    );
    assert!(has_text(&svg, "bars: smallest to largest aw of the seeds"));
    // The JSON Lines of the same sweep give the same picture, byte for byte.
    let svg2 = dir.path().join("aw2.svg");
    ok(&[
        "plot",
        "comfort",
        jsonl.to_str().unwrap(),
        "--title",
        "grid",
        "-o",
        svg2.to_str().unwrap(),
    ]);
    assert!(
        common::read(&svg_path) == common::read(&svg2),
        "CSV and JSON Lines pictures differ"
    );
}

/// A short history at 250 Hz (the lowest rate Wk accepts); returns its path.
fn history(dir: &std::path::Path) -> std::path::PathBuf {
    let h = dir.join("h.csv");
    let car = demo(CAR);
    ok(&[
        "simulate",
        "--vehicle",
        car.to_str().unwrap(),
        "--class",
        "C",
        "--length",
        "100",
        "--speed",
        "20",
        "--rate",
        "250",
        "--history",
        h.to_str().unwrap(),
    ]);
    h
}

fn column(path: &std::path::Path, name: &str) -> Vec<f64> {
    let mut rdr = csv::Reader::from_path(path).unwrap();
    let i = rdr
        .headers()
        .unwrap()
        .iter()
        .position(|h| h == name)
        .unwrap();
    rdr.records()
        .map(|r| r.unwrap()[i].parse().unwrap())
        .collect()
}

#[test]
fn the_histogram_counts_every_sample_and_marks_the_median() {
    let dir = scratch();
    let h = history(dir.path());
    let svg_path = dir.path().join("travel.svg");
    ok(&[
        "plot",
        "histogram",
        h.to_str().unwrap(),
        "--column",
        "travel_front_m",
        "--bins",
        "25",
        "-o",
        svg_path.to_str().unwrap(),
    ]);
    let svg = parse_svg(&svg_path);
    let values = column(&h, "travel_front_m");
    assert!(
        has_text(&svg, &format!("({} samples)", values.len())),
        "{:?}",
        svg.texts
    );
    // Travel in mm (a length in m is drawn in mm), percentiles too.
    assert!(has_text(&svg, "travel front (mm)") && has_text(&svg, "samples per bin"));
    // The median drawn lies within one bin width (plus the label's four
    // significant figures) of the sample median, numpy's default definition
    // (Hyndman & Fan 1996, definition 7).
    let mut sorted = values.clone();
    sorted.sort_by(f64::total_cmp);
    let h7 = (sorted.len() - 1) as f64 * 0.5;
    let median = sorted[h7 as usize]
        + (h7 - h7.floor())
            * (sorted[(h7 as usize + 1).min(sorted.len() - 1)] - sorted[h7 as usize]);
    let median = median * 1e3; // mm
    let width = (sorted[sorted.len() - 1] - sorted[0]) / 25.0 * 1e3;
    let label = svg
        .texts
        .iter()
        .find(|t| t.starts_with("50th percentile"))
        .expect("median label");
    let drawn: f64 = label.split_whitespace().nth(2).unwrap().parse().unwrap();
    assert!(
        (drawn - median).abs() <= width + 1e-3 * median.abs(),
        "median {median}, drawn {drawn}, bin {width}"
    );
    assert!(has_text(&svg, "25 bins"));
}

#[test]
fn the_history_window_holds_exactly_the_samples_inside_it() {
    let dir = scratch();
    let h = history(dir.path());
    let svg_path = dir.path().join("t.svg");
    ok(&[
        "plot",
        "history",
        h.to_str().unwrap(),
        "--columns",
        "driver_accel_m_s2,rear_passenger_accel_m_s2",
        "--from",
        "1",
        "--to",
        "2",
        "-o",
        svg_path.to_str().unwrap(),
    ]);
    let svg = parse_svg(&svg_path);
    // 1 s to 2 s inclusive at 250 Hz: 251 samples per column, one line each.
    let lines: Vec<_> = svg.polylines.iter().filter(|p| p.len() > 2).collect();
    assert_eq!(lines.len(), 2);
    assert!(
        lines.iter().all(|p| p.len() == 251),
        "{:?}",
        lines.iter().map(|p| p.len()).collect::<Vec<_>>()
    );
    assert!(has_text(&svg, "time (s)") && has_text(&svg, "value (m/s²)"));
    assert!(has_text(&svg, "driver accel (m/s²)") && has_text(&svg, "rear passenger accel (m/s²)"));
}

#[test]
fn the_psd_picture_shows_the_class_the_profile_was_made_with() {
    let dir = scratch();
    let road = dir.path().join("road.csv");
    ok(&[
        "profile",
        "--class",
        "C",
        "--length",
        "800",
        "--seed",
        "4",
        "-o",
        road.to_str().unwrap(),
    ]);
    let svg_path = dir.path().join("psd.svg");
    ok(&[
        "plot",
        "psd",
        road.to_str().unwrap(),
        "-o",
        svg_path.to_str().unwrap(),
    ]);
    let svg = parse_svg(&svg_path);
    assert!(has_text(&svg, "spatial frequency n (cycle/m)") && has_text(&svg, "Gd(n) (m³)"));
    let fit = svg
        .texts
        .iter()
        .find(|t| t.starts_with("fit, w = 2"))
        .expect("fit label");
    assert!(fit.ends_with("class C"), "{fit}");
    // Class C: 128–512·10⁻⁶ m³ (ISO 8608 class table).
    let gd: f64 = fit
        .split("Gd(n0) = ")
        .nth(1)
        .unwrap()
        .split_whitespace()
        .next()
        .unwrap()
        .parse()
        .unwrap();
    assert!((128e-6..512e-6).contains(&gd), "{gd}");
    // Class letters are placed on the picture.
    for letter in ["B", "C", "D"] {
        assert!(
            svg.texts.iter().any(|t| t == letter),
            "class letter {letter}"
        );
    }
    // Exactly one PSD line: the class boundary lines are two-point lines.
    assert_eq!(svg.polylines.iter().filter(|p| p.len() > 100).count(), 1);
}

#[test]
fn a_missing_column_or_empty_window_is_bad_input_and_writes_nothing() {
    let dir = scratch();
    let h = history(dir.path());
    let out = dir.path().join("x.svg");
    for args in [
        vec![
            "plot",
            "histogram",
            h.to_str().unwrap(),
            "--column",
            "no_such_m",
        ],
        vec![
            "plot",
            "history",
            h.to_str().unwrap(),
            "--columns",
            "driver_accel_m_s2",
            "--from",
            "5",
            "--to",
            "1",
        ],
        vec!["plot", "comfort", h.to_str().unwrap()],
    ] {
        let mut a = args.clone();
        a.extend(["-o", out.to_str().unwrap()]);
        let o = roughride().args(&a).output().unwrap();
        assert_eq!(
            o.status.code(),
            Some(2),
            "{a:?}: {}",
            String::from_utf8_lossy(&o.stderr)
        );
        assert!(!out.exists());
    }
}
