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
    assert!(has_text(&svg, "seat aw, ISO 2631-1 Wk (m/s²)"));
    // The total value (what ISO 2631-1 Annex C reads the bands against)
    // names its own axis; for this seat at height 0 it is the aw, so the
    // lines lie where the aw's do.
    let tv_path = dir.path().join("tv.svg");
    ok(&[
        "plot",
        "comfort",
        csv.to_str().unwrap(),
        "--column",
        "seat1_total_value",
        "--title",
        "grid",
        "-o",
        tv_path.to_str().unwrap(),
    ]);
    let tv = parse_svg(&tv_path);
    assert!(has_text(
        &tv,
        "seat vibration total value, ISO 2631-1 (m/s²)"
    ));
    assert_eq!(tv.polylines, svg.polylines, "total value = aw at height 0");
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

/// Generates a class C road (`profile`) and draws its PSD picture; returns
/// the picture's path.
fn class_c_psd(dir: &std::path::Path, length_m: &str, seed: &str) -> std::path::PathBuf {
    let road = dir.join("road.csv");
    ok(&[
        "profile",
        "--class",
        "C",
        "--length",
        length_m,
        "--seed",
        seed,
        "-o",
        road.to_str().unwrap(),
    ]);
    let svg_path = dir.join("psd.svg");
    ok(&[
        "plot",
        "psd",
        road.to_str().unwrap(),
        "-o",
        svg_path.to_str().unwrap(),
    ]);
    svg_path
}

