//! SVG pictures of results (plotters, SVG backend only: no system
//! libraries, text left to the viewer's fonts): comfort (aw) against speed
//! with the ISO 2631-1 Annex C comfort bands, a histogram of one quantity,
//! a road profile's displacement PSD against the ISO 8608 class bands, and
//! a time-history window.
//!
//! Every function takes plain data (numbers and labels, or a [`Profile`]),
//! does whatever reduction the picture needs (grouping over seeds, the Welch
//! PSD, histogram bins, decimation) and returns the SVG document as a
//! string; reading files and writing the picture is the caller's job
//! ([`super::write_to`]). Axes carry the quantity and its unit. Output is
//! deterministic: the same data give the same bytes.

use std::collections::BTreeMap;

use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use super::ExportError;
use crate::comfort::COMFORT_BANDS;
use crate::road::Profile;
use crate::road::classify::{classify, welch_segment_len};
use crate::road::iso8608::{N0_CYCLE_M, RoadClass};
use crate::road::psd::welch_psd;
use crate::stats::Histogram;

/// Picture size, pixels.
pub const SIZE_PX: (u32, u32) = (960, 600);
/// Most points drawn per time-history series (min/max decimation beyond).
pub const MAX_HISTORY_POINTS: usize = 4000;

const FONT: &str = "sans-serif";
const LABEL_DARK: RGBColor = RGBColor(40, 40, 40);
const LABEL_GREY: RGBColor = RGBColor(90, 90, 90);
/// Right margin of the comfort picture, for the band labels, pixels.
const BAND_LABEL_PX: u32 = 190;

/// Distinct series colours (Okabe & Ito, "Color Universal Design", 2008:
/// readable with the common colour-vision deficiencies), then darker tones.
const PALETTE: [RGBColor; 10] = [
    RGBColor(0, 114, 178),
    RGBColor(213, 94, 0),
    RGBColor(0, 158, 115),
    RGBColor(204, 121, 167),
    RGBColor(86, 180, 233),
    RGBColor(230, 159, 0),
    RGBColor(0, 0, 0),
    RGBColor(120, 60, 20),
    RGBColor(90, 90, 160),
    RGBColor(60, 120, 60),
];

fn colour(i: usize) -> RGBColor {
    PALETTE[i % PALETTE.len()]
}

fn draw_err(e: impl std::fmt::Display) -> ExportError {
    ExportError::Serialise {
        what: "SVG picture".to_string(),
        message: e.to_string(),
    }
}

fn no_data(what: &str) -> ExportError {
    ExportError::Serialise {
        what: "SVG picture".to_string(),
        message: format!("nothing to draw: {what}"),
    }
}

/// An axis label from a column name with its unit suffix:
/// `travel_front_m` → `travel front (m)`, `driver_accel_m_s2` →
/// `driver accel (m/s²)`. Names without a known suffix are kept as they are.
pub fn axis_label(column: &str) -> String {
    match split_unit(column) {
        Some((stem, unit)) => format!("{} ({unit})", stem.replace('_', " ")),
        None => column.replace('_', " "),
    }
}

/// The unit of a column name's suffix (`_m_s2` → `m/s²`), if it has one.
pub fn unit_of(column: &str) -> Option<&'static str> {
    split_unit(column).map(|(_, u)| u)
}

fn split_unit(column: &str) -> Option<(&str, &'static str)> {
    // Longest suffixes first so `_m_s2` is not read as `_s2`.
    const SUFFIXES: [(&str, &str); 10] = [
        ("_rad_s2", "rad/s²"),
        ("_m_s2", "m/s²"),
        ("_m_s175", "m/s^1.75"),
        ("_m_s", "m/s"),
        ("_rad", "rad"),
        ("_hz", "Hz"),
        ("_m3", "m³"),
        ("_n", "N"),
        ("_m", "m"),
        ("_s", "s"),
    ];
    SUFFIXES.iter().find_map(|(suffix, unit)| {
        column
            .strip_suffix(suffix)
            .filter(|s| !s.is_empty())
            .map(|s| (s, *unit))
    })
}

