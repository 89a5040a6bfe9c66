//! Pictures of a vehicle's linear model: the road frequency response
//! (magnitude against frequency on log axes, one panel per unit, the
//! modes' undamped frequencies marked) and the mode shapes (the body as a
//! bar in its displaced position per mode, its node marked). Drawn in the
//! shared frame of [`super::plot`]; the numbers come from
//! [`crate::vehicle::response`] and [`crate::vehicle::modal`].

use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use super::ExportError;
use super::plot::{
    Axes, Axis, Canvas, Chart, FONT, Frame, LABEL_DARK, LABEL_GREY, SIZE_PX, colour, decade_tick,
    draw_err, no_data,
};
use crate::vehicle::Vehicle;
use crate::vehicle::modal::{ModalAnalysis, Mode};
use crate::vehicle::response::{FrequencyResponse, Quantity};

/// Frequencies per decade of the log grid of the frequency-response picture
/// (steps of 2.3 %, finer than the half-power width 2ζ of a mode with
/// damping ratio 0.02 and above).
pub const FRF_POINTS_PER_DECADE: usize = 100;
/// Deepest a response panel reaches below its highest value (notches of
/// the wheelbase filter would otherwise stretch it over many decades).
const FRF_DECADES: f64 = 5.0;
/// Top of a response panel over its highest value (1.3 decades: room for
/// four staggered mode names above the curves).
const FRF_HEADROOM: f64 = 20.0;
/// Right margin of the response picture, for the names of the outputs, pixels.
const FRF_LEGEND_PX: u32 = 180;
/// Right margin of the mode-shape picture, for the labels of each mode, pixels.
const MODE_LABEL_PX: u32 = 300;

/// `count` frequencies from `lo_hz` to `hi_hz` (both included), evenly
/// spaced in log: `lo·(hi/lo)^(i/(count−1))`, `count` =
/// [`FRF_POINTS_PER_DECADE`] per decade (at least 2). Fails unless
/// `0 < lo < hi` and both are finite.
pub fn log_frequencies(lo_hz: f64, hi_hz: f64) -> Result<Vec<f64>, String> {
    if !(lo_hz > 0.0 && hi_hz > lo_hz && hi_hz.is_finite()) {
        return Err(format!(
            "need 0 < lowest < highest frequency, got {lo_hz} .. {hi_hz} Hz"
        ));
    }
    let decades = (hi_hz / lo_hz).log10();
    let count = ((decades * FRF_POINTS_PER_DECADE as f64).ceil() as usize).max(1) + 1;
    let ratio = hi_hz / lo_hz;
    Ok((0..count)
        .map(|i| match i {
            0 => lo_hz,
            i if i + 1 == count => hi_hz,
            i => lo_hz * ratio.powf(i as f64 / (count - 1) as f64),
        })
        .collect())
}

/// The channels named in `names` (as `frf` names them: `driver_accel`,
/// `front_travel`, `heave`…), in that order; with no names, every seat
/// acceleration, travel and tyre load (the ride engineer's usual three).
pub fn select_channels(
    response: &FrequencyResponse,
    names: &[String],
) -> Result<Vec<usize>, String> {
    let ch = &response.channels;
    if names.is_empty() {
        return Ok((0..ch.len())
            .filter(|&i| {
                matches!(
                    ch[i].quantity,
                    Quantity::SeatAccel(_) | Quantity::Travel(_) | Quantity::TyreLoad(_)
                )
            })
            .collect());
    }
    names
        .iter()
        .map(|n| {
            ch.iter().position(|c| c.name == *n).ok_or_else(|| {
                let known: Vec<&str> = ch.iter().map(|c| c.name.as_str()).collect();
                format!("no output `{n}`; this vehicle has: {}", known.join(", "))
            })
        })
        .collect()
}

