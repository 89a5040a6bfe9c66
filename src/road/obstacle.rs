//! Discrete obstacles laid on a road profile: half-sine bumps, potholes and
//! steps, and a flat road to lay them on.
//!
//! Obstacles add to the elevation already there (superposition), evaluated
//! at the profile's samples; between samples the road stays linear, so an
//! edge is resolved only to one spacing. The wheel follows the profile point
//! by point: no tyre enveloping is modelled (common practice in quarter-car
//! and bounce–pitch ride models), so sharp edges give harsher inputs than a
//! real tyre would feel.
//!
//! Shapes (distance `x` from the obstacle's start `s`):
//! - half-sine bump: `h·sin(π(x − s)/ℓ)` for `s ≤ x ≤ s + ℓ`;
//! - pothole: a flat-bottomed trapezoid of depth `d`: linear ramps of length
//!   `r` down at the entry and up at the exit, flat bottom between (total
//!   length `ℓ`, `r ≤ ℓ/2`; default `r = ℓ/4`);
//! - step: `+h` for every `x ≥ s` (a kerb or a joint; negative `h` steps down).
//!
//! Command-line form (`--obstacle`): `bump:START,LENGTH,HEIGHT`,
//! `pothole:START,LENGTH,DEPTH[,RAMP]`, `step:START,HEIGHT`, all in metres.

use crate::limits::show;
use std::fmt;
use std::str::FromStr;

use super::{Profile, ProfileError};

/// A discrete obstacle; all distances and heights in metres.
#[derive(Debug, Clone, PartialEq)]
pub enum Obstacle {
    /// Half-sine bump (positive `height_m` up, negative a dip).
    HalfSine {
        /// Distance where the bump starts, m.
        start_m: f64,
        /// Length along the road, m.
        length_m: f64,
        /// Peak height, m.
        height_m: f64,
    },
    /// Flat-bottomed pothole with linear entry and exit ramps.
    Pothole {
        /// Distance where the entry ramp starts, m.
        start_m: f64,
        /// Total length including both ramps, m.
        length_m: f64,
        /// Depth below the surrounding road (positive), m.
        depth_m: f64,
        /// Length of each ramp, m (`0 < ramp ≤ length/2`).
        ramp_m: f64,
    },
    /// A step of `height_m` at `start_m`, held to the end of the road.
    Step {
        /// Distance of the step, m.
        start_m: f64,
        /// Change in elevation, m (negative: step down).
        height_m: f64,
    },
}

impl Obstacle {
    /// Elevation added at distance `x_m`, m.
    pub fn elevation_m(&self, x_m: f64) -> f64 {
        match *self {
            Obstacle::HalfSine {
                start_m,
                length_m,
                height_m,
            } => {
                let u = (x_m - start_m) / length_m;
                if (0.0..=1.0).contains(&u) {
                    height_m * (std::f64::consts::PI * u).sin()
                } else {
                    0.0
                }
            }
            Obstacle::Pothole {
                start_m,
                length_m,
                depth_m,
                ramp_m,
            } => {
                let u = x_m - start_m;
                if !(0.0..=length_m).contains(&u) {
                    return 0.0;
                }
                let fraction = (u.min(length_m - u) / ramp_m).min(1.0);
                -depth_m * fraction
            }
            Obstacle::Step { start_m, height_m } => {
                if x_m >= start_m {
                    height_m
                } else {
                    0.0
                }
            }
        }
    }

    /// Start distance, m.
    pub fn start_m(&self) -> f64 {
        match *self {
            Obstacle::HalfSine { start_m, .. }
            | Obstacle::Pothole { start_m, .. }
            | Obstacle::Step { start_m, .. } => start_m,
        }
    }

    /// Length along the road, m (zero for a step).
    pub fn length_m(&self) -> f64 {
        match *self {
            Obstacle::HalfSine { length_m, .. } | Obstacle::Pothole { length_m, .. } => length_m,
            Obstacle::Step { .. } => 0.0,
        }
    }