// ---------------------------------------------------------------- comfort

/// One sweep row for the comfort picture.
#[derive(Debug, Clone, PartialEq)]
pub struct ComfortPoint {
    /// Series the row belongs to (e.g. "class C", or a vehicle and class).
    pub series: String,
    /// Forward speed, m/s.
    pub speed_m_s: f64,
    /// Frequency-weighted r.m.s. acceleration aw, m/s².
    pub aw_m_s2: f64,
}

/// aw at one speed of one series, over its seeds.
#[derive(Debug, Clone, PartialEq)]
pub struct ComfortLevel {
    /// Forward speed, m/s.
    pub speed_m_s: f64,
    /// Mean aw over the rows at this speed, m/s².
    pub mean_m_s2: f64,
    /// Smallest aw, m/s².
    pub min_m_s2: f64,
    /// Largest aw, m/s².
    pub max_m_s2: f64,
    /// Rows averaged.
    pub rows: usize,
}

/// The rows grouped by series (in order of first appearance) and speed
/// (ascending): mean, smallest and largest aw over the seeds.
pub fn comfort_levels(points: &[ComfortPoint]) -> Vec<(String, Vec<ComfortLevel>)> {
    let mut order: Vec<String> = Vec::new();
    let mut groups: BTreeMap<(usize, u64), Vec<f64>> = BTreeMap::new();
    for p in points {
        let s = match order.iter().position(|x| *x == p.series) {
            Some(i) => i,
            None => {
                order.push(p.series.clone());
                order.len() - 1
            }
        };
        groups
            .entry((s, p.speed_m_s.to_bits()))
            .or_default()
            .push(p.aw_m_s2);
    }
    let mut out: Vec<(String, Vec<ComfortLevel>)> =
        order.into_iter().map(|s| (s, Vec::new())).collect();
    for ((s, speed_bits), aw) in groups {
        let n = aw.len();
        out[s].1.push(ComfortLevel {
            speed_m_s: f64::from_bits(speed_bits),
            mean_m_s2: aw.iter().sum::<f64>() / n as f64,
            min_m_s2: aw.iter().copied().fold(f64::INFINITY, f64::min),
            max_m_s2: aw.iter().copied().fold(f64::NEG_INFINITY, f64::max),
            rows: n,
        });
    }
    for (_, levels) in &mut out {
        levels.sort_by(|a, b| a.speed_m_s.total_cmp(&b.speed_m_s));
    }
    out
}

