//! SVG pictures of results (plotters, SVG backend only: no system
//! libraries, text left to the viewer's fonts), all drawn in one shared
//! chart frame.
//!
//! # The frame
//!
//! Every picture is a [`Frame`]: a title on top, one or more panels of
//! [`Axes`] stacked below it (sharing the picture's width), and optional
//! footnote lines at the bottom (the health caution goes there, see
//! [`crate::comfort::HEALTH_CAUTION`]). An [`Axis`] carries its label
//! (quantity and unit, e.g. `"speed (m/s)"`), its range, linear or
//! logarithmic, and its tick format ([`tick`] by default, [`decade_tick`]
//! for powers of ten). A panel's legend goes in the corner asked for with
//! [`Axes::legend`] and lists every series drawn with a `.label(…)`.
//!
//! ```ignore
//! use plotters::prelude::*;
//! use roughride::report::plot::{Axes, Axis, Frame, colour, draw_err, legend_line};
//!
//! let svg = Frame::new("Exceedance of travel ranges")
//!     .footnote(roughride::comfort::HEALTH_CAUTION)
//!     .draw(
//!         Axes::new(Axis::log("cycles", 1.0, 1e6), Axis::log("range (mm)", 0.1, 100.0))
//!             .legend(SeriesLabelPosition::UpperRight),
//!         |chart, _canvas| {
//!             let c = colour(0);
//!             chart
//!                 .draw_series(LineSeries::new(vec![(1.0, 50.0), (1e6, 0.2)], c.stroke_width(2)))
//!                 .map_err(draw_err)?
//!                 .label("front")
//!                 .legend(legend_line(c));
//!             Ok(())
//!         },
//!     )?;
//! ```
//!
//! The body closure gets the panel's chart (data coordinates, [`Chart`])
//! and the whole picture ([`Canvas`], pixel coordinates as
//! `chart.backend_coord` gives them) for text in the margins.
//! [`Frame::draw_stacked`] draws several panels that share the horizontal
//! axis (its label under the lowest panel only). Values that a log axis
//! cannot show (zero, negative) must be left out by the caller.
//!
//! # The pictures
//!
//! Comfort (aw) against speed with the ISO 2631-1 Annex C comfort bands, a
//! histogram of one quantity, a road profile's displacement PSD against the
//! ISO 8608 class bands, and a time-history window (one panel per unit).
//! The design trade-off is in [`super::tradeoff`], the frequency response
//! and mode shapes of a vehicle in [`super::vehicle_plot`]. Every function takes
//! plain data (numbers and labels, or a [`Profile`]), does whatever
//! reduction the picture needs (grouping over seeds, the Welch PSD,
//! histogram bins, decimation) and returns the SVG document as a string;
//! reading files and writing the picture is the caller's job
//! ([`super::write_to`]). Axes carry the quantity and its unit. Output is
//! deterministic: the same data give the same bytes.

use std::collections::BTreeMap;
use std::ops::Range;

use plotters::coord::Shift;
use plotters::coord::ranged1d::{DefaultFormatting, KeyPointHint, Ranged};
use plotters::coord::types::RangedCoordf64;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use super::ExportError;
use crate::comfort::{COMFORT_BANDS, HEALTH_CAUTION};
use crate::road::Profile;
use crate::road::classify::{MIN_BINS_ABOVE_ZERO, classify, welch_segment_len};
use crate::road::iso8608::{N0_CYCLE_M, RoadClass};
use crate::road::psd::welch_psd;
use crate::stats::Histogram;

/// Picture size, pixels.
pub const SIZE_PX: (u32, u32) = (960, 600);
/// Most points drawn per time-history series (min/max decimation beyond).
pub const MAX_HISTORY_POINTS: usize = 4000;

/// The font family of every text (left to the viewer).
pub const FONT: &str = "sans-serif";
/// Dark grey for labels in the margins.
pub const LABEL_DARK: RGBColor = RGBColor(40, 40, 40);
/// Mid grey for secondary labels and footnotes.
pub const LABEL_GREY: RGBColor = RGBColor(90, 90, 90);
/// Right margin of the comfort picture, for the band labels, pixels.
const BAND_LABEL_PX: u32 = 190;
/// Footnote text size and line pitch, pixels.
const FOOTNOTE_FONT_PX: u32 = 12;
const FOOTNOTE_LINE_PX: u32 = 16;
/// Longest footnote line, characters (a 12 px sans-serif line across the picture).
const FOOTNOTE_CHARS: usize = 140;

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

/// The colour of series `i` (cycles through the palette).
pub fn colour(i: usize) -> RGBColor {
    PALETTE[i % PALETTE.len()]
}

/// A drawing failure as an export error (plotters' errors are a bug or an
/// impossible picture, never the user's input).
pub fn draw_err(e: impl std::fmt::Display) -> ExportError {
    ExportError::Serialise {
        what: "SVG picture".to_string(),
        message: e.to_string(),
    }
}

/// The error for data that leave nothing to draw.
pub fn no_data(what: &str) -> ExportError {
    ExportError::Serialise {
        what: "SVG picture".to_string(),
        message: format!("nothing to draw: {what}"),
    }
}

/// The legend sample of a line series: a short thick stroke.
pub fn legend_line(c: RGBColor) -> impl Fn((i32, i32)) -> PathElement<(i32, i32)> + 'static {
    move |(x, y)| PathElement::new(vec![(x, y), (x + 24, y)], c.stroke_width(3))
}

// -------------------------------------------------------------- the frame

/// The coordinate of one axis: linear, or logarithmic (base 10).
#[derive(Debug, Clone, Copy)]
pub enum Scale {
    /// Linear from `lo` to `hi`.
    Linear { lo: f64, hi: f64 },
    /// Logarithmic from `lo` to `hi` (both > 0).
    Log { lo: f64, hi: f64 },
}