/// The road frequency response `response` of the channels `selected`
/// (indices into its channels), one panel per unit in order of first
/// appearance, magnitude against frequency on log–log axes. Every mode of
/// `modes` inside the frequency range is marked by a dashed vertical line
/// at its undamped frequency in every panel and named in the first.
/// Magnitudes that are zero (e.g. travel at 0 Hz) are left out.
pub fn frf_chart(
    response: &FrequencyResponse,
    selected: &[usize],
    modes: &ModalAnalysis,
    title: &str,
) -> Result<String, ExportError> {
    let f = &response.frequencies_hz;
    let (Some(&f0), Some(&f1)) = (f.first(), f.last()) else {
        return Err(no_data("no frequency"));
    };
    if !(f0 > 0.0 && f1 > f0) || selected.is_empty() {
        return Err(no_data("need positive, rising frequencies and an output"));
    }
    let groups = unit_groups(response, selected);
    let panels = groups
        .iter()
        .map(|g| frf_axes(response, g, (f0, f1)))
        .collect::<Result<Vec<_>, _>>()?;
    let height = SIZE_PX.1 + 200 * (panels.len().max(2) as u32 - 2);
    Frame::new(title)
        .size((SIZE_PX.0, height))
        .draw_stacked(&panels, |p, chart, canvas| {
            draw_mode_marks(chart, canvas, modes, (f0, f1), panels[p].y.range(), p == 0)?;
            for &c in &groups[p] {
                let pts: Vec<(f64, f64)> = f
                    .iter()
                    .zip(&response.values[c])
                    .map(|(f, z)| (*f, z.norm()))
                    .filter(|(_, m)| *m > 0.0 && m.is_finite())
                    .collect();
                let col = colour(selected.iter().position(|s| *s == c).unwrap_or(0));
                chart
                    .draw_series(LineSeries::new(pts, col.stroke_width(2)))
                    .map_err(draw_err)?;
            }
            side_legend(
                chart,
                canvas,
                response,
                &groups[p],
                selected,
                (f1, panels[p].y.range().1),
            )
        })
}

/// The panel's outputs named in the right margin, each beside a sample of
/// its line (outside the plot, so no curve and no mode label is covered).
fn side_legend(
    chart: &Chart<'_, '_>,
    canvas: &Canvas<'_>,
    response: &FrequencyResponse,
    group: &[usize],
    selected: &[usize],
    top: (f64, f64),
) -> Result<(), ExportError> {
    let (px, py) = chart.backend_coord(&top);
    let style = TextStyle::from((FONT, 13).into_font())
        .color(&LABEL_DARK)
        .pos(Pos::new(HPos::Left, VPos::Center));
    for (k, &c) in group.iter().enumerate() {
        let y = py + 10 + 20 * k as i32;
        let col = colour(selected.iter().position(|s| *s == c).unwrap_or(0));
        canvas
            .draw(&PathElement::new(
                vec![(px + 10, y), (px + 32, y)],
                col.stroke_width(3),
            ))
            .map_err(draw_err)?;
        let name = response.channels[c].name.replace('_', " ");
        canvas
            .draw(&Text::new(name, (px + 38, y), style.clone()))
            .map_err(draw_err)?;
    }
    Ok(())
}

/// The selected channels grouped by unit, in order of first appearance.
fn unit_groups(response: &FrequencyResponse, selected: &[usize]) -> Vec<Vec<usize>> {
    let mut units: Vec<&str> = Vec::new();
    let mut groups: Vec<Vec<usize>> = Vec::new();
    for &c in selected {
        let u = response.channels[c].unit;
        match units.iter().position(|x| *x == u) {
            Some(i) => groups[i].push(c),
            None => {
                units.push(u);
                groups.push(vec![c]);
            }
        }
    }
    groups
}

/// One response panel: log frequency, log magnitude from the group's
/// largest value down [`FRF_DECADES`] at most, half a decade of room.
fn frf_axes(
    response: &FrequencyResponse,
    group: &[usize],
    (f0, f1): (f64, f64),
) -> Result<Axes, ExportError> {
    let mags = group
        .iter()
        .flat_map(|&c| response.values[c].iter().map(|z| z.norm()))
        .filter(|m| *m > 0.0 && m.is_finite());
    let (lo, hi) = mags.fold((f64::INFINITY, 0.0f64), |(a, b), m| (a.min(m), b.max(m)));
    if hi <= 0.0 {
        return Err(no_data("no output with a response above zero"));
    }
    let lo = lo.max(hi * 10f64.powf(-FRF_DECADES));
    // Room above the curves for the modes' names.
    let (y0, y1) = (lo / 3.0, (hi * FRF_HEADROOM).max(lo * 30.0));
    let unit = response.channels[group[0]].unit.replace("^2", "²");
    Ok(Axes::new(
        Axis::log("frequency (Hz)", f0, f1),
        Axis::log(format!("magnitude ({unit} per m)"), y0, y1).ticks(decade_tick),
    )
    .margin_right(FRF_LEGEND_PX))
}

