//! Design studies: many variants of one vehicle instead of one vehicle file
//! at a time.
//!
//! - [`vary`]: vehicle-file keys (`front.damping`, `seat.driver.x`) and
//!   their values (absolute or relative to the file), applied by editing the
//!   parsed TOML document and running the vehicle file's own validation, so
//!   a variant is exactly the vehicle a hand-edited file would give.
//!   `roughride sweep --vary` turns them into a grid of variants.
//! - [`tradeoff`]: from sweep rows, one point per variant (averaged over
//!   seeds, roads and speeds as chosen) on the ride / road-holding / travel
//!   planes, and the variants no other beats on both axes (the Pareto set).
//! - [`tune`]: a bounded, derivative-free search for the parameter values
//!   that minimise a seat's comfort measure under travel, tyre-load and
//!   lift-off limits (`roughride tune`).

pub mod tradeoff;
pub mod tune;
pub mod vary;