impl Scale {
    fn linear(lo: f64, hi: f64) -> RangedCoordf64 {
        (lo..hi).into()
    }
}

impl Ranged for Scale {
    type FormatOption = DefaultFormatting;
    type ValueType = f64;

    fn map(&self, value: &f64, limit: (i32, i32)) -> i32 {
        match *self {
            Scale::Linear { lo, hi } => Scale::linear(lo, hi).map(value, limit),
            Scale::Log { lo, hi } => {
                Scale::linear(lo.log10(), hi.log10()).map(&value.log10(), limit)
            }
        }
    }

    fn key_points<H: KeyPointHint>(&self, hint: H) -> Vec<f64> {
        match *self {
            Scale::Linear { lo, hi } => Scale::linear(lo, hi).key_points(hint),
            Scale::Log { lo, hi } => log_key_points(lo, hi, hint),
        }
    }

    fn range(&self) -> Range<f64> {
        match *self {
            Scale::Linear { lo, hi } | Scale::Log { lo, hi } => lo..hi,
        }
    }
}

/// Grid and tick values of a log axis: the powers of ten inside the range
/// (1, 2 and 5 times them when the range spans less than two decades), and
/// for the light grid every integer multiple of each decade.
fn log_key_points<H: KeyPointHint>(lo: f64, hi: f64, hint: H) -> Vec<f64> {
    let inside = |v: &f64| *v >= lo * (1.0 - 1e-12) && *v <= hi * (1.0 + 1e-12);
    let (k0, k1) = (lo.log10().floor() as i32 - 1, hi.log10().ceil() as i32 + 1);
    let with = |mult: &[f64]| -> Vec<f64> {
        (k0..=k1)
            .flat_map(|k| mult.iter().map(move |m| m * 10f64.powi(k)))
            .filter(inside)
            .collect()
    };
    let mut bold = with(&[1.0]);
    if bold.len() < 2 {
        bold = with(&[1.0, 2.0, 5.0]);
    }
    let max = hint.max_num_points().max(1);
    if bold.len() > max {
        let step = bold.len().div_ceil(max);
        bold = bold.into_iter().step_by(step).collect();
    }
    if !hint.weight().allow_light_points() {
        return bold;
    }
    let light = with(&[1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0]);
    if light.len() <= max { light } else { bold }
}

/// One axis of a panel: label (quantity and unit), range, scale and tick format.
#[derive(Debug, Clone)]
pub struct Axis {
    label: String,
    scale: Scale,
    ticks: fn(f64) -> String,
}

impl Axis {
    /// A linear axis from `lo` to `hi`, ticks by [`tick`].
    pub fn linear(label: impl Into<String>, lo: f64, hi: f64) -> Self {
        Axis {
            label: label.into(),
            scale: Scale::Linear { lo, hi },
            ticks: tick,
        }
    }

    /// A logarithmic axis from `lo` to `hi` (both > 0), ticks by [`tick`].
    pub fn log(label: impl Into<String>, lo: f64, hi: f64) -> Self {
        Axis {
            label: label.into(),
            scale: Scale::Log { lo, hi },
            ticks: tick,
        }
    }

    /// Formats the tick labels with `format` (e.g. [`decade_tick`]).
    pub fn ticks(mut self, format: fn(f64) -> String) -> Self {
        self.ticks = format;
        self
    }

    /// The axis range, in data units.
    pub fn range(&self) -> (f64, f64) {
        match self.scale {
            Scale::Linear { lo, hi } | Scale::Log { lo, hi } => (lo, hi),
        }
    }

    fn check(&self) -> Result<(), ExportError> {
        let (lo, hi) = self.range();
        let log = matches!(self.scale, Scale::Log { .. });
        if !(lo.is_finite() && hi.is_finite() && lo < hi) || (log && lo <= 0.0) {
            return Err(draw_err(format!(
                "axis `{}`: range {lo} .. {hi} cannot be drawn",
                self.label
            )));
        }
        Ok(())
    }
}

/// One panel: two axes, where its legend goes, and its grid.
#[derive(Debug, Clone)]
pub struct Axes {
    /// Horizontal axis.
    pub x: Axis,
    /// Vertical axis.
    pub y: Axis,
    legend: Option<SeriesLabelPosition>,
    fine_grid: bool,
    margin_right_px: u32,
    y_label_px: u32,
}

impl Axes {
    /// A panel with a fine grid, no legend and the usual margins.
    pub fn new(x: Axis, y: Axis) -> Self {
        Axes {
            x,
            y,
            legend: None,
            fine_grid: true,
            margin_right_px: 16,
            y_label_px: 80,
        }
    }

    /// Draws the legend (every labelled series) in this corner or place.
    pub fn legend(mut self, at: SeriesLabelPosition) -> Self {
        self.legend = Some(at);
        self
    }

    /// Only the main grid lines, no fine grid between them.
    pub fn coarse_grid(mut self) -> Self {
        self.fine_grid = false;
        self
    }

    /// Leaves `px` pixels right of the plot for labels drawn on the canvas.
    pub fn margin_right(mut self, px: u32) -> Self {
        self.margin_right_px = px;
        self
    }
}

/// A panel's chart, in data coordinates.
pub type Chart<'a, 'b> = ChartContext<'a, SVGBackend<'b>, Cartesian2d<Scale, Scale>>;
/// The whole picture, in pixels (as `Chart::backend_coord` gives them).
pub type Canvas<'b> = DrawingArea<SVGBackend<'b>, Shift>;

/// A picture: title, panels, footnote. See the module doc.
#[derive(Debug, Clone)]
pub struct Frame {
    title: String,
    footnotes: Vec<String>,
    size_px: (u32, u32),
}

impl Frame {
    /// A picture of [`SIZE_PX`] with this title.
    pub fn new(title: impl Into<String>) -> Self {
        Frame {
            title: title.into(),
            footnotes: Vec::new(),
            size_px: SIZE_PX,
        }
    }

