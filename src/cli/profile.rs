//! `roughride profile`: synthesise an ISO 8608 road (or a flat one), lay
//! obstacles on it and write the profile CSV of the documented interface
//! (`distance_m,elevation_m`) to stdout or, atomically, to `-o FILE`.

use std::path::{Path, PathBuf};

use super::options::quantity;
use clap::{ArgGroup, Args as ClapArgs};
use roughride::limits;
use roughride::report::{self, Table, sig};
use roughride::road::iso8608::{DEFAULT_N_MAX_CYCLE_M, DEFAULT_N_MIN_CYCLE_M};
use roughride::road::{self, Obstacle, Profile, RoadClass, RoadSpec};

/// Options of `roughride profile`.
#[derive(Debug, ClapArgs)]
#[command(group(ArgGroup::new("road").required(true).multiple(true).args(["class", "gd_n0", "flat"])))]
pub struct Args {
    /// ISO 8608 class A..H: Gd(n0) at the class's geometric mean.
    #[arg(long, value_parser = parse_class)]
    pub class: Option<RoadClass>,
    /// Gd(n0) at n0 = 0.1 cycle/m, m^3 (overrides the class mean), e.g. 256e-6.
    #[arg(long = "gd-n0", value_name = "M3", allow_hyphen_values = true,
          value_parser = quantity(&limits::GD_N0))]
    pub gd_n0: Option<f64>,
    /// A flat road (elevation 0) instead of a random one, for obstacles alone.
    #[arg(long, conflicts_with_all = ["class", "gd_n0", "random_amplitudes"])]
    pub flat: bool,
    /// Length to cover, m; the profile spans 0..=ceil(length/spacing)·spacing,
    /// i.e. length/spacing + 1 samples when length is a whole number of spacings.
    #[arg(long, value_name = "M", allow_hyphen_values = true, value_parser = quantity(&limits::ROAD_LENGTH))]
    pub length: f64,
    /// Sample spacing, m.
    #[arg(long, value_name = "M", default_value_t = 0.05, allow_hyphen_values = true,
          value_parser = quantity(&limits::SPACING))]
    pub spacing: f64,
    /// Seed of the random phases (the same seed and options give the same bytes).
    #[arg(long, default_value_t = 1, allow_hyphen_values = true)]
    pub seed: u64,
    /// Lower band edge, cycle/m: the PSD is zero below it.
    #[arg(long = "n-min", value_name = "CYCLE_M", default_value_t = DEFAULT_N_MIN_CYCLE_M,
          allow_hyphen_values = true, value_parser = quantity(&limits::WAVENUMBER))]
    pub n_min: f64,
    /// Upper band edge, cycle/m: the PSD is zero above it (at most 1/(2·spacing)).
    #[arg(long = "n-max", value_name = "CYCLE_M", default_value_t = DEFAULT_N_MAX_CYCLE_M,
          allow_hyphen_values = true, value_parser = quantity(&limits::WAVENUMBER))]
    pub n_max: f64,
    /// Waviness w of Gd(n) = Gd(n0)·(n/n0)^-w.
    #[arg(long, default_value_t = 2.0, allow_hyphen_values = true,
          value_parser = quantity(&limits::WAVINESS))]
    pub waviness: f64,
    /// Rayleigh-distributed amplitudes instead of deterministic ones.
    #[arg(long = "random-amplitudes")]
    pub random_amplitudes: bool,
    /// Obstacle to lay on the road (repeatable): bump:START,LENGTH,HEIGHT,
    /// pothole:START,LENGTH,DEPTH[,RAMP] or step:START,HEIGHT, metres.
    #[arg(long, value_name = "SPEC", allow_hyphen_values = true, value_parser = parse_obstacle)]
    pub obstacle: Vec<Obstacle>,
    /// Write the CSV to FILE (atomically) instead of stdout.
    #[arg(short = 'o', long = "output", value_name = "FILE")]
    pub output: Option<PathBuf>,
}

fn parse_class(s: &str) -> Result<RoadClass, String> {
    s.parse::<RoadClass>().map_err(|e| e.to_string())
}

