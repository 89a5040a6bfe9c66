//! The life pictures (`plot exceedance`, `plot range-mean`) drawn from the
//! files `roughride lifetime` writes, checked against those files: one line
//! per part and the total, a line's points in the order an exceedance
//! spectrum must have (ASTM E1049-85 cycles counted at or above a range:
//! the count never rises with the range), one cell per matrix entry with
//! cycles; refusals of files that are not life spectra. The usage is the
//! README's delivery-van example.

mod common;

use std::path::Path;

use common::{demo, read, roughride, scratch};

fn run(args: &[&str]) -> (String, String, i32) {
    let out = roughride().args(args).output().expect("roughride ran");
    (
        String::from_utf8(out.stdout).unwrap(),
        String::from_utf8(out.stderr).unwrap(),
        out.status.code().unwrap_or(-1),
    )
}

/// Runs the demo usage once, writing the exceedance and matrix CSVs into `dir`.
fn life_files(dir: &Path) -> (String, String) {
    let usage = demo("usage/delivery_van.toml");
    let exc = dir.join("exc.csv");
    let mat = dir.join("mat.csv");
    let (_, err, code) = run(&[
        "lifetime",
        "--usage",
        usage.to_str().unwrap(),
        "--exceedance",
        exc.to_str().unwrap(),
        "--matrix",
        mat.to_str().unwrap(),
    ]);
    assert_eq!(code, 0, "{err}");
    (
        exc.to_str().unwrap().to_string(),
        mat.to_str().unwrap().to_string(),
    )
}

/// A polyline's stroke colour, stroke width and points (pixels).
type Polyline = (String, String, Vec<(f64, f64)>);

/// Every `<polyline>` of an SVG.
fn polylines(svg: &str) -> Vec<Polyline> {
    let doc = roxmltree::Document::parse(svg).expect("valid SVG");
    doc.descendants()
        .filter(|n| n.has_tag_name("polyline"))
        .map(|n| {
            let pts = n
                .attribute("points")
                .unwrap_or("")
                .split_whitespace()
                .map(|p| {
                    let (x, y) = p.split_once(',').unwrap();
                    (x.parse().unwrap(), y.parse().unwrap())
                })
                .collect();
            (
                n.attribute("stroke").unwrap_or("").to_string(),
                n.attribute("stroke-width").unwrap_or("").to_string(),
                pts,
            )
        })
        .collect()
}

#[test]
fn the_exceedance_picture_draws_each_part_and_the_total_as_the_file_holds_them() {
    let dir = scratch();
    let (exc, _) = life_files(dir.path());
    let svg = dir.path().join("exc.svg");
    let (_, err, code) = run(&[
        "plot",
        "exceedance",
        &exc,
        "--axle",
        "rear",
        "--quantity",
        "force",
        "-o",
        svg.to_str().unwrap(),
    ]);
    assert_eq!(code, 0, "{err}");
    let svg = read(&svg);
    let doc = roxmltree::Document::parse(&svg).expect("valid SVG");
    let texts: Vec<String> = doc
        .descendants()
        .filter(|n| n.has_tag_name("text"))
        .map(|n| n.text().unwrap_or("").trim().to_string())
        .collect();
    // The file's series for this axle and quantity, with the points a log
    // range axis can show (range and cycles above zero).
    let mut series: Vec<(String, usize)> = Vec::new();
    for line in read(Path::new(&exc)).lines().skip(1) {
        let c: Vec<&str> = line.split(',').collect();
        if c[0] != "rear" || c[1] != "suspension_force_n" {
            continue;
        }
        let drawable = c[3].parse::<f64>().unwrap() > 0.0 && c[4].parse::<f64>().unwrap() > 0.0;
        match series.last_mut() {
            Some((name, n)) if name == c[2] => *n += drawable as usize,
            _ => series.push((c[2].to_string(), drawable as usize)),
        }
    }
    assert_eq!(series.len(), 9, "eight parts and the total");
    // Data lines have more than the legend sample's two points.
    let lines: Vec<_> = polylines(&svg)
        .into_iter()
        .filter(|(_, _, p)| p.len() > 2)
        .collect();
    assert_eq!(lines.len(), series.len());
    for ((stroke, width, pts), (name, n)) in lines.iter().zip(&series) {
        assert_eq!(pts.len(), *n, "{name}: points drawn");
        assert!(texts.contains(name), "{name} in the legend");
        let total = name == "total";
        assert_eq!(
            total,
            stroke == "#000000" && width == "3",
            "{name}: {stroke} {width}"
        );
        // Range rises up the picture (pixel y falls) while the cycles at or
        // above it fall (pixel x never grows).
        for w in pts.windows(2) {
            assert!(w[1].1 <= w[0].1 && w[1].0 <= w[0].0, "{name}: {w:?}");
        }
    }
    assert!(
        svg.contains("estimates"),
        "the footnote says what the values are"
    );
}