    /// Adds a footnote under the panels, wrapped to the picture's width.
    pub fn footnote(mut self, text: &str) -> Self {
        self.footnotes.extend(wrap(text, FOOTNOTE_CHARS));
        self
    }

    /// Sets the picture size, pixels.
    pub fn size(mut self, size_px: (u32, u32)) -> Self {
        self.size_px = size_px;
        self
    }

    /// Draws one panel; `body` draws the data on it.
    pub fn draw<F>(self, axes: Axes, body: F) -> Result<String, ExportError>
    where
        F: FnOnce(&mut Chart<'_, '_>, &Canvas<'_>) -> Result<(), ExportError>,
    {
        let mut body = Some(body);
        self.draw_stacked(std::slice::from_ref(&axes), |_, chart, canvas| {
            match body.take() {
                Some(b) => b(chart, canvas),
                None => Ok(()),
            }
        })
    }

    /// Draws `panels` stacked top to bottom, equal heights, sharing the
    /// horizontal axis label (drawn under the lowest panel only); `body`
    /// gets each panel's index and chart in turn.
    pub fn draw_stacked<F>(self, panels: &[Axes], body: F) -> Result<String, ExportError>
    where
        F: FnMut(usize, &mut Chart<'_, '_>, &Canvas<'_>) -> Result<(), ExportError>,
    {
        self.render(panels, (panels.len(), 1), body)
    }

    /// Draws `panels` side by side, equal widths, each with its own axis
    /// labels (for planes that share nothing but the picture); `body` gets
    /// each panel's index and chart in turn.
    pub fn draw_side_by_side<F>(self, panels: &[Axes], body: F) -> Result<String, ExportError>
    where
        F: FnMut(usize, &mut Chart<'_, '_>, &Canvas<'_>) -> Result<(), ExportError>,
    {
        self.render(panels, (1, panels.len()), body)
    }

    /// The one layout of every picture: white page, title, the panels in a
    /// `(rows, columns)` grid, footnotes. The horizontal axis label goes
    /// under the lowest row only.
    fn render<F>(
        self,
        panels: &[Axes],
        grid: (usize, usize),
        mut body: F,
    ) -> Result<String, ExportError>
    where
        F: FnMut(usize, &mut Chart<'_, '_>, &Canvas<'_>) -> Result<(), ExportError>,
    {
        if panels.is_empty() {
            return Err(no_data("no panel"));
        }
        for p in panels {
            p.x.check()?;
            p.y.check()?;
        }
        let mut svg = String::new();
        {
            let root = SVGBackend::with_string(&mut svg, self.size_px).into_drawing_area();
            root.fill(&WHITE).map_err(draw_err)?;
            let foot_px = match self.footnotes.len() {
                0 => 0,
                n => 6 + FOOTNOTE_LINE_PX * n as u32,
            };
            let (upper, lower) = root.split_vertically(self.size_px.1 - foot_px);
            let titled = upper
                .margin(16, 0, 0, 0)
                .titled(&self.title, (FONT, 22))
                .map_err(draw_err)?;
            self.draw_footnotes(&lower)?;
            let areas = titled.split_evenly(grid);
            for (i, (area, axes)) in areas.iter().zip(panels).enumerate() {
                let lowest = i / grid.1 + 1 == grid.0;
                let mut chart = panel(area, axes, lowest)?;
                body(i, &mut chart, &root)?;
                if let Some(at) = &axes.legend {
                    draw_legend(&mut chart, at.clone())?;
                }
            }
            root.present().map_err(draw_err)?;
        }
        Ok(svg)
    }

    fn draw_footnotes(&self, area: &Canvas<'_>) -> Result<(), ExportError> {
        let style = TextStyle::from((FONT, FOOTNOTE_FONT_PX).into_font())
            .color(&LABEL_GREY)
            .pos(Pos::new(HPos::Left, VPos::Top));
        for (i, line) in self.footnotes.iter().enumerate() {
            area.draw(&Text::new(
                line.as_str(),
                (16, FOOTNOTE_LINE_PX as i32 * i as i32),
                style.clone(),
            ))
            .map_err(draw_err)?;
        }
        Ok(())
    }
}

/// Builds one panel's chart and draws its axes and grid.
fn panel<'a, 'b>(
    area: &'a Canvas<'b>,
    axes: &Axes,
    lowest: bool,
) -> Result<Chart<'a, 'b>, ExportError> {
    let mut chart = ChartBuilder::on(area)
        .margin(16)
        .margin_right(axes.margin_right_px)
        .x_label_area_size(if lowest { 48 } else { 28 })
        .y_label_area_size(axes.y_label_px)
        .build_cartesian_2d(axes.x.scale, axes.y.scale)
        .map_err(draw_err)?;
    let (xt, yt) = (axes.x.ticks, axes.y.ticks);
    let x_fmt = move |v: &f64| xt(*v);
    let y_fmt = move |v: &f64| yt(*v);
    let mut mesh = chart.configure_mesh();
    mesh.y_desc(axes.y.label.as_str())
        .label_style((FONT, 14))
        .axis_desc_style((FONT, 16))
        .x_label_formatter(&x_fmt)
        .y_label_formatter(&y_fmt);
    if lowest {
        mesh.x_desc(axes.x.label.as_str());
    }
    if !axes.fine_grid {
        mesh.light_line_style(WHITE.mix(0.0));
    }
    mesh.draw().map_err(draw_err)?;
    Ok(chart)
}

/// The legend of every labelled series, in the frame's one style.
fn draw_legend<'a, 'b: 'a>(
    chart: &mut Chart<'a, 'b>,
    at: SeriesLabelPosition,
) -> Result<(), ExportError> {
    chart
        .configure_series_labels()
        .position(at)
        .label_font((FONT, 14))
        .background_style(WHITE.mix(0.85))
        .border_style(BLACK)
        .draw()
        .map_err(draw_err)
}

/// Splits `text` into lines of at most `width` characters at spaces (a
/// longer word gets a line of its own).
pub fn wrap(text: &str, width: usize) -> Vec<String> {
    let mut lines = Vec::new();
    let mut line = String::new();
    for word in text.split_whitespace() {
        if !line.is_empty() && line.chars().count() + 1 + word.chars().count() > width {
            lines.push(std::mem::take(&mut line));
        }
        if !line.is_empty() {
            line.push(' ');
        }
        line.push_str(word);
    }
    if !line.is_empty() {
        lines.push(line);
    }
    lines
}

/// An axis tick: four significant figures without trailing zeros.
pub fn tick(v: f64) -> String {
    let s = short(v);
    if s.contains('.') && !s.contains('e') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

/// A tick for a log axis of small or large values: `1e-3`, `2e5`.
pub fn decade_tick(v: f64) -> String {
    format!("{v:.0e}")
}

/// Four significant figures, plain or with an exponent for tiny or huge values.
fn short(v: f64) -> String {
    super::sig(v, 4)
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

/// Annex C band shades, mildest first: green to red, drawn translucent.
const BAND_SHADES: [RGBColor; 6] = [
    RGBColor(46, 160, 67),
    RGBColor(140, 190, 60),
    RGBColor(230, 200, 40),
    RGBColor(240, 150, 40),
    RGBColor(225, 90, 40),
    RGBColor(190, 30, 45),
];

/// The value axis of the comfort picture for sweep column `column`: the
/// total value (what ISO 2631-1 reads the comfort bands against), the
/// fore-aft Wd aw, or the vertical aw.
pub fn comfort_axis_label(column: &str) -> &'static str {
    if column.ends_with("_total_value") {
        "seat vibration total value, ISO 2631-1 (m/s²)"
    } else if column.ends_with("_fore_aft_aw") {
        "seat fore-aft aw, ISO 2631-1 Wd (m/s²)"
    } else {
        "seat aw, ISO 2631-1 Wk (m/s²)"
    }
}

/// aw against speed, one line per series (mean over seeds, with a bar from
/// the smallest to the largest seed where there are several), over the
/// comfort reactions of ISO 2631-1 Annex C shaded and labelled. The bands
/// overlap in the standard, and overlapping shades show it. The footnote
/// explains the bars and carries the health caution. `column` is the sweep
/// column drawn (it names the value axis). `speed_axis` is the
/// unit of the speed axis (the points stay in m/s).
pub fn comfort_chart(
    points: &[ComfortPoint],
    title: &str,
    speed_axis: SpeedAxis,
    column: &str,
) -> Result<String, ExportError> {
    let factor = speed_axis.per_m_s();
    let shown: Vec<ComfortPoint> = points
        .iter()
        .map(|p| ComfortPoint {
            speed_m_s: p.speed_m_s * factor,
            ..p.clone()
        })
        .collect();
    let series = comfort_levels(&shown);
    let (x0, x1, y1) = comfort_ranges(&series)?;
    let seeds = series
        .iter()
        .flat_map(|(_, l)| l)
        .map(|l| l.rows)
        .max()
        .unwrap_or(1);
    let mut frame = Frame::new(title);
    if seeds > 1 {
        frame = frame.footnote(&format!(
            "Lines: mean aw over the seeds at each speed; bars: smallest to largest aw of the \
             seeds ({seeds} per point at most)."
        ));
    }
    let axes = Axes::new(
        Axis::linear(speed_axis.label(), x0, x1),
        Axis::linear(comfort_axis_label(column), 0.0, y1),
    )
    .margin_right(BAND_LABEL_PX)
    .coarse_grid()
    .legend(SeriesLabelPosition::UpperLeft);
    frame.footnote(HEALTH_CAUTION).draw(axes, |chart, canvas| {
        draw_comfort_bands(chart, canvas, (x0, x1), y1)?;
        draw_comfort_series(chart, &series)
    })
}

/// The unit of a picture's speed axis.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum SpeedAxis {
    /// m/s (the unit of every speed inside).
    #[default]
    MetresPerSecond,
    /// km/h.
    KilometresPerHour,
}

impl SpeedAxis {
    /// Axis units per m/s (3.6 km/h = 1 m/s, exact by definition).
    pub fn per_m_s(self) -> f64 {
        match self {
            SpeedAxis::MetresPerSecond => 1.0,
            SpeedAxis::KilometresPerHour => 3.6,
        }
    }

    /// The axis label.
    pub fn label(self) -> &'static str {
        match self {
            SpeedAxis::MetresPerSecond => "speed (m/s)",
            SpeedAxis::KilometresPerHour => "speed (km/h)",
        }
    }
}

/// Speed range (padded) and the top of the aw axis.
fn comfort_ranges(series: &[(String, Vec<ComfortLevel>)]) -> Result<(f64, f64, f64), ExportError> {
    let finite: Vec<&ComfortLevel> = series
        .iter()
        .flat_map(|(_, l)| l)
        .filter(|l| l.speed_m_s.is_finite() && l.max_m_s2.is_finite())
        .collect();
    if finite.is_empty() {
        return Err(no_data("no rows with a finite speed and aw"));
    }
    let (x0, x1) = finite
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), l| {
            (a.min(l.speed_m_s), b.max(l.speed_m_s))
        });
    let pad = ((x1 - x0) * 0.05).max(0.5);
    let top = finite.iter().map(|l| l.max_m_s2).fold(0.0, f64::max);
    // Show at least the first two bands so the scale reads at a glance.
    Ok(((x0 - pad).max(0.0), x1 + pad, (top * 1.12).max(0.7)))
}