fn parse_obstacle(s: &str) -> Result<Obstacle, String> {
    s.parse::<Obstacle>()
}

/// Builds the road, lays the obstacles and writes the CSV.
pub fn run(args: Args) -> Result<(), roughride::Error> {
    report::FilePlan::new()
        .output("-o", args.output.as_deref())
        .check()?;
    let spec = (!args.flat).then(|| {
        let class = args.class.unwrap_or(RoadClass::C);
        let mut spec = RoadSpec::from_class(class, args.length, args.spacing, args.seed);
        if let Some(g) = args.gd_n0 {
            spec.gd_n0_m3 = g;
        }
        spec.waviness = args.waviness;
        spec.n_min_cycle_m = args.n_min;
        spec.n_max_cycle_m = args.n_max;
        spec.random_amplitudes = args.random_amplitudes;
        spec
    });
    if let Some(s) = &spec {
        // Cells below half the first frequency step 1/length cannot be carried.
        if s.length_m < 0.5 / s.n_min_cycle_m {
            eprintln!(
                "roughride: warning: a {} m road cannot hold wavelengths longer than {} m; \
                 the band below {:.4} cycle/m is left out, so the r.m.s. is below the band's",
                s.length_m,
                2.0 * s.length_m,
                0.5 / s.length_m
            );
        }
    }
    let mut profile = match &spec {
        Some(s) => road::generate(s)?,
        None => road::flat(args.length, args.spacing)?,
    };
    road::check_obstacles(&profile, &args.obstacle)?;
    road::lay(&mut profile, &args.obstacle);

    let path = args.output.as_deref().filter(|p| *p != Path::new("-"));
    let shown = path.unwrap_or(Path::new("<stdout>"));
    // A reader that stops early (`| head`) ends the process quietly through
    // SIGPIPE (see main.rs), like any other command's output.
    report::write_to(path, |w| {
        road::write_profile_csv(&profile, w).map_err(|e| report::io_error(shown, e))
    })
    .map_err(roughride::Error::from)?;
    if let Some(p) = path {
        report::print_stdout(&summary(&profile, spec.as_ref(), &args.obstacle, p).render())?;
    }
    Ok(())
}

/// What was written, for the human reading the terminal.
fn summary(
    profile: &Profile,
    spec: Option<&RoadSpec>,
    obstacles: &[Obstacle],
    path: &Path,
) -> Table {
    let mut t = Table::new(format!("Road profile written to {}", path.display()))
        .with_header(["quantity", "value", "unit"]);
    t.row([
        "samples".to_string(),
        profile.len().to_string(),
        String::new(),
    ]);
    t.row(["length".into(), sig(profile.length_m(), 6), "m".into()]);
    t.row(["spacing".into(), sig(profile.spacing_m, 4), "m".into()]);
    if let Some(s) = spec {
        let class = RoadClass::from_gd_n0(s.gd_n0_m3);
        t.row([
            "Gd(n0), n0 = 0.1 cycle/m".into(),
            format!("{:.4e}", s.gd_n0_m3),
            "m^3".into(),
        ]);
        t.row([
            "ISO 8608 class of Gd(n0)".into(),
            class.to_string(),
            String::new(),
        ]);
        t.row(["waviness".into(), sig(s.waviness, 3), String::new()]);
        t.row([
            "band".into(),
            format!("{} – {}", sig(s.n_min_cycle_m, 3), sig(s.n_max_cycle_m, 3)),
            "cycle/m".into(),
        ]);
        t.row(["seed".into(), s.seed.to_string(), String::new()]);
        t.row([
            "target r.m.s. of the band".into(),
            sig(s.band_rms_m() * 1000.0, 4),
            "mm".into(),
        ]);
    } else {
        t.row(["road".to_string(), "flat".to_string(), String::new()]);
    }
    t.row([
        "r.m.s. elevation".into(),
        sig(profile.rms_m() * 1000.0, 4),
        "mm".into(),
    ]);
    for o in obstacles {
        t.row(["obstacle".to_string(), o.to_string(), "m".to_string()]);
    }
    t
}