    /// Checks the shape's own numbers (finite, positive lengths, ramp fits).
    pub fn validate(&self) -> Result<(), String> {
        let finite = |name: &str, v: f64| {
            if v.is_finite() {
                Ok(())
            } else {
                Err(format!(
                    "{name} must be a finite number, got {}",
                    crate::limits::show(v)
                ))
            }
        };
        let positive = |name: &str, v: f64| {
            if v.is_finite() && v > 0.0 {
                Ok(())
            } else {
                Err(format!(
                    "{name} must be positive, got {}",
                    crate::limits::show(v)
                ))
            }
        };
        let height = |name: &str, v: f64| {
            crate::limits::OBSTACLE_HEIGHT
                .check(v)
                .map(|_| ())
                .map_err(|m| format!("{name} {m}"))
        };
        match *self {
            Obstacle::HalfSine {
                start_m,
                length_m,
                height_m,
            } => {
                finite("start", start_m)?;
                positive("length", length_m)?;
                height("height", height_m)
            }
            Obstacle::Pothole {
                start_m,
                length_m,
                depth_m,
                ramp_m,
            } => {
                finite("start", start_m)?;
                positive("length", length_m)?;
                positive("depth", depth_m)?;
                height("depth", depth_m)?;
                positive("ramp", ramp_m)?;
                if ramp_m > 0.5 * length_m {
                    return Err(format!(
                        "ramp ({ramp_m} m) must be at most half the length ({length_m} m)"
                    ));
                }
                Ok(())
            }
            Obstacle::Step { start_m, height_m } => {
                finite("start", start_m)?;
                height("height", height_m)
            }
        }
    }
}

impl fmt::Display for Obstacle {
    /// The command-line form, which [`FromStr`] reads back.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Obstacle::HalfSine {
                start_m,
                length_m,
                height_m,
            } => write!(
                f,
                "bump:{},{},{}",
                show(*start_m),
                show(*length_m),
                show(*height_m)
            ),
            Obstacle::Pothole {
                start_m,
                length_m,
                depth_m,
                ramp_m,
            } => write!(
                f,
                "pothole:{},{},{},{}",
                show(*start_m),
                show(*length_m),
                show(*depth_m),
                show(*ramp_m)
            ),
            Obstacle::Step { start_m, height_m } => {
                write!(f, "step:{},{}", show(*start_m), show(*height_m))
            }
        }
    }
}

impl FromStr for Obstacle {
    type Err = String;

    /// Parses `bump:START,LENGTH,HEIGHT`, `pothole:START,LENGTH,DEPTH[,RAMP]`
    /// or `step:START,HEIGHT` (metres). The message quotes the value.
    fn from_str(spec: &str) -> Result<Self, Self::Err> {
        let usage = "expected bump:START,LENGTH,HEIGHT, pothole:START,LENGTH,DEPTH[,RAMP] or step:START,HEIGHT (metres)";
        let (kind, rest) = spec
            .split_once(':')
            .ok_or_else(|| format!("{spec:?}: {usage}"))?;
        let mut values = Vec::new();
        for field in rest.split(',') {
            let v: f64 = field
                .trim()
                .parse()
                .map_err(|_| format!("{spec:?}: {:?} is not a number; {usage}", field.trim()))?;
            values.push(v);
        }
        let obstacle = match (kind.trim().to_ascii_lowercase().as_str(), values.as_slice()) {
            ("bump", &[start_m, length_m, height_m]) => Obstacle::HalfSine {
                start_m,
                length_m,
                height_m,
            },
            ("pothole", &[start_m, length_m, depth_m]) => Obstacle::Pothole {
                start_m,
                length_m,
                depth_m,
                ramp_m: 0.25 * length_m,
            },
            ("pothole", &[start_m, length_m, depth_m, ramp_m]) => Obstacle::Pothole {
                start_m,
                length_m,
                depth_m,
                ramp_m,
            },
            ("step", &[start_m, height_m]) => Obstacle::Step { start_m, height_m },
            ("bump" | "pothole" | "step", _) => {
                return Err(format!(
                    "{spec:?}: wrong number of values for {kind}; {usage}"
                ));
            }
            _ => return Err(format!("{spec:?}: unknown obstacle kind {kind:?}; {usage}")),
        };
        obstacle.validate().map_err(|m| format!("{spec:?}: {m}"))?;
        Ok(obstacle)
    }
}