/// The Annex C bands as shades, with their names and ranges in the right margin.
fn draw_comfort_bands(
    chart: &mut Chart<'_, '_>,
    canvas: &Canvas<'_>,
    (x0, x1): (f64, f64),
    y1: f64,
) -> Result<(), ExportError> {
    let text = |size: u32, c: &'static RGBColor, v: VPos| {
        TextStyle::from((FONT, size).into_font())
            .color(c)
            .pos(Pos::new(HPos::Left, v))
    };
    for (band, shade) in COMFORT_BANDS.iter().zip(BAND_SHADES) {
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
        // visible part of the band (the middles are far enough apart for
        // the overlapping bands to keep their labels apart).
        let range = if band.upper_m_s2.is_finite() {
            format!("{}–{} m/s²", band.lower_m_s2, band.upper_m_s2)
        } else {
            format!("above {} m/s²", band.lower_m_s2)
        };
        let (px, py) = chart.backend_coord(&(x1, 0.5 * (band.lower_m_s2 + upper)));
        let draw = |e: &Text<'_, (i32, i32), String>| canvas.draw(e).map_err(draw_err);
        draw(&Text::new(
            band.label.to_string(),
            (px + 10, py),
            text(14, &LABEL_DARK, VPos::Bottom),
        ))?;
        draw(&Text::new(
            range,
            (px + 10, py + 2),
            text(12, &LABEL_GREY, VPos::Top),
        ))?;
        canvas
            .draw(&Rectangle::new(
                [(px + 2, py - 6), (px + 7, py + 6)],
                shade.mix(0.6).filled(),
            ))
            .map_err(draw_err)?;
    }
    let (px, py) = chart.backend_coord(&(x1, y1));
    canvas
        .draw(&Text::new(
            "ISO 2631-1 Annex C",
            (px + 10, py),
            TextStyle::from((FONT, 13).into_font().style(FontStyle::Italic))
                .color(&RGBColor(60, 60, 60)),
        ))
        .map_err(draw_err)
}

