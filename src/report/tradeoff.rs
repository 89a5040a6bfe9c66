//! The trade-off picture of a design study: a seat's aw against the
//! dynamic load coefficient (left) and against suspension travel (right),
//! one dot per vehicle variant, the Pareto set of each plane joined in
//! order and labelled with its parameter values. Drawn in the shared frame
//! of [`super::plot`]; the numbers come from [`crate::design::tradeoff`].

use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use super::ExportError;
use super::plot::{Axes, Axis, FONT, Frame, LABEL_GREY, colour, draw_err, no_data};
use crate::comfort::HEALTH_CAUTION;
use crate::design::tradeoff::{AxleChoice, Point, Tradeoff, TravelMeasure};

/// Picture size, pixels (two panels side by side).
pub const TRADEOFF_SIZE_PX: (u32, u32) = (1280, 640);
/// Most Pareto points labelled per panel (every k-th beyond).
const MAX_LABELS: usize = 14;

/// The label of a point: its parameter values in key order, with the
/// vehicle file's name first when the study holds several files.
pub fn point_label(p: &Point, keys: &[String], with_vehicle: bool) -> String {
    let values: Vec<String> = keys
        .iter()
        .filter_map(|k| p.values.get(k))
        .map(|v| format!("{v}"))
        .collect();
    let name = std::path::Path::new(&p.vehicle)
        .file_stem()
        .map_or(p.vehicle.clone(), |s| s.to_string_lossy().into_owned());
    match (with_vehicle, values.is_empty()) {
        (true, true) => name,
        (true, false) => format!("{name}: {}", values.join(", ")),
        (false, _) => values.join(", "),
    }
}

/// The travel axis: label, and the factor from the sweep's unit to the axis's.
fn travel_axis(measure: TravelMeasure) -> (&'static str, f64) {
    match measure {
        TravelMeasure::Rms => ("suspension travel r.m.s. (mm)", 1e3),
        TravelMeasure::P99 => ("suspension travel, 99th percentile, compression (mm)", 1e3),
        TravelMeasure::BumpStop => ("time past the bump stop (%)", 1e2),
    }
}

/// A padded linear range around `values`.
fn range_of(values: impl Iterator<Item = f64>) -> Result<(f64, f64), ExportError> {
    let (lo, hi) = values
        .filter(|v| v.is_finite())
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), v| {
            (a.min(v), b.max(v))
        });
    if !(lo.is_finite() && hi.is_finite()) {
        return Err(no_data("no finite value"));
    }
    let pad = if hi > lo {
        0.08 * (hi - lo)
    } else {
        0.05 * hi.abs().max(1e-3)
    };
    Ok((lo - pad, hi + pad))
}

/// Draws the trade-off of `t` as an SVG document.
pub fn tradeoff_chart(t: &Tradeoff, title: &str) -> Result<String, ExportError> {
    if t.points.is_empty() {
        return Err(no_data("no variant"));
    }
    let (travel_label, scale) = travel_axis(t.selection.travel);
    let aw = range_of(t.points.iter().map(|p| p.aw_m_s2))?;
    let load = range_of(t.points.iter().map(|p| p.dynamic_load_coefficient))?;
    let travel = range_of(t.points.iter().map(|p| p.travel * scale))?;
    let seat = format!("seat {} aw, ISO 2631-1 (m/s²)", t.selection.seat);
    let axle = match t.selection.axle {
        AxleChoice::Front => " (front)",
        AxleChoice::Rear => " (rear)",
        AxleChoice::Both => " (larger axle)",
    };
    let panels = [
        Axes::new(
            Axis::linear(format!("dynamic load coefficient{axle}"), load.0, load.1),
            Axis::linear(seat.clone(), aw.0, aw.1),
        )
        .legend(SeriesLabelPosition::UpperRight),
        Axes::new(
            Axis::linear(format!("{travel_label}{axle}"), travel.0, travel.1),
            Axis::linear(seat, aw.0, aw.1),
        ),
    ];
    let several = t.points.iter().any(|p| p.vehicle != t.points[0].vehicle);
    let labels: Vec<String> = t
        .points
        .iter()
        .map(|p| point_label(p, &t.keys, several))
        .collect();
    Frame::new(title)
        .size(TRADEOFF_SIZE_PX)
        .footnote(&footnote(t))
        .footnote(HEALTH_CAUTION)
        .draw_side_by_side(&panels, |i, chart, _| {
            let xy: Vec<(f64, f64, bool)> = t
                .points
                .iter()
                .map(|p| match i {
                    0 => (p.dynamic_load_coefficient, p.aw_m_s2, p.pareto_load),
                    _ => (p.travel * scale, p.aw_m_s2, p.pareto_travel),
                })
                .collect();
            draw_plane(chart, &xy, &labels)
        })
}

