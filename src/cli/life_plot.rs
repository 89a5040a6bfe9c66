//! `roughride plot exceedance` and `plot range-mean`: pictures of the life
//! spectra that `roughride lifetime --exceedance / --matrix` writes.

use std::path::PathBuf;

use clap::Args as ClapArgs;

use super::plot::Out;
use roughride::Error;
use roughride::lifetime::tables::{QUANTITIES, read_exceedance, read_matrix};
use roughride::report::life_plot::{RangeAxis, exceedance_chart, quantity_words, range_mean_chart};

/// Which axle and quantity of a life spectra file to draw.
#[derive(Debug, ClapArgs)]
pub struct Selection {
    /// Axle: front or rear.
    #[arg(long, default_value = "rear", value_parser = ["front", "rear"])]
    pub axle: String,
    /// Quantity: travel, force (suspension force) or tyre-load.
    #[arg(long, default_value = "force", value_parser = parse_quantity)]
    pub quantity: String,
}

fn parse_quantity(s: &str) -> Result<String, String> {
    let q = match s {
        "travel" | "travel_m" => QUANTITIES[0],
        "force" | "suspension_force_n" => QUANTITIES[1],
        "tyre-load" | "tyre_load" | "tyre_load_n" => QUANTITIES[2],
        _ => return Err(format!("`{s}`: expected travel, force or tyre-load")),
    };
    Ok(q.to_string())
}

fn parse_range_axis(s: &str) -> Result<RangeAxis, String> {
    match s {
        "log" => Ok(RangeAxis::Log),
        "linear" => Ok(RangeAxis::Linear),
        _ => Err(format!("`{s}`: expected log or linear")),
    }
}

#[derive(Debug, ClapArgs)]
#[command(after_help = "Example:\n  \
roughride lifetime --usage life.toml --exceedance exc.csv\n  \
roughride plot exceedance exc.csv --axle rear --quantity force -o exc.svg")]
pub struct ExceedanceArgs {
    /// Exceedance spectra CSV from `roughride lifetime --exceedance`.
    pub file: PathBuf,
    #[command(flatten)]
    pub select: Selection,
    /// Range axis: log (ranges of zero left out) or linear.
    #[arg(long, default_value = "log", value_parser = parse_range_axis)]
    pub range_axis: RangeAxis,
    #[command(flatten)]
    pub out: Out,
}

#[derive(Debug, ClapArgs)]
#[command(after_help = "Example:\n  \
roughride lifetime --usage life.toml --matrix matrix.csv\n  \
roughride plot range-mean matrix.csv --axle rear --quantity force -o rm.svg")]
pub struct RangeMeanArgs {
    /// Range–mean matrix CSV from `roughride lifetime --matrix`.
    pub file: PathBuf,
    #[command(flatten)]
    pub select: Selection,
    #[command(flatten)]
    pub out: Out,
}

/// The exceedance picture's SVG and its output options.
pub fn exceedance(a: ExceedanceArgs) -> Result<(String, Out), Error> {
    let s = &a.select;
    let series = read_exceedance(&a.file, &s.axle, &s.quantity)?;
    let title = a.out.title.clone().unwrap_or_else(|| {
        format!(
            "Life exceedance spectrum, {} axle {}",
            s.axle,
            quantity_words(&s.quantity)
        )
    });
    Ok((
        exceedance_chart(&series, &s.quantity, a.range_axis, &title)?,
        a.out,
    ))
}

/// The range–mean picture's SVG and its output options.
pub fn range_mean(a: RangeMeanArgs) -> Result<(String, Out), Error> {
    let s = &a.select;
    let cells = read_matrix(&a.file, &s.axle, &s.quantity)?;
    let title = a.out.title.clone().unwrap_or_else(|| {
        format!(
            "Life range–mean matrix, {} axle {}",
            s.axle,
            quantity_words(&s.quantity)
        )
    });
    Ok((range_mean_chart(&cells, &s.quantity, &title)?, a.out))
}