/// One line per series through the means, dots, and min–max bars over the seeds.
fn draw_comfort_series(
    chart: &mut Chart<'_, '_>,
    series: &[(String, Vec<ComfortLevel>)],
) -> Result<(), ExportError> {
    for (i, (name, levels)) in series.iter().enumerate() {
        let c = colour(i);
        let line: Vec<(f64, f64)> = levels.iter().map(|l| (l.speed_m_s, l.mean_m_s2)).collect();
        chart
            .draw_series(LineSeries::new(line.clone(), c.stroke_width(2)))
            .map_err(draw_err)?
            .label(name.as_str())
            .legend(legend_line(c));
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
    Ok(())
}

// -------------------------------------------------------------- histogram

/// Equal bins from the smallest to the largest finite value, the largest
/// value counted in the last bin.
struct Bins {
    hist: Histogram,
    counts: Vec<u64>,
    width: f64,
}

fn bin_values(finite: &[f64], bins: usize) -> Result<Bins, ExportError> {
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
    let mut hist = Histogram::new(lo, hi, width).map_err(draw_err)?;
    for v in finite {
        hist.push(*v);
    }
    // Bins are [lower, upper): the largest value lands in the overflow and
    // is drawn in the last bin (percentiles below the 100th are unaffected).
    let mut counts = hist.counts().to_vec();
    if let Some(last) = counts.last_mut() {
        *last += hist.overflow();
    }
    Ok(Bins {
        hist,
        counts,
        width,
    })
}

/// A histogram of `values` in `bins` equal bins from the smallest to the
/// largest finite value (NaN and infinite values are left out and counted
/// in the caption), as bars of sample counts with the 1st, 50th and 99th
/// percentiles marked (from the histogram, resolution one bin width). `column`
/// names the quantity with its unit suffix (e.g. `travel_front_m`); lengths
/// in m are drawn and labelled in mm (travels are millimetres). The value
/// axis leaves the top third free for the legend, so the legend covers no
/// bar and no percentile line.
pub fn histogram_chart(
    values: &[f64],
    bins: usize,
    column: &str,
    title: &str,
) -> Result<String, ExportError> {
    let (finite, unit, label) = display_values(values, column);
    if finite.is_empty() {
        return Err(no_data(&format!("column {column} holds no finite value")));
    }
    if bins == 0 {
        return Err(draw_err("the number of bins must be at least 1"));
    }
    let b = bin_values(&finite, bins)?;
    let peak = b.counts.iter().copied().max().unwrap_or(0).max(1) as f64;
    let (x0, _) = b.hist.edges(0);
    let (_, x1) = b.hist.edges(b.counts.len() - 1);
    let skipped = values.len() - finite.len();
    let caption = if skipped > 0 {
        format!(
            "{title} ({} samples, {skipped} not finite left out)",
            finite.len()
        )
    } else {
        format!("{title} ({} samples)", finite.len())
    };
    let axes = Axes::new(
        Axis::linear(label, x0, x1),
        Axis::linear("samples per bin", 0.0, peak * HISTOGRAM_HEADROOM)
            .ticks(|v| format!("{v:.0}")),
    )
    .legend(SeriesLabelPosition::UpperRight);
    Frame::new(caption).draw(axes, |chart, _| {
        draw_bars(chart, &b, unit)?;
        draw_percentiles(chart, &b, peak, unit)
    })
}

/// Top of a histogram's count axis over the highest bar: bars and
/// percentile lines (up to 1.05 × the highest bar) fill the lower two
/// thirds, the legend (four entries) the top third.
const HISTOGRAM_HEADROOM: f64 = 1.6;

/// The finite values as drawn, their unit and the axis label: lengths in m
/// become mm, other units are kept.
fn display_values(values: &[f64], column: &str) -> (Vec<f64>, &'static str, String) {
    let finite = values.iter().copied().filter(|v| v.is_finite());
    match split_unit(column) {
        Some((stem, "m")) => (
            finite.map(|v| v * 1e3).collect(),
            "mm",
            format!("{} (mm)", stem.replace('_', " ")),
        ),
        _ => (
            finite.collect(),
            unit_of(column).unwrap_or(""),
            axis_label(column),
        ),
    }
}

/// The bars of the non-empty bins, labelled with the bin count and width.
fn draw_bars(chart: &mut Chart<'_, '_>, b: &Bins, unit: &str) -> Result<(), ExportError> {
    let bar = colour(0);
    chart
        .draw_series(
            b.counts
                .iter()
                .enumerate()
                .filter(|(_, c)| **c > 0)
                .map(|(i, c)| {
                    let (lo, hi) = b.hist.edges(i);
                    Rectangle::new([(lo, 0.0), (hi, *c as f64)], bar.mix(0.75).filled())
                }),
        )
        .map_err(draw_err)?
        .label(format!(
            "{} bins of {} {unit}",
            b.counts.len(),
            short(b.width)
        ))
        .legend(move |(x, y)| {
            Rectangle::new([(x, y - 5), (x + 16, y + 5)], bar.mix(0.75).filled())
        });
    Ok(())
}

/// The 1st, 50th and 99th percentiles as vertical lines up to just over
/// the highest bar, each with its value in the legend.
fn draw_percentiles(
    chart: &mut Chart<'_, '_>,
    b: &Bins,
    peak: f64,
    unit: &str,
) -> Result<(), ExportError> {
    for (p, name, c) in [(1.0, "1st", 5), (50.0, "50th", 1), (99.0, "99th", 5)] {
        let Some(v) = b.hist.percentile(p) else {
            continue;
        };
        let col = colour(c);
        chart
            .draw_series(std::iter::once(PathElement::new(
                vec![(v, 0.0), (v, peak * 1.05)],
                col.stroke_width(2),
            )))
            .map_err(draw_err)?
            .label(format!("{name} percentile {} {unit}", short(v)))
            .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 24, y)], col.stroke_width(2)));
    }
    Ok(())
}