/// What the points are, for the footnote.
fn footnote(t: &Tradeoff) -> String {
    let rows: usize = t.points.iter().map(|p| p.rows).sum();
    let speed = match t.selection.speed_m_s {
        Some(v) => format!("at {} m/s", super::sig(v, 4)),
        None => "over every speed".to_string(),
    };
    let class = match &t.selection.class {
        Some(c) => format!(" on class {c}"),
        None => String::new(),
    };
    let keys = if t.keys.is_empty() {
        "vehicle file".to_string()
    } else {
        t.keys.join(", ")
    };
    format!(
        "One dot per variant: the mean of its rows {speed}{class} ({rows} rows, {} variants). \
         Joined and labelled: the Pareto set of each plane (no other variant is lower on both axes). \
         Labels: {keys}.",
        t.points.len()
    )
}

/// One plane: every point, then the Pareto set joined in increasing x and labelled.
fn draw_plane(
    chart: &mut super::plot::Chart<'_, '_>,
    xy: &[(f64, f64, bool)],
    labels: &[String],
) -> Result<(), ExportError> {
    let grey = LABEL_GREY.mix(0.55);
    chart
        .draw_series(
            xy.iter()
                .map(|&(x, y, _)| Circle::new((x, y), 3, grey.filled())),
        )
        .map_err(draw_err)?
        .label("variant")
        .legend(move |(x, y)| Circle::new((x + 12, y), 3, grey.filled()));
    let mut front: Vec<(f64, f64, &str)> = xy
        .iter()
        .zip(labels)
        .filter(|(p, _)| p.2)
        .map(|(p, l)| (p.0, p.1, l.as_str()))
        .collect();
    front.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.total_cmp(&b.1)));
    let c = colour(0);
    chart
        .draw_series(LineSeries::new(
            front.iter().map(|p| (p.0, p.1)),
            c.stroke_width(2),
        ))
        .map_err(draw_err)?
        .label("Pareto set")
        .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 24, y)], c.stroke_width(3)));
    chart
        .draw_series(front.iter().map(|p| Circle::new((p.0, p.1), 5, c.filled())))
        .map_err(draw_err)?;
    let every = front.len().div_ceil(MAX_LABELS).max(1);
    // Labels right of their point, or left of it in the right third of
    // the panel so they stay inside the picture.
    let x_range = chart.x_range();
    let turn = x_range.start + 0.67 * (x_range.end - x_range.start);
    let style = |h: HPos| {
        TextStyle::from((FONT, 12).into_font())
            .color(&BLACK)
            .pos(Pos::new(h, VPos::Bottom))
    };
    chart
        .draw_series(front.iter().step_by(every).map(|p| {
            let (dx, h) = if p.0 > turn {
                (-7, HPos::Right)
            } else {
                (7, HPos::Left)
            };
            EmptyElement::at((p.0, p.1)) + Text::new(p.2.to_string(), (dx, -4), style(h))
        }))
        .map_err(draw_err)?;
    Ok(())
}