/// A flat road (all elevations zero) from 0 to at least `length_m`, with
/// `ceil(length/spacing) + 1` samples, for obstacles on their own.
pub fn flat(length_m: f64, spacing_m: f64) -> Result<Profile, ProfileError> {
    use crate::limits::{ROAD_LENGTH, SPACING};
    SPACING
        .check(spacing_m)
        .map_err(|m| ProfileError::Parameter(format!("spacing (m) {m}")))?;
    ROAD_LENGTH
        .check(length_m)
        .map_err(|m| ProfileError::Parameter(format!("length (m) {m}")))?;
    if length_m <= spacing_m {
        return Err(ProfileError::Parameter(format!(
            "length ({length_m} m) must be a finite number exceeding spacing ({spacing_m} m)"
        )));
    }
    let r = length_m / spacing_m;
    if r > (super::iso8608::MAX_SAMPLES - 1) as f64 {
        return Err(ProfileError::Parameter(format!(
            "length / spacing = {r:.0} samples exceeds the limit of {}",
            super::iso8608::MAX_SAMPLES
        )));
    }
    let nearest = r.round();
    let intervals = if (r - nearest).abs() <= 1e-9 * nearest.max(1.0) {
        nearest
    } else {
        r.ceil()
    } as usize;
    Ok(Profile::new(0.0, spacing_m, vec![0.0; intervals + 1]))
}

/// Checks that each obstacle lies on the profile and is resolved by its
/// spacing (a bump or pothole must span at least two spacings); the message
/// names the obstacle.
pub fn check_obstacles(profile: &Profile, obstacles: &[Obstacle]) -> Result<(), ProfileError> {
    for o in obstacles {
        o.validate()
            .map_err(|m| ProfileError::Parameter(format!("obstacle {o}: {m}")))?;
        let (a, b) = (o.start_m(), o.start_m() + o.length_m());
        if a < profile.start_m || b > profile.end_m() {
            return Err(ProfileError::Parameter(format!(
                "obstacle {o} spans {}–{} m, outside the road ({}–{} m)",
                show(a),
                show(b),
                show(profile.start_m),
                show(profile.end_m())
            )));
        }
        if !matches!(o, Obstacle::Step { .. }) && o.length_m() < 2.0 * profile.spacing_m {
            return Err(ProfileError::Parameter(format!(
                "obstacle {o} is {} m long, shorter than two profile spacings ({} m); use a finer spacing",
                o.length_m(),
                profile.spacing_m
            )));
        }
    }
    Ok(())
}