#[test]
fn the_psd_picture_shows_the_class_the_profile_was_made_with() {
    let dir = scratch();
    let svg_path = class_c_psd(dir.path(), "800", "4");
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

// ------------------------------------------------ geometry of the pictures

/// Every element of an SVG as (tag, attributes, text), for the checks
/// below that need positions and colours.
struct Element {
    tag: String,
    attrs: std::collections::HashMap<String, String>,
    text: String,
}

fn elements(path: &std::path::Path) -> Vec<Element> {
    let text = common::read(path);
    let doc = roxmltree::Document::parse(&text)
        .unwrap_or_else(|e| panic!("{} is not XML: {e}", path.display()));
    doc.descendants()
        .filter(|n| n.is_element())
        .map(|n| Element {
            tag: n.tag_name().name().to_string(),
            attrs: n
                .attributes()
                .map(|a| (a.name().to_string(), a.value().to_string()))
                .collect(),
            text: n.text().unwrap_or("").trim().to_string(),
        })
        .collect()
}

impl Element {
    fn num(&self, key: &str) -> f64 {
        self.attrs[key].parse().unwrap()
    }
    fn points(&self) -> Vec<(f64, f64)> {
        self.attrs["points"]
            .split_whitespace()
            .map(|p| {
                let (x, y) = p.split_once(',').unwrap();
                (x.parse().unwrap(), y.parse().unwrap())
            })
            .collect()
    }
}

/// Tick labels under a horizontal axis (centred text that reads as a
/// number): (value, pixel x, pixel y).
fn x_ticks(els: &[Element]) -> Vec<(f64, f64, f64)> {
    els.iter()
        .filter(|e| e.tag == "text" && e.attrs.get("text-anchor").is_some_and(|a| a == "middle"))
        .filter_map(|e| Some((e.text.parse().ok()?, e.num("x"), e.num("y"))))
        .collect()
}

/// Tick labels left of a vertical axis (right-aligned numbers): (value, pixel y).
fn y_ticks(els: &[Element]) -> Vec<(f64, f64)> {
    els.iter()
        .filter(|e| e.tag == "text" && e.attrs.get("text-anchor").is_some_and(|a| a == "end"))
        .filter_map(|e| Some((e.text.parse().ok()?, e.num("y"))))
        .collect()
}

/// A pixel → value map through two ticks of one axis, linear in `f(value)`
/// (identity for a linear axis, log10 for a log axis).
fn axis_map(
    a: (f64, f64),
    b: (f64, f64),
    f: fn(f64) -> f64,
    inv: fn(f64) -> f64,
) -> impl Fn(f64) -> f64 {
    move |px| inv(f(a.0) + (px - a.1) / (b.1 - a.1) * (f(b.0) - f(a.0)))
}

fn texts_of(els: &[Element]) -> Vec<&str> {
    els.iter()
        .filter(|e| e.tag == "text")
        .map(|e| e.text.as_str())
        .collect()
}

#[test]
fn history_columns_of_different_units_get_one_panel_each_on_one_time_axis() {
    let dir = scratch();
    let h = history(dir.path());
    let svg_path = dir.path().join("t.svg");
    ok(&[
        "plot",
        "history",
        h.to_str().unwrap(),
        "--columns",
        "driver_accel_m_s2,travel_front_m,rear_passenger_accel_m_s2",
        "--from",
        "1",
        "--to",
        "2",
        "-o",
        svg_path.to_str().unwrap(),
    ]);
    let els = elements(&svg_path);
    let t = texts_of(&els);
    // Two units (m/s², m): two panels, each with its own value axis; the
    // time label once, under the lowest.
    assert!(
        t.contains(&"value (m/s²)") && t.contains(&"travel front (m)"),
        "{t:?}"
    );
    assert_eq!(t.iter().filter(|x| **x == "time (s)").count(), 1);
    let lines: Vec<Vec<(f64, f64)>> = els
        .iter()
        .filter(|e| e.tag == "polyline")
        .map(Element::points)
        .filter(|p| p.len() == 251)
        .collect();
    assert_eq!(lines.len(), 3);
    let top = |p: &Vec<(f64, f64)>| p.iter().map(|q| q.1).fold(f64::INFINITY, f64::min);
    let bottom = |p: &Vec<(f64, f64)>| p.iter().map(|q| q.1).fold(0.0, f64::max);
    // Drawn panel by panel: the two accelerations share the upper panel,
    // the travel (drawn last) lies wholly below it.
    assert!(
        top(&lines[2]) > bottom(&lines[0]).max(bottom(&lines[1])),
        "travel below the accelerations"
    );
    // One time axis: every line starts and ends at the same pixel column.
    for l in &lines {
        assert_eq!((l[0].0, l[250].0), (lines[0][0].0, lines[0][250].0));
    }
    // Panels count the units: y-axis tick sets = 2 (ticks of two panels
    // fall in two separate pixel ranges, split by the travel's top).
    let split = top(&lines[2]);
    let ys = y_ticks(&els);
    assert!(ys.iter().any(|y| y.1 < split) && ys.iter().any(|y| y.1 > split));
}

#[test]
fn a_window_without_samples_is_bad_input_naming_the_record_time_range() {
    let dir = scratch();
    let h = history(dir.path());
    let last = *column(&h, "time_s").last().unwrap();
    let out = dir.path().join("x.svg");
    for picture in [["history", "--columns"], ["histogram", "--column"]] {
        let o = roughride()
            .args([
                "plot",
                picture[0],
                h.to_str().unwrap(),
                picture[1],
                "driver_accel_m_s2",
            ])
            .args(["--from", "50", "--to", "60", "-o", out.to_str().unwrap()])
            .output()
            .unwrap();
        let err = String::from_utf8_lossy(&o.stderr);
        assert_eq!(o.status.code(), Some(2), "{err}");
        assert!(
            err.contains("--from/--to") && err.contains("50 .. 60 s"),
            "{err}"
        );
        assert!(err.contains(&format!("time_s from 0 to {last} s")), "{err}");
        assert!(!out.exists());
    }
}

#[test]
fn the_histogram_legend_stays_clear_of_the_percentile_lines() {
    let dir = scratch();
    let h = history(dir.path());
    let svg_path = dir.path().join("travel.svg");
    ok(&[
        "plot",
        "histogram",
        h.to_str().unwrap(),
        "--column",
        "travel_front_m",
        "-o",
        svg_path.to_str().unwrap(),
    ]);
    let els = elements(&svg_path);
    // The legend box: the rectangle with a black border.
    let legend = els
        .iter()
        .find(|e| e.tag == "rect" && e.attrs.get("stroke").is_some_and(|s| s == "#000000"))
        .expect("legend box");
    let (lx0, ly0) = (legend.num("x"), legend.num("y"));
    let (lx1, ly1) = (lx0 + legend.num("width"), ly0 + legend.num("height"));
    // Percentile lines: vertical two-point lines (the legend samples are horizontal).
    let verticals: Vec<Vec<(f64, f64)>> = els
        .iter()
        .filter(|e| e.tag == "polyline" && e.attrs.get("stroke-width").is_some_and(|w| w == "2"))
        .map(Element::points)
        .filter(|p| p.len() == 2 && p[0].0 == p[1].0 && p[0].1 != p[1].1)
        .collect();
    assert_eq!(verticals.len(), 3, "1st, 50th and 99th percentile");
    for v in &verticals {
        let (x, top) = (v[0].0, v[0].1.min(v[1].1));
        assert!(
            x < lx0 || x > lx1 || top > ly1,
            "line at x {x} (top {top}) under the legend {lx0}..{lx1}, {ly0}..{ly1}"
        );
    }
    // Percentiles in mm, plain numbers (no exponent).
    let t = texts_of(&els);
    let p99 = t.iter().find(|x| x.starts_with("99th percentile")).unwrap();
    let number = p99.split_whitespace().nth(2).unwrap();
    assert!(
        p99.ends_with(" mm") && !number.contains(['e', 'E']),
        "{p99}"
    );
    // Against the data: the 99th percentile of the samples (numpy's default,
    // Hyndman & Fan 1996 definition 7) within one bin width, in mm.
    let mut mm: Vec<f64> = column(&h, "travel_front_m")
        .iter()
        .map(|v| v * 1e3)
        .collect();
    mm.sort_by(f64::total_cmp);
    let h7 = (mm.len() - 1) as f64 * 0.99;
    let (i, frac) = (h7 as usize, h7.fract());
    let p = mm[i] + frac * (mm[(i + 1).min(mm.len() - 1)] - mm[i]);
    let drawn: f64 = p99.split_whitespace().nth(2).unwrap().parse().unwrap();
    let width = (mm[mm.len() - 1] - mm[0]) / 40.0;
    assert!(
        (drawn - p).abs() <= width + 1e-3 * p.abs(),
        "p99 {p} mm, drawn {drawn}"
    );
}

#[test]
fn the_comfort_picture_in_kmh_is_the_same_picture_with_a_kmh_axis() {
    let dir = scratch();
    let csv = dir.path().join("grid.csv");
    let car = demo(CAR);
    ok(&[
        "sweep",
        "--vehicle",
        car.to_str().unwrap(),
        "--classes",
        "B,C",
        "--speeds",
        "36kmh:72kmh:18kmh",
        "--seeds",
        "2",
        "--length",
        "100",
        "-o",
        csv.to_str().unwrap(),
    ]);
    let (ms, kmh) = (dir.path().join("ms.svg"), dir.path().join("kmh.svg"));
    let args = ["plot", "comfort", csv.to_str().unwrap(), "--title", "t"];
    ok(&[&args[..], &["-o", ms.to_str().unwrap()][..]].concat());
    ok(&[&args[..], &["--kmh", "-o", kmh.to_str().unwrap()][..]].concat());
    let (a, b) = (elements(&ms), elements(&kmh));
    let lines = |els: &[Element]| -> Vec<Vec<(f64, f64)>> {
        els.iter()
            .filter(|e| e.tag == "polyline")
            .map(Element::points)
            .filter(|p| p.len() == 3)
            .collect()
    };
    // 1 m/s = 3.6 km/h exactly: the same lines at the same pixels.
    assert_eq!(lines(&a).len(), 2);
    assert_eq!(lines(&a), lines(&b));
    let tb = texts_of(&b);
    assert!(tb.contains(&"speed (km/h)") && !tb.contains(&"speed (m/s)"));
    // The speed ticks read in km/h: a speed pixel maps to 3.6 × its m/s value.
    let (xa, xb) = (x_ticks(&a), x_ticks(&b));
    let map_a = axis_map((xa[0].0, xa[0].1), (xa[1].0, xa[1].1), |v| v, |v| v);
    let map_b = axis_map((xb[0].0, xb[0].1), (xb[1].0, xb[1].1), |v| v, |v| v);
    for p in &lines(&a)[0] {
        assert!((map_b(p.0) - 3.6 * map_a(p.0)).abs() < 0.3, "{p:?}");
    }
    // The caution (product rule) in both, and the bars explained.
    for t in [texts_of(&a), tb] {
        assert!(
            t.iter().any(|x| x.contains("not measurements"))
                && t.iter().any(|x| x.contains("local regulation"))
        );
        assert!(
            t.iter()
                .any(|x| x.contains("bars: smallest to largest aw of the seeds"))
        );
    }
}

#[test]
fn the_psd_picture_spans_only_the_band_of_the_estimate() {
    let dir = scratch();
    let svg_path = class_c_psd(dir.path(), "1000", "3");
    let els = elements(&svg_path);
    // The generated road holds power from 0.011 to 2.83 cycle/m (the
    // defaults of `profile`). Class C's mean line Gd = 256e-6·(n/0.1)^-2 m³
    // (ISO 8608 class table, w = 2) runs from 2.1e-2 m³ at 0.011 cycle/m
    // to 3.2e-7 m³ at 2.83 cycle/m: every value tick lies within a decade
    // of that (before, the axis reached down to 1e-10 m³).
    let gd = |n: f64| 256e-6 * (n / 0.1f64).powi(-2);
    let ys = y_ticks(&els);
    assert!(ys.len() >= 3, "{ys:?}");
    for (v, _) in &ys {
        assert!(
            *v >= gd(2.83) / 10.0 && *v <= gd(0.011) * 10.0,
            "tick {v} outside the band's values"
        );
    }
    // The PSD line starts and ends inside the band (log frequency axis
    // mapped through its 0.1 and 1 ticks).
    let xs = x_ticks(&els);
    let t01 = xs.iter().find(|t| t.0 == 0.1).unwrap();
    let t1 = xs.iter().find(|t| t.0 == 1.0).unwrap();
    let n_of = axis_map((0.1, t01.1), (1.0, t1.1), f64::log10, |v| 10f64.powf(v));
    let psd = els
        .iter()
        .filter(|e| e.tag == "polyline")
        .map(Element::points)
        .find(|p| p.len() > 100)
        .unwrap();
    let (first, last) = (n_of(psd[0].0), n_of(psd[psd.len() - 1].0));
    assert!(
        first >= 0.011 * 0.97 && last <= 2.83 * 1.03,
        "{first} .. {last}"
    );
    // No vertical drop at the band edge: the last points stay within a
    // decade of the class line (pixels of one decade from the ticks).
    let decade_px = (ys[0].1 - ys[1].1).abs() / (ys[0].0.log10() - ys[1].0.log10()).abs();
    let low = psd.iter().map(|p| p.1).fold(0.0, f64::max);
    let high = psd.iter().map(|p| p.1).fold(f64::INFINITY, f64::min);
    assert!((low - high) / decade_px < (gd(0.011) / gd(2.83)).log10() + 1.5);
}

/// A body on springs with equal axles at equal distances from the CG:
/// bounce and pitch do not couple, and the heave response to the road is
/// the one-degree-of-freedom base-excitation transmissibility.
const SYMMETRIC: &str = "name = \"symmetric body on springs\"\n\
[body]\nmass = 1000.0\npitch_inertia = 1200.0\n\
[front]\ncg_distance = 1.3\nspring_rate = 20000.0\ndamping = 300.0\n\
[rear]\ncg_distance = 1.3\nspring_rate = 20000.0\ndamping = 300.0\n\
[[seat]]\nx = 0.0\n";

#[test]
fn the_frf_picture_peaks_at_the_bounce_mode() {
    let dir = scratch();
    let car = dir.path().join("sym.toml");
    std::fs::write(&car, SYMMETRIC).unwrap();
    // Analytic: heave ωn² = 2k/m, ζ = 2c/(2·√(2k·m)).
    let (m, k, c) = (1000.0f64, 20000.0f64, 300.0f64);
    let fn_hz = (2.0 * k / m).sqrt() / (2.0 * std::f64::consts::PI);
    let zeta = c / (2.0 * k * m).sqrt();
    // `modes` (its frequencies are checked against scipy in
    // tests/modal_reference.rs) gives the same bounce frequency.
    let modes = common::json_of(&["modes", "--vehicle", car.to_str().unwrap()]);
    let bounce = modes["modes"]
        .as_array()
        .unwrap()
        .iter()
        .find(|m| m["kind"] == "bounce")
        .unwrap()["undamped_frequency_hz"]
        .as_f64()
        .unwrap();
    assert!((bounce - fn_hz).abs() < 1e-9 * fn_hz, "{bounce} vs {fn_hz}");
    let svg_path = dir.path().join("frf.svg");
    let speed = 25.0;
    ok(&[
        "plot",
        "frf",
        "--vehicle",
        car.to_str().unwrap(),
        "--speed",
        "25",
        "--outputs",
        "heave",
        "--min-hz",
        "0.3",
        "--max-hz",
        "5",
        "-o",
        svg_path.to_str().unwrap(),
    ]);
    let els = elements(&svg_path);
    let curve = els
        .iter()
        .filter(|e| e.tag == "polyline")
        .map(Element::points)
        .find(|p| p.len() > 100)
        .expect("the heave curve");
    // Pixel x → frequency: the curve spans 0.3 .. 5 Hz on a log axis.
    let (x0, x1) = (curve[0].0, curve[curve.len() - 1].0);
    let f_of = |px: f64| 0.3 * (5.0f64 / 0.3).powf((px - x0) / (x1 - x0));
    let peak = curve
        .iter()
        .fold(curve[0], |a, p| if p.1 < a.1 { *p } else { a });
    // Analytic peak of |H| = T(f)·|cos(π f τ)|, T the base-excitation
    // transmissibility √((1+(2ζr)²)/((1−r²)²+(2ζr)²)) (textbook, e.g.
    // Rao, "Mechanical Vibrations", base excitation), τ = wheelbase/speed
    // (front and rear inputs averaged at the CG).
    let tau = 2.6 / speed;
    let h = |f: f64| {
        let r = f / fn_hz;
        let t = ((1.0 + (2.0 * zeta * r).powi(2))
            / ((1.0 - r * r).powi(2) + (2.0 * zeta * r).powi(2)))
        .sqrt();
        t * (std::f64::consts::PI * f * tau).cos().abs()
    };
    let f_peak = (0..5000)
        .map(|i| 0.3 + i as f64 * 1e-3)
        .fold(0.3, |a, f| if h(f) > h(a) { f } else { a });
    // Grid steps of 2.3 % (100 per decade) and one pixel of ~0.4 %.
    let drawn = f_of(peak.0);
    assert!(
        (drawn / f_peak - 1.0).abs() < 0.03,
        "drawn peak {drawn} Hz, analytic {f_peak} Hz"
    );
    assert!(
        (drawn / bounce - 1.0).abs() < 0.03,
        "drawn peak {drawn} Hz, bounce {bounce} Hz"
    );
    // The peak's height over the lowest frequency's, through the log
    // magnitude ticks, matches the analytic ratio within 10 %.
    let ys = y_ticks(&els);
    let decade_px = (ys[0].1 - ys[1].1).abs() / (ys[0].0.log10() - ys[1].0.log10()).abs();
    let drawn_ratio = 10f64.powf((curve[0].1 - peak.1) / decade_px);
    let ratio = h(f_peak) / h(0.3);
    assert!(
        (drawn_ratio / ratio - 1.0).abs() < 0.1,
        "{drawn_ratio} vs {ratio}"
    );
    // The bounce mode is marked and named.
    let t = texts_of(&els);
    assert!(
        t.iter()
            .any(|x| x.starts_with("bounce ") && x.ends_with(" Hz")),
        "{t:?}"
    );
    assert!(t.contains(&"frequency (Hz)") && t.contains(&"magnitude (m per m)"));
}

#[test]
fn the_modes_picture_marks_each_node_where_modes_reports_it() {
    let dir = scratch();
    let car = demo(CAR);
    let modes = common::json_of(&["modes", "--vehicle", car.to_str().unwrap()]);
    let svg_path = dir.path().join("modes.svg");
    ok(&[
        "plot",
        "modes",
        "--vehicle",
        car.to_str().unwrap(),
        "-o",
        svg_path.to_str().unwrap(),
    ]);
    let els = elements(&svg_path);
    let nodes: Vec<f64> = modes["modes"]
        .as_array()
        .unwrap()
        .iter()
        .filter_map(|m| m["node"]["x_m"].as_f64())
        .collect();
    assert_eq!(nodes.len(), 2, "bounce and pitch have nodes on this car");
    let circles: Vec<(f64, f64)> = els
        .iter()
        .filter(|e| e.tag == "circle")
        .map(|e| (e.num("cx"), e.num("cy")))
        .collect();
    assert_eq!(circles.len(), nodes.len());
    // Pixel → metres through two ticks of the lowest axis (all panels share it).
    let xs = x_ticks(&els);
    let (a, b) = (
        xs.iter().find(|t| t.0 == 0.0).unwrap(),
        xs.iter().find(|t| t.0 == 1.0).unwrap(),
    );
    let x_of = axis_map((0.0, a.1), (1.0, b.1), |v| v, |v| v);
    let metre_px = b.1 - a.1;
    for (node, circle) in nodes.iter().zip(&circles) {
        assert!(
            (x_of(circle.0) - node).abs() < 1.5 / metre_px,
            "node {node} m drawn at {}",
            x_of(circle.0)
        );
    }
    // Each node lies on its mode's body bar (the thick two-point line).
    let bars: Vec<Vec<(f64, f64)>> = els
        .iter()
        .filter(|e| e.tag == "polyline" && e.attrs.get("stroke-width").is_some_and(|w| w == "7"))
        .map(Element::points)
        .collect();
    assert_eq!(bars.len(), modes["modes"].as_array().unwrap().len());
    for (bar, circle) in bars.iter().zip(&circles) {
        let (p, q) = (bar[0], bar[1]);
        let y = p.1 + (circle.0 - p.0) / (q.0 - p.0) * (q.1 - p.1);
        assert!(
            (y - circle.1).abs() <= 2.0,
            "bar at {y}, node at {}",
            circle.1
        );
    }
    // The node's place is also written out as `modes` words it.
    let t = texts_of(&els);
    let first = modes["modes"][0]["node"]["description"].as_str().unwrap();
    let at = first.split(", ").next().unwrap();
    assert!(t.iter().any(|x| *x == format!("node {at}")), "{t:?}");
}

#[test]
fn the_vehicle_pictures_refuse_to_overwrite_their_vehicle_and_unknown_outputs() {
    let dir = scratch();
    let car = dir.path().join("v.toml");
    std::fs::write(&car, SYMMETRIC).unwrap();
    let v = car.to_str().unwrap();
    let out = dir.path().join("x.svg");
    for (args, needle) in [
        (vec!["plot", "modes", "--vehicle", v, "-o", v], "--vehicle"),
        (
            vec!["plot", "frf", "--vehicle", v, "--speed", "20", "-o", v],
            "--vehicle",
        ),
        (
            vec![
                "plot",
                "frf",
                "--vehicle",
                v,
                "--speed",
                "20",
                "--outputs",
                "nose",
                "-o",
                out.to_str().unwrap(),
            ],
            "no output `nose`",
        ),
        (
            vec![
                "plot",
                "frf",
                "--vehicle",
                v,
                "--speed",
                "20",
                "--min-hz",
                "9",
                "--max-hz",
                "2",
                "-o",
                out.to_str().unwrap(),
            ],
            "--min-hz/--max-hz",
        ),
    ] {
        let o = roughride().args(&args).output().unwrap();
        let err = String::from_utf8_lossy(&o.stderr);
        assert_eq!(o.status.code(), Some(2), "{args:?}: {err}");
        assert!(err.contains(needle), "{args:?}: {err}");
        assert_eq!(common::read(&car), SYMMETRIC, "vehicle file untouched");
        assert!(!out.exists());
    }
}