/// aw against speed, one line per series (mean over seeds, with a bar from
/// the smallest to the largest seed where there are several), over the
/// comfort reactions of ISO 2631-1 Annex C shaded and labelled. The bands
/// overlap in the standard, and overlapping shades show it.
pub fn comfort_chart(points: &[ComfortPoint], title: &str) -> Result<String, ExportError> {
    let series = comfort_levels(points);
    let finite: Vec<&ComfortLevel> = series
        .iter()
        .flat_map(|(_, l)| l)
        .filter(|l| l.speed_m_s.is_finite() && l.max_m_s2.is_finite())
        .collect();
    if finite.is_empty() {
        return Err(no_data("no rows with a finite speed and aw"));
    }
    let (mut x0, mut x1) = finite
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), l| {
            (a.min(l.speed_m_s), b.max(l.speed_m_s))
        });
    let pad = ((x1 - x0) * 0.05).max(0.5);
    x0 = (x0 - pad).max(0.0);
    x1 += pad;
    let top = finite.iter().map(|l| l.max_m_s2).fold(0.0, f64::max);
    // Show at least the first two bands so the scale reads at a glance.
    let y1 = (top * 1.12).max(0.7);

    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, SIZE_PX).into_drawing_area();
        root.fill(&WHITE).map_err(draw_err)?;
        let mut chart = ChartBuilder::on(&root)
            .caption(title, (FONT, 22))
            .margin(16)
            .margin_right(BAND_LABEL_PX)
            .x_label_area_size(48)
            .y_label_area_size(64)
            .build_cartesian_2d(x0..x1, 0.0..y1)
            .map_err(draw_err)?;
        chart
            .configure_mesh()
            .x_desc("speed (m/s)")
            .y_desc("seat aw, ISO 2631-1 Wk (m/s²)")
            .label_style((FONT, 14))
            .axis_desc_style((FONT, 16))
            .light_line_style(WHITE.mix(0.0))
            .draw()
            .map_err(draw_err)?;
        // Annex C bands, mildest first: green to red, translucent.
        let shades = [
            RGBColor(46, 160, 67),
            RGBColor(140, 190, 60),
            RGBColor(230, 200, 40),
            RGBColor(240, 150, 40),
            RGBColor(225, 90, 40),
            RGBColor(190, 30, 45),
        ];
        for (band, shade) in COMFORT_BANDS.iter().zip(shades) {
            if band.lower_m_s2 >= y1 {
                continue;
            }
            let upper = band.upper_m_s2.min(y1);
            chart
                .draw_series(std::iter::once(Rectangle::new(
                    [(x0, band.lower_m_s2), (x1, upper)],
                    shade.mix(0.13).filled(),
                )))
                .map_err(draw_err)?;
            // The label in the right margin, level with the middle of the
            // visible part of the band (the middles are far enough apart
            // for the overlapping bands to keep their labels apart).
            let range = if band.upper_m_s2.is_finite() {
                format!("{}–{} m/s²", band.lower_m_s2, band.upper_m_s2)
            } else {
                format!("above {} m/s²", band.lower_m_s2)
            };
            let (px, py) = chart.backend_coord(&(x1, 0.5 * (band.lower_m_s2 + upper)));
            let text = |size: i32, c: &'static RGBColor, v: VPos| {
                TextStyle::from((FONT, size).into_font())
                    .color(c)
                    .pos(Pos::new(HPos::Left, v))
            };
            root.draw(&Text::new(
                band.label,
                (px + 10, py),
                text(14, &LABEL_DARK, VPos::Bottom),
            ))
            .map_err(draw_err)?;
            root.draw(&Text::new(
                range,
                (px + 10, py + 2),
                text(12, &LABEL_GREY, VPos::Top),
            ))
            .map_err(draw_err)?;
            root.draw(&Rectangle::new(
                [(px + 2, py - 6), (px + 7, py + 6)],
                shade.mix(0.6).filled(),
            ))
            .map_err(draw_err)?;
        }
        let (px, py) = chart.backend_coord(&(x1, y1));
        root.draw(&Text::new(
            "ISO 2631-1 Annex C",
            (px + 10, py),
            TextStyle::from((FONT, 13).into_font().style(FontStyle::Italic))
                .color(&RGBColor(60, 60, 60)),
        ))
        .map_err(draw_err)?;
        for (i, (name, levels)) in series.iter().enumerate() {
            let c = colour(i);
            let line: Vec<(f64, f64)> = levels.iter().map(|l| (l.speed_m_s, l.mean_m_s2)).collect();
            chart
                .draw_series(LineSeries::new(line.clone(), c.stroke_width(2)))
                .map_err(draw_err)?
                .label(name.as_str())
                .legend(move |(x, y)| {
                    PathElement::new(vec![(x, y), (x + 24, y)], c.stroke_width(3))
                });
            chart
                .draw_series(line.iter().map(|p| Circle::new(*p, 3, c.filled())))
                .map_err(draw_err)?;
            chart
                .draw_series(
                    levels
                        .iter()
                        .filter(|l| l.rows > 1 && l.max_m_s2 > l.min_m_s2)
                        .map(|l| {
                            PathElement::new(
                                vec![(l.speed_m_s, l.min_m_s2), (l.speed_m_s, l.max_m_s2)],
                                c.stroke_width(1),
                            )
                        }),
                )
                .map_err(draw_err)?;
        }
        chart
            .configure_series_labels()
            .position(SeriesLabelPosition::UpperLeft)
            .label_font((FONT, 14))
            .background_style(WHITE.mix(0.85))
            .border_style(BLACK)
            .draw()
            .map_err(draw_err)?;
        root.present().map_err(draw_err)?;
    }
    Ok(svg)
}