// -------------------------------------------------------------------- PSD

/// `Gd(n) = gd_n0·(n/n0)^−2`, the ISO 8608 straight line of waviness 2.
fn class_line(gd_n0: f64, n: f64) -> f64 {
    gd_n0 * (n / N0_CYCLE_M).powi(-2)
}

/// The profile's displacement PSD `Gd(n)` (Welch, as `roughride classify`
/// computes it) on log–log axes, over the ISO 8608 classes: boundaries
/// `Gd(n) = bound·(n/n0)^−2` at the geometric midpoints between class means
/// `16·4^k·10⁻⁶ m³` (ISO 8608 class table, w = 2), alternate classes shaded
/// and lettered. The class fit of `classify` (w = 2) is drawn dashed. Only
/// the estimate's valid band is drawn ([`valid_band`]), and the value axis
/// spans that band's values.
pub fn psd_chart(profile: &Profile, title: &str) -> Result<String, ExportError> {
    let seg = welch_segment_len(profile.len(), profile.spacing_m);
    let spectrum = welch_psd(profile, seg).map_err(draw_err)?;
    let all: Vec<(f64, f64)> = spectrum
        .frequency_cycle_m
        .iter()
        .copied()
        .zip(spectrum.gd_m3.iter().copied())
        .collect();
    let fit = classify(profile).ok();
    // The band classify fits (ISO 8608 octave bands the record resolves),
    // else from the fourth bin (leakage) to the Nyquist frequency.
    let band = match &fit {
        Some(f) if f.fit_max_cycle_m > f.fit_min_cycle_m => (f.fit_min_cycle_m, f.fit_max_cycle_m),
        _ => (
            MIN_BINS_ABOVE_ZERO * spectrum.resolution_cycle_m,
            0.5 / profile.spacing_m,
        ),
    };
    let drawn = valid_band(&all, band);
    if drawn.len() < 2 {
        return Err(no_data("the profile is too short for a PSD"));
    }
    let (x0, x1) = (drawn[0].0, drawn[drawn.len() - 1].0);
    let (lo, hi) = drawn.iter().fold((f64::INFINITY, 0.0f64), |(a, b), p| {
        (a.min(p.1), b.max(p.1))
    });
    // Half a decade of room each side of the data, at least two decades in all.
    let (y0, y1) = (lo / 3.0, (hi * 3.0).max(lo * 30.0));
    let legend = format!(
        "Welch PSD ({} segments of {} m)",
        spectrum.segments,
        short(spectrum.segment_len as f64 * profile.spacing_m)
    );
    let axes = Axes::new(
        Axis::log("spatial frequency n (cycle/m)", x0, x1),
        Axis::log("displacement PSD Gd(n) (m³)", y0, y1).ticks(decade_tick),
    )
    .legend(SeriesLabelPosition::LowerLeft);
    Frame::new(title).draw(axes, |chart, _| {
        draw_class_bands(chart, (x0, x1), (y0, y1))?;
        let c = colour(0);
        chart
            .draw_series(LineSeries::new(drawn, c.stroke_width(2)))
            .map_err(draw_err)?
            .label(legend)
            .legend(legend_line(c));
        if let Some(f) = &fit {
            draw_class_fit(chart, f, (x0, x1))?;
        }
        Ok(())
    })
}

/// The points of a Welch estimate `(n, Gd)` inside `band` (cycle/m, ends
/// included within rounding) with a positive, finite value. Outside it the
/// estimate is not the road: below, window leakage and the detrend distort
/// the lowest bins (and a generated road has no power below its `n_min`);
/// above, a band-limited road (a generated one stops at its `n_max`) leaves
/// only leakage decades below the content.
pub fn valid_band(points: &[(f64, f64)], (lo, hi): (f64, f64)) -> Vec<(f64, f64)> {
    points
        .iter()
        .copied()
        .filter(|&(n, g)| {
            n >= lo * (1.0 - 1e-9) && n <= hi * (1.0 + 1e-9) && g > 0.0 && g.is_finite()
        })
        .collect()
}