#[test]
fn the_range_mean_picture_has_one_cell_per_matrix_entry_with_cycles() {
    let dir = scratch();
    let (_, mat) = life_files(dir.path());
    for (axle, quantity, column) in [
        ("rear", "force", "suspension_force_n"),
        ("front", "travel", "travel_m"),
    ] {
        let (svg, err, code) = run(&[
            "plot",
            "range-mean",
            &mat,
            "--axle",
            axle,
            "--quantity",
            quantity,
        ]);
        assert_eq!(code, 0, "{err}");
        let cells = read(Path::new(&mat))
            .lines()
            .skip(1)
            .filter(|l| {
                let c: Vec<&str> = l.split(',').collect();
                c[0] == axle && c[1] == column && c[6].parse::<f64>().unwrap() > 0.0
            })
            .count();
        let doc = roxmltree::Document::parse(&svg).expect("valid SVG");
        let rects = doc.descendants().filter(|n| n.has_tag_name("rect")).count();
        // The background, one per cell, and the colour bar's 64 steps.
        assert_eq!(rects, 1 + cells + 64, "{axle} {quantity}");
        assert!(cells > 10, "{axle} {quantity}: a matrix worth drawing");
    }
}

#[test]
fn files_that_are_not_life_spectra_are_bad_input() {
    let dir = scratch();
    let (exc, mat) = life_files(dir.path());
    // The matrix given to the exceedance picture: the header is named.
    let (_, err, code) = run(&["plot", "exceedance", &mat]);
    assert_eq!(code, 2);
    assert!(err.contains("line 1") && err.contains("series"), "{err}");
    // A quantity the file does not hold: what it holds is listed.
    let cut = dir.path().join("cut.csv");
    let text: String = read(Path::new(&exc))
        .lines()
        .filter(|l| !l.contains("tyre_load_n"))
        .map(|l| format!("{l}\n"))
        .collect();
    std::fs::write(&cut, text).unwrap();
    let (_, err, code) = run(&[
        "plot",
        "exceedance",
        cut.to_str().unwrap(),
        "--quantity",
        "tyre-load",
    ]);
    assert_eq!(code, 2);
    assert!(
        err.contains("tyre_load_n") && err.contains("rear/travel_m"),
        "{err}"
    );
    // A value that is not a number: file, line and column named.
    let nan = dir.path().join("nan.csv");
    let mut lines: Vec<String> = read(Path::new(&mat)).lines().map(String::from).collect();
    lines[3] = lines[3]
        .rsplit_once(',')
        .map(|(a, _)| format!("{a},NaN"))
        .unwrap();
    std::fs::write(&nan, lines.join("\n")).unwrap();
    let (_, err, code) = run(&[
        "plot",
        "range-mean",
        nan.to_str().unwrap(),
        "--axle",
        "front",
        "--quantity",
        "travel",
    ]);
    assert_eq!(code, 2);
    assert!(err.contains("line 4") && err.contains("`cycles`"), "{err}");
    let (_, _, code) = run(&["plot", "exceedance", &exc, "--quantity", "torque"]);
    assert_eq!(code, 2);
}