// -------------------------------------------------------------- histogram

/// A histogram of `values` in `bins` equal bins from the smallest to the
/// largest finite value (NaN and infinite values are left out and counted
/// in the caption), as bars of sample counts with the 1st, 50th and 99th
/// percentiles marked (from the histogram, resolution one bin width). `column`
/// names the quantity with its unit suffix (e.g. `travel_front_m`).
pub fn histogram_chart(
    values: &[f64],
    bins: usize,
    column: &str,
    title: &str,
) -> Result<String, ExportError> {
    let finite: Vec<f64> = values.iter().copied().filter(|v| v.is_finite()).collect();
    if finite.is_empty() {
        return Err(no_data(&format!("column {column} holds no finite value")));
    }
    if bins == 0 {
        return Err(draw_err("the number of bins must be at least 1"));
    }
    let lo = finite.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = finite.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    // A constant column still gets one visible bar.
    let (lo, hi) = if hi > lo {
        (lo, hi)
    } else {
        (
            lo - 0.5 * lo.abs().max(1e-12),
            hi + 0.5 * hi.abs().max(1e-12),
        )
    };
    let width = (hi - lo) / bins as f64;
    let mut h = Histogram::new(lo, hi, width).map_err(draw_err)?;
    for v in &finite {
        h.push(*v);
    }
    // Bins are [lower, upper): the largest value lands in the overflow and
    // is drawn in the last bin (percentiles below the 100th are unaffected).
    let mut counts = h.counts().to_vec();
    if let Some(last) = counts.last_mut() {
        *last += h.overflow();
    }
    let peak = counts.iter().copied().max().unwrap_or(0).max(1) as f64;
    let (x0, _) = h.edges(0);
    let (_, x1) = h.edges(counts.len() - 1);
    let unit = unit_of(column).unwrap_or("");
    let skipped = values.len() - finite.len();
    let caption = if skipped > 0 {
        format!(
            "{title} ({} samples, {skipped} not finite left out)",
            finite.len()
        )
    } else {
        format!("{title} ({} samples)", finite.len())
    };

    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, SIZE_PX).into_drawing_area();
        root.fill(&WHITE).map_err(draw_err)?;
        let mut chart = ChartBuilder::on(&root)
            .caption(caption, (FONT, 22))
            .margin(16)
            .x_label_area_size(48)
            .y_label_area_size(72)
            .build_cartesian_2d(x0..x1, 0.0..peak * 1.12)
            .map_err(draw_err)?;
        chart
            .configure_mesh()
            .x_desc(axis_label(column))
            .y_desc("samples per bin")
            .label_style((FONT, 14))
            .axis_desc_style((FONT, 16))
            .y_label_formatter(&|v| format!("{v:.0}"))
            .draw()
            .map_err(draw_err)?;
        let bar = colour(0);
        chart
            .draw_series(
                counts
                    .iter()
                    .enumerate()
                    .filter(|(_, c)| **c > 0)
                    .map(|(i, c)| {
                        let (a, b) = h.edges(i);
                        Rectangle::new([(a, 0.0), (b, *c as f64)], bar.mix(0.75).filled())
                    }),
            )
            .map_err(draw_err)?
            .label(format!("{} bins of {} {unit}", counts.len(), short(width)))
            .legend(move |(x, y)| {
                Rectangle::new([(x, y - 5), (x + 16, y + 5)], bar.mix(0.75).filled())
            });
        for (p, name, c) in [(1.0, "1st", 5), (50.0, "50th", 1), (99.0, "99th", 5)] {
            let Some(v) = h.percentile(p) else { continue };
            let col = colour(c);
            chart
                .draw_series(std::iter::once(PathElement::new(
                    vec![(v, 0.0), (v, peak * 1.05)],
                    col.stroke_width(2),
                )))
                .map_err(draw_err)?
                .label(format!("{name} percentile {} {unit}", short(v)))
                .legend(move |(x, y)| {
                    PathElement::new(vec![(x, y), (x + 24, y)], col.stroke_width(2))
                });
        }
        chart
            .configure_series_labels()
            .position(SeriesLabelPosition::UpperRight)
            .label_font((FONT, 14))
            .background_style(WHITE.mix(0.85))
            .border_style(BLACK)
            .draw()
            .map_err(draw_err)?;
        root.present().map_err(draw_err)?;
    }
    Ok(svg)
}