/// ISO 8608 class bands between boundary lines, alternate ones shaded, each
/// lettered on its mean line, all clipped to the picture.
fn draw_class_bands(
    chart: &mut Chart<'_, '_>,
    (x0, x1): (f64, f64),
    (y0, y1): (f64, f64),
) -> Result<(), ExportError> {
    // The region between two curves, cut at y0 and y1, is the region
    // between the clamped curves; 65 log-spaced points per curve follow it.
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
                .map(|&n| (n, clamp(class_line(lower, n))))
                .chain(ns.iter().rev().map(|&n| (n, clamp(class_line(upper, n)))))
                .collect();
            chart
                .draw_series(std::iter::once(Polygon::new(
                    poly,
                    RGBColor(120, 120, 120).mix(0.12).filled(),
                )))
                .map_err(draw_err)?;
        }
        // The boundary line, only where it is inside the picture: Gd =
        // b·(n/n0)^−2 lies between y0 and y1 for n between n0·√(b/y1) and
        // n0·√(b/y0).
        let a = x0.max(N0_CYCLE_M * (lower / y1).sqrt());
        let b = x1.min(N0_CYCLE_M * (lower / y0).sqrt());
        if class != RoadClass::A && b > a {
            chart
                .draw_series(LineSeries::new(
                    [(a, class_line(lower, a)), (b, class_line(lower, b))],
                    RGBColor(150, 150, 150).stroke_width(1),
                ))
                .map_err(draw_err)?;
        }
        draw_class_letter(chart, class, (x0, x1), (y0, y1))?;
    }
    Ok(())
}

/// The class letter on its mean line, placed where that line is inside
/// the picture, preferably towards the right.
fn draw_class_letter(
    chart: &mut Chart<'_, '_>,
    class: RoadClass,
    (x0, x1): (f64, f64),
    (y0, y1): (f64, f64),
) -> Result<(), ExportError> {
    let mean = class.gd_n0_m3();
    let candidates = [x1 / 1.8, x1 / 6.0, (x0 * x1).sqrt(), x0 * 3.0];
    let Some(n) = candidates.iter().copied().find(|&n| {
        let g = class_line(mean, n);
        g > y0 * 2.0 && g < y1 / 2.0
    }) else {
        return Ok(());
    };
    let style = TextStyle::from((FONT, 16).into_font())
        .color(&RGBColor(80, 80, 80))
        .pos(Pos::new(HPos::Center, VPos::Center));
    chart
        .draw_series(std::iter::once(Text::new(
            class.to_string(),
            (n, class_line(mean, n)),
            style,
        )))
        .map_err(draw_err)?;
    Ok(())
}

/// The class fit of `classify` (waviness 2) as a dashed line over its band.
fn draw_class_fit(
    chart: &mut Chart<'_, '_>,
    f: &crate::road::classify::Classification,
    (x0, x1): (f64, f64),
) -> Result<(), ExportError> {
    let fc = colour(1);
    let a = f.fit_min_cycle_m.max(x0);
    let b = f.fit_max_cycle_m.min(x1);
    if b <= a {
        return Ok(());
    }
    chart
        .draw_series(DashedLineSeries::new(
            [(a, class_line(f.gd_n0, a)), (b, class_line(f.gd_n0, b))],
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
        .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 24, y)], fc.stroke_width(2)));
    Ok(())
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

/// The finite range of the series' values, widened when it has no height,
/// padded by 6 % each side.
fn value_range(series: &[&TimeSeries]) -> Result<(f64, f64), ExportError> {
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
    Ok((y0 - pad, y1 + pad))
}

/// The series against time, one line each, one panel per unit (in the
/// order the units first appear), stacked on one time axis: m/s² and m on
/// one axis would flatten the smaller. A panel names its unit, or the
/// column when it holds one series. Long windows are decimated per series
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
    let groups = by_unit(series);
    let panels = groups
        .iter()
        .map(|g| history_axes(g, (t0, t1)))
        .collect::<Result<Vec<_>, _>>()?;
    // Extra height from the third panel on, so each keeps a readable height.
    let height = SIZE_PX.1 + 200 * (panels.len().max(2) as u32 - 2);
    Frame::new(title)
        .size((SIZE_PX.0, height))
        .draw_stacked(&panels, |p, chart, _| {
            for s in &groups[p] {
                let c = colour(series_index(series, s));
                let pts: Vec<(f64, f64)> = decimate_min_max(time_s, &s.values, MAX_HISTORY_POINTS)
                    .into_iter()
                    .filter(|p| p.1.is_finite())
                    .collect();
                chart
                    .draw_series(LineSeries::new(pts, c.stroke_width(1)))
                    .map_err(draw_err)?
                    .label(axis_label(&s.column))
                    .legend(legend_line(c));
            }
            Ok(())
        })
}

/// The series grouped by the unit of their column's suffix, groups in order
/// of first appearance (columns without a known unit share one group).
pub fn by_unit(series: &[TimeSeries]) -> Vec<Vec<&TimeSeries>> {
    let mut units: Vec<Option<&str>> = Vec::new();
    let mut groups: Vec<Vec<&TimeSeries>> = Vec::new();
    for s in series {
        let u = unit_of(&s.column);
        match units.iter().position(|x| *x == u) {
            Some(i) => groups[i].push(s),
            None => {
                units.push(u);
                groups.push(vec![s]);
            }
        }
    }
    groups
}

/// Where `s` stands in `series` (its colour follows the order given).
fn series_index(series: &[TimeSeries], s: &TimeSeries) -> usize {
    series.iter().position(|x| std::ptr::eq(x, s)).unwrap_or(0)
}

