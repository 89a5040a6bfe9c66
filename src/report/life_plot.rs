//! Pictures of a vehicle's life spectra (`roughride lifetime`): the
//! cumulative exceedance spectrum of rainflow ranges on log axes, one line
//! per part of the usage and the total, and the range–mean matrix as a heat
//! map. Both are drawn in the shared [`super::plot::Frame`]; they take the
//! data as read back by [`crate::lifetime::tables`] and return the SVG.

use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use super::ExportError;
use super::plot::{
    Axes, Axis, Canvas, Chart, FONT, Frame, LABEL_DARK, LABEL_GREY, colour, decade_tick, draw_err,
    legend_line, no_data,
};
use crate::lifetime::tables::{ExceedanceSeries, MatrixCell};

/// How a quantity of the life spectra is shown: its axis words and the
/// factor from the file's SI unit to the shown unit.
#[derive(Debug, Clone, Copy)]
struct Shown {
    words: &'static str,
    unit: &'static str,
    factor: f64,
}

/// The words for a life-spectra quantity (`travel_m` → "suspension travel").
pub fn quantity_words(quantity: &str) -> &'static str {
    shown(quantity).words
}

fn shown(quantity: &str) -> Shown {
    match quantity {
        "travel_m" => Shown {
            words: "suspension travel",
            unit: "mm",
            factor: 1e3,
        },
        "suspension_force_n" => Shown {
            words: "suspension force",
            unit: "N",
            factor: 1.0,
        },
        "tyre_load_n" => Shown {
            words: "tyre load",
            unit: "N",
            factor: 1.0,
        },
        _ => Shown {
            words: "value",
            unit: "file unit",
            factor: 1.0,
        },
    }
}

/// How the range axis of the exceedance picture is drawn.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum RangeAxis {
    /// Logarithmic (ranges of zero left out).
    Log,
    /// Linear from zero.
    Linear,
}

/// Rounds `lo .. hi` (both > 0) out to whole decades.
fn decades(lo: f64, hi: f64) -> (f64, f64) {
    let lo = 10f64.powf(lo.log10().floor());
    let mut hi = 10f64.powf(hi.log10().ceil());
    if hi <= lo {
        hi = lo * 10.0;
    }
    (lo, hi)
}

/// The drawable points of a series: (cycles, range in the shown unit),
/// cycles > 0, and range > 0 on a log range axis.
fn curve(s: &ExceedanceSeries, how: Shown, axis: RangeAxis) -> Vec<(f64, f64)> {
    s.points
        .iter()
        .map(|&(r, n)| (n, r * how.factor))
        .filter(|&(n, r)| n > 0.0 && (axis == RangeAxis::Linear || r > 0.0))
        .collect()
}

/// The exceedance spectrum: cycles at or above each range (horizontal,
/// log) against the range, one line per part and the total in black.
pub fn exceedance_chart(
    series: &[ExceedanceSeries],
    quantity: &str,
    range_axis: RangeAxis,
    title: &str,
) -> Result<String, ExportError> {
    let how = shown(quantity);
    let curves: Vec<(&str, Vec<(f64, f64)>)> = series
        .iter()
        .map(|s| (s.name.as_str(), curve(s, how, range_axis)))
        .filter(|(_, c)| !c.is_empty())
        .collect();
    let all = || curves.iter().flat_map(|(_, c)| c.iter());
    let (n_lo, n_hi) = all().fold((f64::MAX, 0f64), |(a, b), &(n, _)| (a.min(n), b.max(n)));
    let (r_lo, r_hi) = all().fold((f64::MAX, 0f64), |(a, b), &(_, r)| (a.min(r), b.max(r)));
    if curves.is_empty() || r_hi <= 0.0 {
        return Err(no_data("no cycles to draw"));
    }
    let (n_lo, n_hi) = decades(n_lo, n_hi);
    let y_label = format!("{} range ({})", how.words, how.unit);
    let y = match range_axis {
        RangeAxis::Log => {
            let (lo, hi) = decades(r_lo, r_hi);
            Axis::log(y_label, lo, hi).ticks(decade_tick)
        }
        RangeAxis::Linear => Axis::linear(y_label, 0.0, r_hi * 1.05),
    };
    let axes = Axes::new(
        Axis::log("cycles at or above the range, over the life", n_lo, n_hi).ticks(decade_tick),
        y,
    )
    .legend(SeriesLabelPosition::UpperRight);
    Frame::new(title)
        .footnote(
            "Rainflow ranges (ASTM E1049-85) of every run, scaled to the part's distance in the \
             life and summed (the total in black). Values from a model on generated or measured \
             roads: estimates, to be confirmed by measurement.",
        )
        .draw(axes, |chart, _| draw_exceedance(chart, &curves))
}

fn draw_exceedance(
    chart: &mut Chart<'_, '_>,
    curves: &[(&str, Vec<(f64, f64)>)],
) -> Result<(), ExportError> {
    let mut part = 0;
    for (name, points) in curves {
        let (c, width) = if *name == "total" {
            (BLACK, 3)
        } else {
            // Black is the total's: parts skip it in the palette.
            while colour(part) == BLACK {
                part += 1;
            }
            part += 1;
            (colour(part - 1), 2)
        };
        chart
            .draw_series(LineSeries::new(
                points.iter().copied(),
                c.stroke_width(width),
            ))
            .map_err(draw_err)?
            .label(name.to_string())
            .legend(legend_line(c));
    }
    Ok(())
}

/// Colour stops of the heat map, low to high (a perceptually ordered
/// sequence, dark blue through green to yellow).
const HEAT: [(u8, u8, u8); 5] = [
    (68, 1, 84),
    (59, 82, 139),
    (33, 145, 140),
    (94, 201, 98),
    (253, 231, 37),
];