/// An axis tick: four significant figures without trailing zeros.
fn tick(v: f64) -> String {
    let s = short(v);
    if s.contains('.') && !s.contains('e') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

/// Four significant figures, plain or with an exponent for tiny or huge values.
fn short(v: f64) -> String {
    super::sig(v, 4)
}

// -------------------------------------------------------------------- PSD

/// The profile's displacement PSD `Gd(n)` (Welch, as `roughride classify`
/// computes it) on log–log axes, over the ISO 8608 classes: boundaries
/// `Gd(n) = bound·(n/n0)^−2` at the geometric midpoints between class means
/// `16·4^k·10⁻⁶ m³` (ISO 8608 class table, w = 2), alternate classes shaded
/// and lettered. The class fit of `classify` (w = 2) is drawn dashed.
pub fn psd_chart(profile: &Profile, title: &str) -> Result<String, ExportError> {
    let seg = welch_segment_len(profile.len(), profile.spacing_m);
    let spectrum = welch_psd(profile, seg).map_err(draw_err)?;
    let points: Vec<(f64, f64)> = spectrum
        .frequency_cycle_m
        .iter()
        .zip(&spectrum.gd_m3)
        .skip(1) // DC has no place on a log axis
        .map(|(n, g)| (*n, *g))
        .filter(|(_, g)| *g > 0.0 && g.is_finite())
        .collect();
    if points.len() < 2 {
        return Err(no_data("the profile is too short for a PSD"));
    }
    let fit = classify(profile).ok();
    let x0 = points[0].0;
    let x1 = points[points.len() - 1].0;
    let line = |gd_n0: f64, n: f64| gd_n0 * (n / N0_CYCLE_M).powi(-2);
    // Vertical range: the data, clipped from below at a hundredth of the
    // class A mean at the highest frequency (a generated road has no power
    // above its band edge, which would otherwise squash the picture).
    let floor = line(RoadClass::A.gd_n0_m3(), x1) / 100.0;
    let data_max = points.iter().map(|p| p.1).fold(0.0, f64::max);
    let y0 = floor;
    let y1 = (data_max * 4.0).max(floor * 1e4);
    // Bins below the floor (outside a generated road's band) are left out.
    let drawn: Vec<(f64, f64)> = points.iter().copied().filter(|p| p.1 >= y0).collect();

    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, SIZE_PX).into_drawing_area();
        root.fill(&WHITE).map_err(draw_err)?;
        let mut chart = ChartBuilder::on(&root)
            .caption(title, (FONT, 22))
            .margin(16)
            .x_label_area_size(48)
            .y_label_area_size(80)
            .build_cartesian_2d((x0..x1).log_scale(), (y0..y1).log_scale())
            .map_err(draw_err)?;
        chart
            .configure_mesh()
            .x_desc("spatial frequency n (cycle/m)")
            .y_desc("displacement PSD Gd(n) (m³)")
            .label_style((FONT, 14))
            .axis_desc_style((FONT, 16))
            .x_label_formatter(&|v| tick(*v))
            .y_label_formatter(&|v| format!("{v:.0e}"))
            .draw()
            .map_err(draw_err)?;
        // Class bands between boundary lines, clipped to the picture: the
        // region between two curves, cut at y0 and y1, is the region between
        // the clamped curves; 65 log-spaced points per curve follow it.
        let ns: Vec<f64> = (0..=64)
            .map(|i| x0 * (x1 / x0).powf(i as f64 / 64.0))
            .collect();
        let clamp = |g: f64| g.clamp(y0, y1);
        for class in RoadClass::ALL {
            let (lower, upper) = class.bounds_m3();
            let lower = if lower > 0.0 { lower } else { y0 / 1e6 };
            let upper = if upper.is_finite() { upper } else { y1 * 1e6 };
            if class.index() % 2 == 0 {
                let poly: Vec<(f64, f64)> = ns
                    .iter()
                    .map(|&n| (n, clamp(line(lower, n))))
                    .chain(ns.iter().rev().map(|&n| (n, clamp(line(upper, n)))))
                    .collect();
                chart
                    .draw_series(std::iter::once(Polygon::new(
                        poly,
                        RGBColor(120, 120, 120).mix(0.12).filled(),
                    )))
                    .map_err(draw_err)?;
            }
            // The boundary line, only where it is inside the picture:
            // Gd = b·(n/n0)^−2 lies between y0 and y1 for n between
            // n0·√(b/y1) and n0·√(b/y0).
            let a = x0.max(N0_CYCLE_M * (lower / y1).sqrt());
            let b = x1.min(N0_CYCLE_M * (lower / y0).sqrt());
            if class != RoadClass::A && b > a {
                chart
                    .draw_series(LineSeries::new(
                        [(a, line(lower, a)), (b, line(lower, b))],
                        RGBColor(150, 150, 150).stroke_width(1),
                    ))
                    .map_err(draw_err)?;
            }
            // The letter on the class mean line, placed where that line is
            // inside the picture, preferably towards the right.
            let mean = class.gd_n0_m3();
            let candidates = [x1 / 1.8, x1 / 6.0, (x0 * x1).sqrt(), x0 * 3.0];
            if let Some(n) = candidates.iter().copied().find(|&n| {
                let g = line(mean, n);
                g > y0 * 2.0 && g < y1 / 2.0
            }) {
                let style = TextStyle::from((FONT, 16).into_font())
                    .color(&RGBColor(80, 80, 80))
                    .pos(Pos::new(HPos::Center, VPos::Center));
                chart
                    .draw_series(std::iter::once(Text::new(
                        class.to_string(),
                        (n, line(mean, n)),
                        style,
                    )))
                    .map_err(draw_err)?;
            }
        }
        let c = colour(0);
        chart
            .draw_series(LineSeries::new(drawn, c.stroke_width(2)))
            .map_err(draw_err)?
            .label(format!(
                "Welch PSD ({} segments of {} m)",
                spectrum.segments,
                short(spectrum.segment_len as f64 * profile.spacing_m)
            ))
            .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 24, y)], c.stroke_width(3)));
        if let Some(f) = &fit {
            let fc = colour(1);
            let a = f.fit_min_cycle_m.max(x0);
            let b = f.fit_max_cycle_m.min(x1);
            if b > a {
                chart
                    .draw_series(DashedLineSeries::new(
                        [(a, line(f.gd_n0, a)), (b, line(f.gd_n0, b))],
                        8,
                        5,
                        fc.stroke_width(2),
                    ))
                    .map_err(draw_err)?
                    .label(format!(
                        "fit, w = 2: Gd(n0) = {} m³, class {}",
                        short(f.gd_n0),
                        f.class
                    ))
                    .legend(move |(x, y)| {
                        PathElement::new(vec![(x, y), (x + 24, y)], fc.stroke_width(2))
                    });
            }
        }
        chart
            .configure_series_labels()
            .position(SeriesLabelPosition::LowerLeft)
            .label_font((FONT, 14))
            .background_style(WHITE.mix(0.85))
            .border_style(BLACK)
            .draw()
            .map_err(draw_err)?;
        root.present().map_err(draw_err)?;
    }
    Ok(svg)
}