/// A dashed vertical line at each mode's undamped frequency inside the
/// range; in the first panel also its name and frequency, above the plot.
fn draw_mode_marks(
    chart: &mut Chart<'_, '_>,
    canvas: &Canvas<'_>,
    modes: &ModalAnalysis,
    (f0, f1): (f64, f64),
    (y0, y1): (f64, f64),
    named: bool,
) -> Result<(), ExportError> {
    let grey = RGBColor(110, 110, 110);
    let style = TextStyle::from((FONT, 12).into_font())
        .color(&LABEL_DARK)
        .pos(Pos::new(HPos::Left, VPos::Bottom));
    let inside = modes
        .modes
        .iter()
        .filter(|m| m.undamped_frequency_hz >= f0 && m.undamped_frequency_hz <= f1);
    for (k, m) in inside.enumerate() {
        let f = m.undamped_frequency_hz;
        chart
            .draw_series(DashedLineSeries::new(
                [(f, y0), (f, y1)],
                6,
                4,
                grey.stroke_width(1),
            ))
            .map_err(draw_err)?;
        if named {
            let (px, py) = chart.backend_coord(&(f, y1));
            // Staggered by mode so close modes keep their labels apart.
            let label = format!("{} {} Hz", m.kind, super::sig(f, 3));
            canvas
                .draw(&Text::new(
                    label,
                    (px + 3, py + 14 * (k as i32 + 1)),
                    style.clone(),
                ))
                .map_err(draw_err)?;
        }
    }
    Ok(())
}

/// The mode shapes of `analysis` (of vehicle `v`), one panel per mode
/// stacked on one axis along the body (m from the CG, positive ahead): the
/// body at rest (grey), the body displaced by the mode (a bar from the rear
/// to the front axle, vertical displacement `z + x·θ` at x), the wheels
/// (squares at their axles) and the node (a circle where `z + x·θ = 0`,
/// `x = −z/θ` as `modes` reports it). Each mode is scaled so its largest
/// displacement drawn is 1 (a mode shape has no absolute size).
pub fn modes_chart(
    analysis: &ModalAnalysis,
    v: &Vehicle,
    title: &str,
) -> Result<String, ExportError> {
    if analysis.modes.is_empty() {
        return Err(no_data("no mode"));
    }
    let (x0, x1) = body_range(analysis, v);
    let panels: Vec<Axes> = analysis
        .modes
        .iter()
        .map(|_| {
            Axes::new(
                Axis::linear("position on the body, m from the CG (+ ahead)", x0, x1),
                Axis::linear("displacement (largest = 1)", -1.35, 1.35),
            )
            .coarse_grid()
            .margin_right(MODE_LABEL_PX)
        })
        .collect();
    let n = panels.len() as u32;
    Frame::new(title)
        .size((SIZE_PX.0, (170 + 190 * n).max(SIZE_PX.1)))
        .footnote(
            "Undamped mode shapes (K·φ = ω²·M·φ); heave positive up, pitch nose-up, so a body \
             point x ahead of the CG moves z + x·θ. Node: where that is zero.",
        )
        .draw_stacked(&panels, |i, chart, canvas| {
            let m = &analysis.modes[i];
            draw_mode(chart, m, v, (x0, x1))?;
            label_mode(chart, canvas, i, m, (x1, 1.35))
        })
}

/// The horizontal range: both axles, every seat and every node within two
/// wheelbases of the CG, with 0.3 m to spare.
fn body_range(analysis: &ModalAnalysis, v: &Vehicle) -> (f64, f64) {
    let reach = 2.0 * v.wheelbase_m();
    let xs = v
        .axles
        .iter()
        .map(|a| a.x_m)
        .chain(v.seats.iter().map(|s| s.x_m))
        .chain(
            analysis
                .modes
                .iter()
                .filter_map(|m| m.node.as_ref())
                .map(|n| n.x_m),
        )
        .filter(|x| x.abs() <= reach);
    let (lo, hi) = xs.fold((0.0f64, 0.0f64), |(a, b), x| (a.min(x), b.max(x)));
    (lo - 0.3, hi + 0.3)
}

/// The value of coordinate `dof` in a mode's shape (0 when it has none).
fn coordinate(m: &Mode, dof: &str) -> f64 {
    m.shape
        .iter()
        .find(|c| c.dof == dof)
        .map_or(0.0, |c| c.value)
}