/// The heat-map colour of `t` in 0..=1.
fn heat(t: f64) -> RGBColor {
    let t = t.clamp(0.0, 1.0) * (HEAT.len() - 1) as f64;
    let i = (t.floor() as usize).min(HEAT.len() - 2);
    let f = t - i as f64;
    let mix = |a: u8, b: u8| (a as f64 + f * (b as f64 - a as f64)).round() as u8;
    let (a, b) = (HEAT[i], HEAT[i + 1]);
    RGBColor(mix(a.0, b.0), mix(a.1, b.1), mix(a.2, b.2))
}

/// Width of the colour bar and its labels right of the plot, pixels.
const BAR_MARGIN_PX: u32 = 120;

/// The range–mean matrix: one rectangle per cell with cycles, its colour
/// by log10 of the life cycles (scale on the right).
pub fn range_mean_chart(
    cells: &[MatrixCell],
    quantity: &str,
    title: &str,
) -> Result<String, ExportError> {
    let how = shown(quantity);
    let used: Vec<&MatrixCell> = cells.iter().filter(|c| c.cycles > 0.0).collect();
    if used.is_empty() {
        return Err(no_data("no cycles to draw"));
    }
    let f = how.factor;
    let fold = |g: fn(&MatrixCell) -> (f64, f64)| {
        used.iter().fold((f64::MAX, f64::MIN), |(a, b), c| {
            (a.min(g(c).0), b.max(g(c).1))
        })
    };
    let (m_lo, m_hi) = fold(|c| c.mean);
    let (_, r_hi) = fold(|c| c.range);
    let (n_lo, n_hi) = used.iter().fold((f64::MAX, 0f64), |(a, b), c| {
        (a.min(c.cycles), b.max(c.cycles))
    });
    let (k_lo, k_hi) = decades(n_lo, n_hi);
    let scale = (k_lo.log10(), k_hi.log10());
    let axes = Axes::new(
        Axis::linear(
            format!("{} mean ({})", how.words, how.unit),
            m_lo * f,
            m_hi * f,
        ),
        Axis::linear(format!("{} range ({})", how.words, how.unit), 0.0, r_hi * f),
    )
    .coarse_grid()
    .margin_right(BAR_MARGIN_PX);
    Frame::new(title)
        .footnote(
            "Rainflow cycles (ASTM E1049-85) of every run, scaled to the life and summed; each \
             cell coloured by its number of cycles (log scale). Values from a model: estimates, \
             to be confirmed by measurement.",
        )
        .draw(axes, |chart, canvas| {
            draw_cells(chart, &used, f, scale)?;
            draw_colour_bar(chart, canvas, (m_hi * f, r_hi * f), scale)
        })
}

fn draw_cells(
    chart: &mut Chart<'_, '_>,
    cells: &[&MatrixCell],
    f: f64,
    (k_lo, k_hi): (f64, f64),
) -> Result<(), ExportError> {
    chart
        .draw_series(cells.iter().map(|c| {
            let t = (c.cycles.log10() - k_lo) / (k_hi - k_lo);
            Rectangle::new(
                [(c.mean.0 * f, c.range.0 * f), (c.mean.1 * f, c.range.1 * f)],
                heat(t).filled(),
            )
        }))
        .map_err(draw_err)?;
    Ok(())
}

/// The colour scale right of the plot: a bar from the lowest to the
/// highest decade of cycles, labelled at every decade.
fn draw_colour_bar(
    chart: &Chart<'_, '_>,
    canvas: &Canvas<'_>,
    (x_hi, y_hi): (f64, f64),
    (k_lo, k_hi): (f64, f64),
) -> Result<(), ExportError> {
    let (px, top) = chart.backend_coord(&(x_hi, y_hi));
    let (_, bottom) = chart.backend_coord(&(x_hi, 0.0));
    let (x0, x1) = (px + 16, px + 34);
    let steps = 64;
    for i in 0..steps {
        let y = |k: i32| bottom - (bottom - top) * k / steps;
        canvas
            .draw(&Rectangle::new(
                [(x0, y(i + 1)), (x1, y(i))],
                heat((i as f64 + 0.5) / steps as f64).filled(),
            ))
            .map_err(draw_err)?;
    }
    let label = TextStyle::from((FONT, 12).into_font())
        .color(&LABEL_DARK)
        .pos(Pos::new(HPos::Left, VPos::Center));
    let decades = (k_hi - k_lo).round() as i32;
    for d in 0..=decades {
        let y = bottom - ((bottom - top) as f64 * d as f64 / decades as f64).round() as i32;
        let text = decade_tick(10f64.powf(k_lo + d as f64));
        canvas
            .draw(&Text::new(text, (x1 + 6, y), label.clone()))
            .map_err(draw_err)?;
    }
    let caption = TextStyle::from((FONT, 12).into_font())
        .color(&LABEL_GREY)
        .pos(Pos::new(HPos::Left, VPos::Bottom));
    canvas
        .draw(&Text::new("cycles", (x0, top - 6), caption))
        .map_err(draw_err)?;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn heat_runs_from_the_first_stop_to_the_last() {
        assert_eq!(heat(0.0), RGBColor(68, 1, 84));
        assert_eq!(heat(1.0), RGBColor(253, 231, 37));
        assert_eq!(heat(0.5), RGBColor(33, 145, 140));
    }

    #[test]
    fn decades_round_out() {
        assert_eq!(decades(3.0, 4.5e6), (1.0, 1e7));
        assert_eq!(decades(100.0, 100.0), (100.0, 1000.0));
    }
}