// ---------------------------------------------------------------- history

/// One named time series.
#[derive(Debug, Clone, PartialEq)]
pub struct TimeSeries {
    /// Column name with its unit suffix (e.g. `driver_accel_m_s2`).
    pub column: String,
    /// Values, one per time.
    pub values: Vec<f64>,
}

/// Keeps at most `max_points` points of `(t, y)` by splitting the record
/// into buckets and keeping each bucket's smallest and largest value in time
/// order, so peaks survive on screen. Returns the input when it is short.
pub fn decimate_min_max(t: &[f64], y: &[f64], max_points: usize) -> Vec<(f64, f64)> {
    let n = t.len().min(y.len());
    if n <= max_points || max_points < 4 {
        return t.iter().zip(y).map(|(a, b)| (*a, *b)).take(n).collect();
    }
    let buckets = max_points / 2;
    let mut out = Vec::with_capacity(2 * buckets);
    for b in 0..buckets {
        let lo = n * b / buckets;
        let hi = n * (b + 1) / buckets;
        if lo == hi {
            continue;
        }
        let (mut imin, mut imax) = (lo, lo);
        for i in lo..hi {
            if y[i] < y[imin] {
                imin = i;
            }
            if y[i] > y[imax] {
                imax = i;
            }
        }
        let (first, second) = if imin <= imax {
            (imin, imax)
        } else {
            (imax, imin)
        };
        out.push((t[first], y[first]));
        if second != first {
            out.push((t[second], y[second]));
        }
    }
    out
}