/// One history panel: the time axis and the group's value axis.
fn history_axes(group: &[&TimeSeries], (t0, t1): (f64, f64)) -> Result<Axes, ExportError> {
    let (y0, y1) = value_range(group)?;
    let y_desc = match (group, unit_of(&group[0].column)) {
        ([one], _) => axis_label(&one.column),
        (_, Some(u)) => format!("value ({u})"),
        (_, None) => "value".to_string(),
    };
    Ok(Axes::new(
        Axis::linear("time (s)", t0, t1),
        Axis::linear(y_desc, y0, y1),
    )
    .legend(SeriesLabelPosition::UpperRight))
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Every `<text>` of an SVG, in document order (roxmltree is a
    /// dev-dependency, so a plain scan is used here).
    fn texts(svg: &str) -> Vec<String> {
        svg.split("<text")
            .skip(1)
            .filter_map(|t| {
                let body = &t[t.find('>')? + 1..];
                Some(body[..body.find("</text>")?].trim().to_string())
            })
            .collect()
    }

    #[test]
    fn a_log_axis_puts_each_decade_the_same_distance_apart() {
        // log10 mapping: 1, 10, 100 are evenly spaced (definition of a log axis).
        let s = Scale::Log { lo: 1.0, hi: 100.0 };
        let (a, b, c) = (
            s.map(&1.0, (0, 200)),
            s.map(&10.0, (0, 200)),
            s.map(&100.0, (0, 200)),
        );
        assert_eq!((a, b, c), (0, 100, 200));
        let bold = s.key_points(plotters::coord::ranged1d::BoldPoints(10));
        assert_eq!(bold, vec![1.0, 10.0, 100.0]);
        // Less than two decades: 1-2-5 steps (common practice for log scales).
        let narrow =
            Scale::Log { lo: 0.3, hi: 4.0 }.key_points(plotters::coord::ranged1d::BoldPoints(10));
        assert_eq!(narrow, vec![0.5, 1.0, 2.0]);
        assert!(Axis::log("x", 0.0, 1.0).check().is_err());
        assert!(Axis::linear("x", 1.0, 1.0).check().is_err());
    }

    #[test]
    fn the_frame_draws_title_axis_labels_footnote_and_every_panel() {
        let panels = [
            Axes::new(
                Axis::linear("t (s)", 0.0, 1.0),
                Axis::linear("a (m/s²)", -1.0, 1.0),
            ),
            Axes::new(
                Axis::linear("t (s)", 0.0, 1.0),
                Axis::log("b (m)", 1e-3, 1.0),
            )
            .legend(SeriesLabelPosition::UpperRight),
        ];
        let mut seen = Vec::new();
        let svg = Frame::new("a title")
            .footnote(&"word ".repeat(60))
            .draw_stacked(&panels, |i, chart, _| {
                seen.push(i);
                chart
                    .draw_series(LineSeries::new([(0.0, 0.01), (1.0, 0.5)], colour(i)))
                    .map_err(draw_err)?
                    .label(format!("series {i}"))
                    .legend(legend_line(colour(i)));
                Ok(())
            })
            .unwrap();
        assert_eq!(seen, [0, 1]);
        let t = texts(&svg);
        assert!(t.iter().any(|x| x == "a title"));
        assert!(t.iter().any(|x| x == "a (m/s²)") && t.iter().any(|x| x == "b (m)"));
        // The shared time label only under the lowest panel.
        assert_eq!(t.iter().filter(|x| *x == "t (s)").count(), 1);
        // The footnote wrapped into lines of at most FOOTNOTE_CHARS.
        let foot: Vec<&String> = t.iter().filter(|x| x.starts_with("word")).collect();
        assert_eq!(foot.len(), 3, "{foot:?}");
        assert!(foot.iter().all(|l| l.len() <= FOOTNOTE_CHARS));
        // The legend of the second panel only: the first has none.
        assert!(t.iter().any(|x| x == "series 1") && !t.iter().any(|x| x == "series 0"));
    }

    #[test]
    fn wrapping_keeps_every_word_in_order() {
        let text = "These are estimates from a model, not measurements.";
        let lines = wrap(text, 20);
        assert!(lines.iter().all(|l| l.chars().count() <= 20), "{lines:?}");
        assert_eq!(lines.join(" "), text);
        assert_eq!(wrap("", 10), Vec::<String>::new());
    }

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
    fn history_series_group_by_unit_in_order_of_first_appearance() {
        let ts = |c: &str| TimeSeries {
            column: c.into(),
            values: vec![0.0, 1.0],
        };
        let s = [ts("a_m_s2"), ts("b_m"), ts("c_m_s2"), ts("d"), ts("e")];
        let g: Vec<Vec<&str>> = by_unit(&s)
            .iter()
            .map(|g| g.iter().map(|t| t.column.as_str()).collect())
            .collect();
        assert_eq!(g, [vec!["a_m_s2", "c_m_s2"], vec!["b_m"], vec!["d", "e"]]);
        let svg = history_chart(&[0.0, 1.0], &s, "t").unwrap();
        // One y-axis label per unit group (the second names its one column).
        let t = texts(&svg);
        assert!(t.iter().any(|x| x == "value (m/s²)") && t.iter().any(|x| x == "b (m)"));
        assert!(t.iter().any(|x| x == "value"));
    }

    #[test]
    fn the_valid_band_keeps_positive_points_inside_it() {
        let pts = [
            (0.0, 5.0),
            (0.01, 1.0),
            (0.02, 0.5),
            (0.04, 0.0),
            (0.08, 0.1),
            (0.2, 0.1),
        ];
        assert_eq!(
            valid_band(&pts, (0.01, 0.08)),
            vec![(0.01, 1.0), (0.02, 0.5), (0.08, 0.1)]
        );
    }

    #[test]
    fn empty_data_is_refused_with_a_reason() {
        assert!(
            comfort_chart(&[], "t", SpeedAxis::default(), "seat_aw")
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
