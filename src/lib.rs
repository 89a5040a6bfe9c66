//! roughride: vehicle ride and durability estimates before a prototype exists.
//!
//! The library holds every computation; the `roughride` binary only parses
//! arguments, calls into these modules and prints. One module per stage:
//!
//! | module | owns |
//! |---|---|
//! | [`road`] | road profiles: ISO 8608 synthesis, measured CSV, obstacles, roughness (PSD class, IRI) |
//! | [`vehicle`] | the vehicle file, the bounce–pitch model and its matrices `M`, `C`, `K`, modal analysis |
//! | [`solve`] | the time-domain runs: adaptive Dopri5 and the exact discrete path |
//! | [`comfort`] | ISO 2631-1 frequency weightings, aw, MTVV, VDV, crest factor, guidance |
//! | [`stats`] | durability statistics: distributions, histograms, level crossings, rainflow |
//! | [`pipeline`] | one simulation run end to end: road → solver → evaluators → summary |
//! | [`plausibility`] | checks that a finished run could be right: finite numbers, energy balance, spectral prediction |
//! | [`batch`] | sweeps of speed × road class × seed, sharding, parallel execution |
//! | [`design`] | design studies: vehicle-file variants (`--vary`), trade-offs and the Pareto set, tuning |
//! | [`lifetime`] | lifetime load spectra: a usage file of road, speed and load parts, counts scaled to the life |
//! | [`report`] | tables, JSON, CSV and SVG output; atomic file writes |
//! | [`limits`] | the plausible range of every physical input |
//!
//! # Conventions
//! - SI units inside (m, s, kg, N, rad); names carry units where they are
//!   not obvious (`speed_m_s`, `gd_n0_m3`). Conversions (km/h, hours) happen
//!   only at the command-line edge.
//! - Heave `z` positive up, pitch `θ` positive nose-up, so a point at `x`
//!   (positive ahead of the centre of gravity) moves by `z + x·θ`.
//! - Suspension travel is positive in compression (wheel moving towards the
//!   body); tyre and suspension forces are positive in compression.
//! - Every state is a deviation from static equilibrium on the first road
//!   sample; accelerations are dynamic (gravity excluded).

pub mod batch;
pub mod comfort;
pub mod design;
pub mod error;
mod lanes;
pub mod lifetime;
pub mod limits;
pub mod pipeline;
pub mod plausibility;
pub mod report;
pub mod road;
pub mod solve;
pub mod stats;
pub mod vehicle;

pub use error::Error;