/// The series against time, one line each, on one pair of axes. The
/// vertical axis names the shared unit, or says "value" when the columns'
/// units differ. Long windows are decimated per series
/// ([`decimate_min_max`], [`MAX_HISTORY_POINTS`]).
pub fn history_chart(
    time_s: &[f64],
    series: &[TimeSeries],
    title: &str,
) -> Result<String, ExportError> {
    if time_s.len() < 2 || series.is_empty() {
        return Err(no_data("fewer than two samples in the time window"));
    }
    let t0 = time_s[0];
    let t1 = time_s[time_s.len() - 1];
    // Written to also catch NaN times.
    if t1.partial_cmp(&t0) != Some(std::cmp::Ordering::Greater) {
        return Err(no_data("the time window has no length"));
    }
    let finite = series
        .iter()
        .flat_map(|s| &s.values)
        .copied()
        .filter(|v| v.is_finite());
    let (mut y0, mut y1) = finite.fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), v| {
        (a.min(v), b.max(v))
    });
    if !(y0.is_finite() && y1.is_finite()) {
        return Err(no_data("no finite value in the time window"));
    }
    if y1 <= y0 {
        let d = y0.abs().max(1e-12) * 0.5;
        y0 -= d;
        y1 += d;
    }
    let pad = (y1 - y0) * 0.06;
    let units: Vec<Option<&str>> = series.iter().map(|s| unit_of(&s.column)).collect();
    let y_desc = match units[0] {
        Some(u) if units.iter().all(|x| *x == Some(u)) => {
            if series.len() == 1 {
                axis_label(&series[0].column)
            } else {
                format!("value ({u})")
            }
        }
        _ => "value (units in the legend)".to_string(),
    };

    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, SIZE_PX).into_drawing_area();
        root.fill(&WHITE).map_err(draw_err)?;
        let mut chart = ChartBuilder::on(&root)
            .caption(title, (FONT, 22))
            .margin(16)
            .x_label_area_size(48)
            .y_label_area_size(80)
            .build_cartesian_2d(t0..t1, (y0 - pad)..(y1 + pad))
            .map_err(draw_err)?;
        chart
            .configure_mesh()
            .x_desc("time (s)")
            .y_desc(y_desc)
            .label_style((FONT, 14))
            .axis_desc_style((FONT, 16))
            .draw()
            .map_err(draw_err)?;
        for (i, s) in series.iter().enumerate() {
            let c = colour(i);
            let pts: Vec<(f64, f64)> = decimate_min_max(time_s, &s.values, MAX_HISTORY_POINTS)
                .into_iter()
                .filter(|p| p.1.is_finite())
                .collect();
            chart
                .draw_series(LineSeries::new(pts, c.stroke_width(1)))
                .map_err(draw_err)?
                .label(axis_label(&s.column))
                .legend(move |(x, y)| {
                    PathElement::new(vec![(x, y), (x + 24, y)], c.stroke_width(3))
                });
        }
        chart
            .configure_series_labels()
            .position(SeriesLabelPosition::UpperRight)
            .label_font((FONT, 14))
            .background_style(WHITE.mix(0.85))
            .border_style(BLACK)
            .draw()
            .map_err(draw_err)?;
        root.present().map_err(draw_err)?;
    }
    Ok(svg)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn units_come_from_the_column_suffix() {
        assert_eq!(axis_label("travel_front_m"), "travel front (m)");
        assert_eq!(axis_label("driver_accel_m_s2"), "driver accel (m/s²)");
        assert_eq!(axis_label("pitch_accel_rad_s2"), "pitch accel (rad/s²)");
        assert_eq!(axis_label("tyre_load_rear_n"), "tyre load rear (N)");
        assert_eq!(axis_label("time_s"), "time (s)");
        assert_eq!(axis_label("seat_aw"), "seat aw");
        assert_eq!(unit_of("speed_m_s"), Some("m/s"));
    }

    #[test]
    fn comfort_levels_average_over_seeds_per_series_and_speed() {
        let p = |s: &str, v: f64, aw: f64| ComfortPoint {
            series: s.into(),
            speed_m_s: v,
            aw_m_s2: aw,
        };
        let rows = [
            p("C", 20.0, 1.0),
            p("C", 10.0, 0.5),
            p("A", 10.0, 0.1),
            p("C", 20.0, 3.0),
        ];
        let g = comfort_levels(&rows);
        assert_eq!(g.len(), 2);
        assert_eq!(g[0].0, "C"); // first appearance
        assert_eq!(g[0].1[0].speed_m_s, 10.0); // ascending speed
        let at20 = &g[0].1[1];
        assert_eq!(
            (at20.mean_m_s2, at20.min_m_s2, at20.max_m_s2, at20.rows),
            (2.0, 1.0, 3.0, 2)
        );
        assert_eq!(g[1].1.len(), 1);
    }

    #[test]
    fn decimation_keeps_the_extremes_and_the_bound() {
        let t: Vec<f64> = (0..100_000).map(|i| i as f64 * 1e-3).collect();
        let mut y: Vec<f64> = t.iter().map(|t| (t * 7.0).sin()).collect();
        y[54_321] = 9.0;
        y[77_777] = -9.0;
        let d = decimate_min_max(&t, &y, 1000);
        assert!(d.len() <= 1000);
        assert!(d.iter().any(|p| p.1 == 9.0) && d.iter().any(|p| p.1 == -9.0));
        assert!(d.windows(2).all(|w| w[0].0 < w[1].0), "time order");
        assert_eq!(decimate_min_max(&t[..10], &y[..10], 1000).len(), 10);
    }

    #[test]
    fn empty_data_is_refused_with_a_reason() {
        assert!(
            comfort_chart(&[], "t")
                .unwrap_err()
                .to_string()
                .contains("nothing to draw")
        );
        assert!(histogram_chart(&[f64::NAN], 10, "x_m", "t").is_err());
        assert!(
            history_chart(
                &[0.0],
                &[TimeSeries {
                    column: "a_m".into(),
                    values: vec![1.0]
                }],
                "t"
            )
            .is_err()
        );
    }
}