/// One mode: rest line, displaced body bar, wheels, node.
fn draw_mode(
    chart: &mut Chart<'_, '_>,
    m: &Mode,
    v: &Vehicle,
    (x0, x1): (f64, f64),
) -> Result<(), ExportError> {
    let (z, theta) = (coordinate(m, "heave"), coordinate(m, "pitch"));
    let at = |x: f64| z + x * theta;
    let (front, rear) = (v.axles[0].x_m, v.axles[1].x_m);
    let wheels: Vec<(f64, f64)> = [("front_wheel", front), ("rear_wheel", rear)]
        .iter()
        .filter(|(d, _)| m.shape.iter().any(|c| c.dof == *d))
        .map(|(d, x)| (*x, coordinate(m, d)))
        .collect();
    let largest = wheels
        .iter()
        .map(|w| w.1.abs())
        .chain([at(front).abs(), at(rear).abs()])
        .fold(0.0, f64::max);
    let s = if largest > 0.0 { 1.0 / largest } else { 1.0 };
    let rest = RGBColor(160, 160, 160);
    chart
        .draw_series(LineSeries::new(
            [(x0, 0.0), (x1, 0.0)],
            rest.stroke_width(1),
        ))
        .map_err(draw_err)?;
    let body = colour(0);
    chart
        .draw_series(LineSeries::new(
            [(rear, s * at(rear)), (front, s * at(front))],
            body.stroke_width(7),
        ))
        .map_err(draw_err)?;
    let wheel = colour(1);
    chart
        .draw_series(wheels.iter().map(|&(x, w)| {
            let (px, py) = (x, s * w);
            EmptyElement::at((px, py)) + Rectangle::new([(-6, -6), (6, 6)], wheel.filled())
        }))
        .map_err(draw_err)?;
    if let Some(node) = m.node.as_ref().filter(|n| n.x_m >= x0 && n.x_m <= x1) {
        chart
            .draw_series(std::iter::once(Circle::new(
                (node.x_m, 0.0),
                6,
                BLACK.stroke_width(2),
            )))
            .map_err(draw_err)?;
    }
    Ok(())
}

/// The mode's number, kind, frequencies, damping and node in the right margin.
fn label_mode(
    chart: &Chart<'_, '_>,
    canvas: &Canvas<'_>,
    i: usize,
    m: &Mode,
    top: (f64, f64),
) -> Result<(), ExportError> {
    let (px, py) = chart.backend_coord(&top);
    let damped = if m.overdamped {
        "overdamped".to_string()
    } else {
        format!("damped {} Hz", super::sig(m.damped_frequency_hz, 4))
    };
    let node = match &m.node {
        Some(n) => format!("node {}", n.description),
        None => "no node on the body".to_string(),
    };
    let key = if m.shape.len() > 2 {
        "bar: body, squares: wheels"
    } else {
        "bar: body"
    };
    // The node's place and where it lies against the wheelbase, one line each.
    let (node_at, node_where) = node.split_once(", ").unwrap_or((node.as_str(), ""));
    let lines = [
        (format!("mode {}: {}", i + 1, m.kind), 15, &LABEL_DARK),
        (
            format!("{} Hz undamped", super::sig(m.undamped_frequency_hz, 4)),
            13,
            &LABEL_DARK,
        ),
        (
            format!("{damped}, ζ = {}", super::sig(m.damping_ratio, 3)),
            13,
            &LABEL_GREY,
        ),
        (node_at.to_string(), 12, &LABEL_GREY),
        (node_where.to_string(), 12, &LABEL_GREY),
        (key.to_string(), 12, &LABEL_GREY),
    ];
    let lines = lines.into_iter().filter(|l| !l.0.is_empty());
    for (k, (text, size, c)) in lines.enumerate() {
        let style = TextStyle::from((FONT, size).into_font())
            .color(c)
            .pos(Pos::new(HPos::Left, VPos::Top));
        canvas
            .draw(&Text::new(text, (px + 12, py + 20 * k as i32), style))
            .map_err(draw_err)?;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_log_grid_is_geometric_and_keeps_its_ends() {
        let f = log_frequencies(0.5, 50.0).unwrap();
        // Two decades at 100 per decade: 201 values, each ratio 10^(1/100).
        assert_eq!(f.len(), 201);
        assert_eq!((f[0], f[200]), (0.5, 50.0));
        let r = 10f64.powf(0.01);
        assert!(f.windows(2).all(|w| (w[1] / w[0] / r - 1.0).abs() < 1e-12));
        assert!(log_frequencies(0.0, 1.0).is_err());
        assert!(log_frequencies(2.0, 1.0).is_err());
    }
}