/// Adds every obstacle to the profile's elevations. Parts outside the
/// profile are ignored; call [`check_obstacles`] first to refuse them.
pub fn lay(profile: &mut Profile, obstacles: &[Obstacle]) {
    let (start, dx) = (profile.start_m, profile.spacing_m);
    let n = profile.len();
    for o in obstacles {
        // Only the samples the obstacle touches (a step: to the end).
        let first = (((o.start_m() - start) / dx).floor().max(0.0) as usize).min(n);
        let last = match o {
            Obstacle::Step { .. } => n,
            _ => {
                ((((o.start_m() + o.length_m() - start) / dx).ceil().max(0.0)) as usize + 1).min(n)
            }
        };
        for i in first..last {
            profile.elevation_m[i] += o.elevation_m(start + i as f64 * dx);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parses_each_kind_and_reads_back_its_display() {
        let b: Obstacle = "bump:100,0.5,0.05".parse().unwrap();
        assert_eq!(
            b,
            Obstacle::HalfSine {
                start_m: 100.0,
                length_m: 0.5,
                height_m: 0.05
            }
        );
        let p: Obstacle = "pothole:20,0.8,0.04".parse().unwrap();
        assert_eq!(
            p,
            Obstacle::Pothole {
                start_m: 20.0,
                length_m: 0.8,
                depth_m: 0.04,
                ramp_m: 0.2
            }
        );
        let s: Obstacle = "STEP: 5, -0.02".parse().unwrap();
        for o in [b, p, s] {
            assert_eq!(o.to_string().parse::<Obstacle>().unwrap(), o);
        }
    }

    #[test]
    fn parse_errors_quote_the_value() {
        for (spec, word) in [
            ("bump:1,2", "wrong number"),
            ("hump:1,2,3", "unknown obstacle kind"),
            ("bump:1,x,3", "\"x\" is not a number"),
            ("bump", "expected bump"),
            ("bump:1,-2,3", "length must be positive"),
            ("pothole:1,1,0.1,0.6", "at most half"),
        ] {
            let e = spec.parse::<Obstacle>().unwrap_err();
            assert!(e.contains(word) && e.contains(spec), "{spec}: {e}");
        }
    }

    #[test]
    fn shapes_have_their_heights_where_they_should() {
        let mut p = flat(10.0, 0.05).unwrap();
        assert_eq!(p.len(), 201);
        let obs = [
            "bump:1,1,0.1".parse().unwrap(),
            "pothole:4,1,0.05".parse().unwrap(),
            "step:8,0.02".parse().unwrap(),
        ];
        check_obstacles(&p, &obs).unwrap();
        lay(&mut p, &obs);
        let z = |x: f64| p.elevation_at(x);
        assert!((z(1.5) - 0.1).abs() < 1e-12);
        assert!((z(1.25) - 0.1 * (std::f64::consts::PI / 4.0).sin()).abs() < 1e-12);
        assert_eq!(z(0.95), 0.0);
        assert!(z(2.05).abs() < 1e-15); // sin(π) is 1.2e-16, not 0
        assert!((z(4.5) + 0.05).abs() < 1e-12);
        assert!((z(4.1) + 0.02).abs() < 1e-12); // ramp 0.25 m: 0.1/0.25 of the depth
        assert_eq!(z(3.95), 0.0);
        assert_eq!(z(7.95), 0.0);
        assert_eq!(z(8.0), 0.02);
        assert_eq!(z(10.0), 0.02);
    }

    #[test]
    fn obstacles_add_to_an_existing_road() {
        let mut p = Profile::new(0.0, 0.1, (0..101).map(|i| i as f64 * 0.001).collect());
        let before = p.clone();
        lay(&mut p, &["bump:2,1,0.05".parse().unwrap()]);
        assert!((p.elevation_at(2.5) - before.elevation_at(2.5) - 0.05).abs() < 1e-12);
        assert_eq!(p.elevation_at(5.0), before.elevation_at(5.0));
    }

    #[test]
    fn check_refuses_obstacles_off_the_road_or_unresolved() {
        let p = flat(10.0, 0.1).unwrap();
        let off: Obstacle = "bump:9.8,0.5,0.05".parse().unwrap();
        assert!(
            check_obstacles(&p, &[off])
                .unwrap_err()
                .to_string()
                .contains("outside")
        );
        let tiny: Obstacle = "bump:2,0.15,0.05".parse().unwrap();
        assert!(
            check_obstacles(&p, &[tiny])
                .unwrap_err()
                .to_string()
                .contains("two profile spacings")
        );
        assert!(flat(0.01, 0.05).is_err());
        assert!(flat(10.0, 0.0).is_err());
    }
}
