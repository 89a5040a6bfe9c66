//! Modal analysis of the linear bounce–pitch model: undamped natural
//! frequencies and mode shapes, damped eigenvalues, mode labels and body
//! nodes, per-axle ride frequencies and the classic flat-ride indicators.
//!
//! # Undamped modes
//! `K φ = ω² M φ` is solved in the symmetric form `S = M^-½ K M^-½`
//! (`M` is diagonal in the CG coordinates), `S ψ = ω² ψ`, `φ = M^-½ ψ`
//! (e.g. Thomson, *Theory of Vibration with Applications*, ch. 6). Each shape
//! is scaled so that its dominant coordinate (the largest share of modal
//! kinetic energy `m_j φ_j²`) equals +1; the energy shares are reported
//! beside it because they do not depend on units (m against rad).
//!
//! # Damped modes
//! The eigenvalues `λ` of the state matrix `A` (`ẋ = A x`, see
//! [`Vehicle::state_space`]) come from a real Schur decomposition
//! (nalgebra, with an iteration cap; the 1×1 and 2×2 diagonal blocks are
//! read here, so a 2×2 block holding two real roots gives them instead of
//! NaN). Should the decomposition not converge, the roots of
//! `det(λ²M + λC + K)` are found by the Weierstrass (Durand–Kerner)
//! iteration instead. For a conjugate pair the damped frequency is
//! `|Im λ|/2π` and the damping ratio `−Re λ/|λ|` (the documented keys,
//! `profiles/reference.md`).
//!
//! Damped eigenvalues are matched to undamped modes by mode shape: for each
//! `λ` the eigenvector of `(λ²M + λC + K) φ = 0` is found by inverse
//! iteration, and the assignment that maximises the sum of the mass-weighted
//! modal assurance criterion `|φ_uᵀ M φ_d|² / ((φ_uᵀ M φ_u)(φ_dᴴ M φ_d))`
//! over all modes is chosen (exhaustive search; at most six modes).
//!
//! An overdamped mode has two real roots `λ₁, λ₂ < 0` instead of a pair.
//! It is matched with the pair of real roots that fits its shape best and
//! reported with damped frequency 0 and damping ratio
//! `ζ = −(λ₁ + λ₂) / (2√(λ₁λ₂))` (> 1), the single-degree-of-freedom
//! definition from `λ₁λ₂ = ω²`, `λ₁ + λ₂ = −2ζω`, which equals `−Re λ/|λ|`
//! for a conjugate pair. The real roots are listed in `real_roots`.
//!
//! # Labels and nodes
//! Modes are labelled bounce, pitch, front wheel hop, rear wheel hop and
//! seat 1/2 bounce (a suspended seat's mass; the JSON names the seat) by
//! dominant kinetic energy: the largest entry of the mode × coordinate
//! energy-share table is assigned first, its row and column removed, and so
//! on, so each label is used once. A body mode's node is the body point that
//! does not move vertically, `z + x·θ = 0`, i.e. `x = −z/θ` (m from the CG,
//! positive ahead); a pure heave mode has none. Bounce usually has its node
//! outside the wheelbase and pitch inside it (Gillespie, *Fundamentals of
//! Vehicle Dynamics*, SAE 1992, ch. 5).
//!
//! # Ride frequencies and flat-ride guidance
//! Each axle alone carries its share of the sprung mass (`m·b/L` front,
//! `m·a/L` rear, by moment balance) on the series rate of spring and tyre,
//! `k·k_t/(k + k_t)` (just `k` without a tyre). The dynamic index
//! `J/(m·a·b)` is 1 when the axles' motions are uncoupled (each axle is the
//! other's centre of percussion; Gillespie 1992, ch. 5). The flat-ride
//! guidance attributed to M. Olley (as presented by Gillespie 1992, ch. 5:
//! front ride frequency below the rear, commonly about 80 % of it, from
//! memory; pitch and bounce close) is reported as
//! guidance, not as a verdict.

use nalgebra::{Complex, DMatrix, DVector, Schur, SymmetricEigen};
use serde::Serialize;

use super::Vehicle;

type C64 = Complex<f64>;

/// Iteration cap of the Schur and symmetric eigen decompositions (far above
/// what an 8×8 matrix needs; stops a pathological input from looping).
const MAX_EIGEN_ITERATIONS: usize = 10_000;

/// Pitch-to-bounce frequency ratio under which the two are called close in
/// the guidance (common practice).
pub const CLOSE_PITCH_BOUNCE_RATIO: f64 = 1.2;

/// Front/rear ride frequency ratio often quoted for a flat ride: M. Olley's
/// rule as presented by Gillespie (1992, ch. 5) asks for a front ride rate
/// about 30 % below the rear; the 80 % frequency ratio is from memory.
pub const FLAT_RIDE_FRONT_TO_REAR: f64 = 0.8;

/// The complete modal description of a vehicle.
#[derive(Debug, Clone, Serialize)]
pub struct ModalAnalysis {
    /// The vehicle's name.
    pub vehicle: String,
    /// Coordinates of the model in order (`heave`, `pitch`, wheels).
    pub dofs: Vec<&'static str>,
    /// Modes, ascending by undamped frequency.
    pub modes: Vec<Mode>,
    /// Each axle alone: front and rear.
    pub ride_frequencies: RideFrequencies,
    /// Undamped pitch frequency over undamped bounce frequency.
    pub pitch_to_bounce_ratio: f64,
    /// `J/(m·a·b)`.
    pub dynamic_index: f64,
    /// Wheelbase, m.
    pub wheelbase_m: f64,
    /// Flat-ride and coupling guidance (statements, not verdicts).
    pub guidance: Vec<String>,
    /// How damped roots were matched to modes.
    pub matching: &'static str,
}

/// One mode.
#[derive(Debug, Clone, Serialize)]
pub struct Mode {
    /// `bounce`, `pitch`, `front wheel hop`, `rear wheel hop`, or
    /// `seat 1 bounce`/`seat 2 bounce` for a suspended seat's mode
    /// (coordinate `suspended_seat_1`/`_2`).
    pub kind: &'static str,
    /// The name of the suspended seat a seat mode belongs to.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub seat: Option<String>,
    /// From `K φ = ω² M φ`, Hz.
    pub undamped_frequency_hz: f64,
    /// `|Im λ|/2π` of the matched damped root, Hz (0 when overdamped).
    pub damped_frequency_hz: f64,
    /// `−Re λ/|λ|`; for an overdamped mode `−(λ₁+λ₂)/(2√(λ₁λ₂))`.
    pub damping_ratio: f64,
    /// The matched root with `Im λ ≥ 0`, rad/s (the first real root when overdamped).
    pub eigenvalue: EigenvalueJson,
    /// The two real roots of an overdamped mode, rad/s.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub real_roots: Option<[f64; 2]>,
    /// True when the mode has two real roots instead of a conjugate pair.
    pub overdamped: bool,
    /// Mass-weighted modal assurance criterion between this undamped shape
    /// and the matched damped eigenvector (1 = identical).
    pub shape_correlation: f64,
    /// Undamped mode shape, dominant coordinate = +1.
    pub shape: Vec<ShapeComponent>,
    /// The body point that does not move (body modes only).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub node: Option<Node>,
}

/// A complex number for JSON.
#[derive(Debug, Clone, Copy, Serialize)]
pub struct EigenvalueJson {
    /// Real part.
    pub re: f64,
    /// Imaginary part.
    pub im: f64,
}

/// One coordinate of a mode shape.
#[derive(Debug, Clone, Serialize)]
pub struct ShapeComponent {
    /// Coordinate name (`heave`, `pitch`, `front_wheel`, `rear_wheel`).
    pub dof: &'static str,
    /// Unit of the coordinate (`m` or `rad`).
    pub unit: &'static str,
    /// Shape value (dominant coordinate = 1).
    pub value: f64,
    /// Share of the mode's kinetic energy in this coordinate, 0–1.
    pub energy_fraction: f64,
}

/// Where a body mode's node lies.
#[derive(Debug, Clone, Serialize)]
pub struct Node {
    /// `x = −z/θ`, m from the CG, positive ahead.
    pub x_m: f64,
    /// True when the node lies ahead of the front axle or behind the rear.
    pub outside_wheelbase: bool,
    /// Plain words: e.g. "0.42 m behind the CG, inside the wheelbase".
    pub description: String,
}

/// Ride frequency of each axle alone.
#[derive(Debug, Clone, Serialize)]
pub struct RideFrequencies {
    /// Front axle, Hz.
    pub front_hz: f64,
    /// Rear axle, Hz.
    pub rear_hz: f64,
    /// Front over rear.
    pub front_to_rear: f64,
    /// Sprung mass share of each axle, kg (front, rear).
    pub sprung_mass_kg: [f64; 2],
    /// Ride rate of each axle, N/m (spring in series with the tyre).
    pub ride_rate_n_m: [f64; 2],
}

/// Undamped modes: `(ω² ascending, shapes as columns of φ)`.
pub fn undamped(v: &Vehicle) -> (Vec<f64>, DMatrix<f64>) {
    let mats = v.matrices();
    let n = mats.m.nrows();
    let inv_sqrt: Vec<f64> = (0..n).map(|j| 1.0 / mats.m[(j, j)].sqrt()).collect();
    let s = DMatrix::from_fn(n, n, |r, c| mats.k[(r, c)] * inv_sqrt[r] * inv_sqrt[c]);
    // Symmetrise against rounding before the symmetric solver.
    let s = (&s + s.transpose()) * 0.5;
    let eig = SymmetricEigen::try_new(s.clone(), f64::EPSILON, MAX_EIGEN_ITERATIONS)
        .unwrap_or_else(|| SymmetricEigen::new(s));
    let mut order: Vec<usize> = (0..n).collect();
    order.sort_by(|&a, &b| eig.eigenvalues[a].total_cmp(&eig.eigenvalues[b]));
    let mut phi = DMatrix::zeros(n, n);
    let mut w2 = Vec::with_capacity(n);
    for (col, &i) in order.iter().enumerate() {
        w2.push(eig.eigenvalues[i]);
        for r in 0..n {
            phi[(r, col)] = eig.eigenvectors[(r, i)] * inv_sqrt[r];
        }
    }
    (w2, phi)
}

/// The eigenvalues of the damped state matrix `A`, 2·ndof of them.
pub fn damped_eigenvalues(v: &Vehicle) -> Vec<C64> {
    let ss = v.state_space(0.0);
    schur_eigenvalues(&ss.a).unwrap_or_else(|| weierstrass_eigenvalues(v))
}

/// Eigenvalues from nalgebra's real Schur form, reading the diagonal blocks
/// here; `None` if the decomposition did not converge or gave a non-finite value.
pub fn schur_eigenvalues(a: &DMatrix<f64>) -> Option<Vec<C64>> {
    let n = a.nrows();
    let schur = Schur::try_new(a.clone(), f64::EPSILON, MAX_EIGEN_ITERATIONS)?;
    let (_, t) = schur.unpack();
    let mut out = Vec::with_capacity(n);
    let mut m = 0;
    while m < n {
        if m + 1 < n && t[(m + 1, m)] != 0.0 {
            let (p, q, r, s) = (t[(m, m)], t[(m, m + 1)], t[(m + 1, m)], t[(m + 1, m + 1)]);
            let half_trace = 0.5 * (p + s);
            let half_diff = 0.5 * (p - s);
            let disc = half_diff * half_diff + q * r;
            if disc < 0.0 {
                let im = (-disc).sqrt();
                out.push(C64::new(half_trace, im));
                out.push(C64::new(half_trace, -im));
            } else {
                let root = disc.sqrt();
                out.push(C64::new(half_trace + root, 0.0));
                out.push(C64::new(half_trace - root, 0.0));
            }
            m += 2;
        } else {
            out.push(C64::new(t[(m, m)], 0.0));
            m += 1;
        }
    }
    out.iter()
        .all(|z| z.re.is_finite() && z.im.is_finite())
        .then_some(out)
}

/// `P(λ) = λ²M + λC + K`.
fn quadratic(v_m: &DMatrix<f64>, v_c: &DMatrix<f64>, v_k: &DMatrix<f64>, l: C64) -> DMatrix<C64> {
    let n = v_m.nrows();
    DMatrix::from_fn(n, n, |r, c| {
        l * l * v_m[(r, c)] + l * v_c[(r, c)] + C64::new(v_k[(r, c)], 0.0)
    })
}

/// Roots of `det(λ²M + λC + K)` by the Weierstrass (Durand–Kerner)
/// simultaneous iteration (the fallback when the Schur form fails).
/// `det P(λ) = det M · Π(λ − λ_i)`.
pub fn weierstrass_eigenvalues(v: &Vehicle) -> Vec<C64> {
    let mats = v.matrices();
    let n = mats.m.nrows();
    let deg = 2 * n;
    let lead: f64 = (0..n).map(|j| mats.m[(j, j)]).product();
    // Start on a circle of the radius of the largest undamped frequency,
    // at angles that avoid symmetry (the usual 0.4 + 0.9i powers).
    let (w2, _) = undamped(v);
    let radius = w2.iter().cloned().fold(1.0, f64::max).sqrt() * 1.5;
    let seed = C64::new(0.4, 0.9);
    let mut z: Vec<C64> = (0..deg)
        .map(|i| seed.powu(i as u32) * radius / seed.norm().powi(i as i32))
        .collect();
    for _ in 0..500 {
        let mut moved = 0.0f64;
        for i in 0..deg {
            let p = quadratic(&mats.m, &mats.c, &mats.k, z[i]).determinant();
            let mut den = C64::new(lead, 0.0);
            for j in 0..deg {
                if j != i {
                    den *= z[i] - z[j];
                }
            }
            if den.norm() == 0.0 {
                continue;
            }
            let step = p / den;
            z[i] -= step;
            moved = moved.max(step.norm() / z[i].norm().max(1e-300));
        }
        if moved < 1e-15 {
            break;
        }
    }
    // Snap roots whose imaginary part is rounding noise to the real axis.
    for r in z.iter_mut() {
        if r.im.abs() < 1e-10 * r.norm() {
            r.im = 0.0;
        }
    }
    z
}

/// Eigenvector of `(λ²M + λC + K) φ = 0` by two steps of inverse iteration.
fn damped_vector(mats: &super::Matrices, l: C64) -> DVector<C64> {
    let n = mats.m.nrows();
    let mut x = DVector::from_fn(n, |i, _| C64::new(1.0 + 0.1 * i as f64, 0.0));
    for attempt in 0..3 {
        // Shift slightly off the root so the factorisation is not exactly singular.
        let shift = l * (1.0 + 1e-9 * (attempt + 1) as f64) + C64::new(1e-12, 0.0);
        let lu = quadratic(&mats.m, &mats.c, &mats.k, shift).lu();
        let mut ok = true;
        for _ in 0..2 {
            match lu.solve(&x) {
                Some(y) if y.iter().all(|c| c.re.is_finite() && c.im.is_finite()) => {
                    let norm = y.norm();
                    if norm > 0.0 {
                        x = y / C64::new(norm, 0.0);
                    }
                }
                _ => {
                    ok = false;
                    break;
                }
            }
        }
        if ok {
            return x;
        }
    }
    x
}

/// Mass-weighted modal assurance criterion of a real and a complex shape.
fn mac(mass: &[f64], u: &[f64], d: &DVector<C64>) -> f64 {
    let mut cross = C64::new(0.0, 0.0);
    let (mut uu, mut dd) = (0.0, 0.0);
    for j in 0..u.len() {
        cross += d[j] * (mass[j] * u[j]);
        uu += mass[j] * u[j] * u[j];
        dd += mass[j] * d[j].norm_sqr();
    }
    if uu == 0.0 || dd == 0.0 {
        0.0
    } else {
        cross.norm_sqr() / (uu * dd)
    }
}

/// A damped root assigned to a mode: one complex root, or two real roots.
#[derive(Debug, Clone, Copy)]
enum Slot {
    Pair(usize),
    Real(usize, usize),
}

/// Exhaustive search for the assignment of damped roots to modes with the
/// largest total shape correlation. `score[mode][root]`.
fn best_assignment(
    modes: usize,
    complex: &[usize],
    real: &[usize],
    score: &[Vec<f64>],
) -> Option<Vec<Slot>> {
    struct Search<'a> {
        modes: usize,
        complex: &'a [usize],
        real: &'a [usize],
        score: &'a [Vec<f64>],
        used: Vec<bool>,
        current: Vec<Slot>,
        best: Option<(f64, Vec<Slot>)>,
    }
    impl Search<'_> {
        fn go(&mut self, mode: usize, total: f64) {
            if mode == self.modes {
                if self.best.as_ref().is_none_or(|(b, _)| total > *b + 1e-12) {
                    self.best = Some((total, self.current.clone()));
                }
                return;
            }
            for ic in 0..self.complex.len() {
                let c = self.complex[ic];
                if !self.used[c] {
                    self.used[c] = true;
                    self.current.push(Slot::Pair(c));
                    self.go(mode + 1, total + self.score[mode][c]);
                    self.current.pop();
                    self.used[c] = false;
                }
            }
            for ia in 0..self.real.len() {
                for ib in ia + 1..self.real.len() {
                    let (a, b) = (self.real[ia], self.real[ib]);
                    if !self.used[a] && !self.used[b] {
                        self.used[a] = true;
                        self.used[b] = true;
                        self.current.push(Slot::Real(a, b));
                        let s = 0.5 * (self.score[mode][a] + self.score[mode][b]);
                        self.go(mode + 1, total + s);
                        self.current.pop();
                        self.used[a] = false;
                        self.used[b] = false;
                    }
                }
            }
        }
    }
    let roots = score.first().map_or(0, |r| r.len());
    let mut search = Search {
        modes,
        complex,
        real,
        score,
        used: vec![false; roots],
        current: Vec::new(),
        best: None,
    };
    search.go(0, 0.0);
    search.best.map(|(_, s)| s)
}

/// Labels by dominant kinetic energy, each label used once.
fn labels(energy: &[Vec<f64>], dofs: &[&'static str]) -> Vec<&'static str> {
    let n = energy.len();
    let mut out = vec![""; n];
    let mut mode_free = vec![true; n];
    let mut dof_free = vec![true; dofs.len()];
    for _ in 0..n {
        let mut best = (f64::NEG_INFINITY, 0, 0);
        for (i, row) in energy.iter().enumerate() {
            for (j, &e) in row.iter().enumerate() {
                if mode_free[i] && dof_free[j] && e > best.0 {
                    best = (e, i, j);
                }
            }
        }
        let (_, i, j) = best;
        mode_free[i] = false;
        dof_free[j] = false;
        out[i] = match dofs[j] {
            "heave" => "bounce",
            "pitch" => "pitch",
            "front_wheel" => "front wheel hop",
            "suspended_seat_1" => "seat 1 bounce",
            "suspended_seat_2" => "seat 2 bounce",
            _ => "rear wheel hop",
        };
    }
    out
}

fn node_of(v: &Vehicle, z: f64, theta: f64) -> Option<Node> {
    let l = v.wheelbase_m();
    // Pure heave (θ negligible against z over the wheelbase): no node.
    if theta.abs() * l <= 1e-9 * z.abs() || theta == 0.0 {
        return None;
    }
    let x = -z / theta;
    let x = if x == 0.0 { 0.0 } else { x }; // no "-0"
    let outside = x > v.axles[0].x_m || x < v.axles[1].x_m;
    let side = if x.abs() < 1e-9 * l {
        "at the CG".to_string()
    } else if x > 0.0 {
        format!("{:.3} m ahead of the CG", x)
    } else {
        format!("{:.3} m behind the CG", -x)
    };
    let place = if outside {
        if x > 0.0 {
            "outside the wheelbase (ahead of the front axle)"
        } else {
            "outside the wheelbase (behind the rear axle)"
        }
    } else {
        "inside the wheelbase"
    };
    Some(Node {
        x_m: x,
        outside_wheelbase: outside,
        description: format!("{side}, {place}"),
    })
}

/// Ride frequency of each axle alone (see the module doc).
pub fn ride_frequencies(v: &Vehicle) -> RideFrequencies {
    let (a, b) = (v.axles[0].x_m, -v.axles[1].x_m);
    let l = a + b;
    let share = [v.body_mass_kg * b / l, v.body_mass_kg * a / l];
    let mut rate = [0.0; 2];
    let mut f = [0.0; 2];
    for i in 0..2 {
        let k = v.axles[i].spring_n_m;
        rate[i] = match &v.axles[i].tyre {
            Some(t) => k * t.rate_n_m / (k + t.rate_n_m),
            None => k,
        };
        f[i] = (rate[i] / share[i]).sqrt() / (2.0 * std::f64::consts::PI);
    }
    RideFrequencies {
        front_hz: f[0],
        rear_hz: f[1],
        front_to_rear: f[0] / f[1],
        sprung_mass_kg: share,
        ride_rate_n_m: rate,
    }
}

/// Modal analysis of `v` (see the module doc for every definition).
pub fn modes(v: &Vehicle) -> ModalAnalysis {
    let mats = v.matrices();
    let n = mats.m.nrows();
    let mass: Vec<f64> = (0..n).map(|j| mats.m[(j, j)]).collect();
    let dofs = v.dof_names();
    let (w2, phi) = undamped(v);

    // Damped roots and their eigenvectors, matched to the undamped shapes.
    let roots = damped_eigenvalues(v);
    let complex: Vec<usize> = (0..roots.len()).filter(|&i| roots[i].im > 0.0).collect();
    let real: Vec<usize> = (0..roots.len()).filter(|&i| roots[i].im == 0.0).collect();
    let vectors: Vec<DVector<C64>> = roots.iter().map(|&l| damped_vector(&mats, l)).collect();
    let shapes: Vec<Vec<f64>> = (0..n)
        .map(|c| (0..n).map(|r| phi[(r, c)]).collect())
        .collect();
    let score: Vec<Vec<f64>> = shapes
        .iter()
        .map(|u| vectors.iter().map(|d| mac(&mass, u, d)).collect())
        .collect();
    let assignment = best_assignment(n, &complex, &real, &score);
    let energy = energy_fractions(&mass, &shapes);
    let kinds = labels(&energy, &dofs);

    let out = (0..n)
        .map(|i| {
            let u = &shapes[i];
            let slot = slot_of(assignment.as_deref(), i, &complex, &roots);
            let root = matched_root(slot, &roots, &score[i]);
            let node = if kinds[i] == "bounce" || kinds[i] == "pitch" {
                node_of(v, u[0], u[1])
            } else {
                None
            };
            Mode {
                kind: kinds[i],
                seat: seat_of(v, kinds[i]),
                undamped_frequency_hz: w2[i].max(0.0).sqrt() / (2.0 * std::f64::consts::PI),
                damped_frequency_hz: root.damped_hz,
                damping_ratio: root.zeta,
                eigenvalue: root.eigenvalue,
                real_roots: root.real_roots,
                overdamped: root.real_roots.is_some(),
                shape_correlation: root.correlation,
                shape: shape_components(u, &energy[i], &dofs),
                node,
            }
        })
        .collect();
    analysis(v, dofs, out)
}

/// The name of the suspended seat whose mode `kind` is.
fn seat_of(v: &Vehicle, kind: &str) -> Option<String> {
    let k = ["seat 1 bounce", "seat 2 bounce"]
        .iter()
        .position(|s| *s == kind)?;
    v.suspended_seats()
        .nth(k)
        .map(|(i, _, _)| v.seats[i].name.clone())
}

/// Each mode's kinetic energy per coordinate, `mⱼ uⱼ²`, as fractions of its total.
fn energy_fractions(mass: &[f64], shapes: &[Vec<f64>]) -> Vec<Vec<f64>> {
    shapes
        .iter()
        .map(|u| {
            let e: Vec<f64> = mass.iter().zip(u).map(|(m, x)| m * x * x).collect();
            let total: f64 = e.iter().sum();
            e.iter().map(|x| x / total).collect()
        })
        .collect()
}

/// The shape scaled to +1 in the coordinate holding the most kinetic
/// energy (coordinates of different units, m and rad, are compared by
/// energy, not by size).
fn shape_components(u: &[f64], energy: &[f64], dofs: &[&'static str]) -> Vec<ShapeComponent> {
    let dominant = (0..u.len())
        .max_by(|&a, &b| energy[a].total_cmp(&energy[b]))
        .unwrap_or(0);
    let scale = 1.0 / u[dominant];
    (0..u.len())
        .map(|j| ShapeComponent {
            dof: dofs[j],
            unit: if dofs[j] == "pitch" { "rad" } else { "m" },
            value: u[j] * scale,
            energy_fraction: energy[j],
        })
        .collect()
}

/// The damped root matched to mode `i`; if no assignment exists (root
/// count inconsistent, which a correct solver never gives), the i-th pair
/// in frequency order stands in.
fn slot_of(assignment: Option<&[Slot]>, i: usize, complex: &[usize], roots: &[C64]) -> Slot {
    match assignment {
        Some(a) => a[i],
        None => {
            let mut sorted = complex.to_vec();
            sorted.sort_by(|&a, &b| roots[a].norm().total_cmp(&roots[b].norm()));
            Slot::Pair(sorted.get(i).copied().unwrap_or(0))
        }
    }
}

/// What a mode takes from its damped root(s).
struct MatchedRoot {
    damped_hz: f64,
    zeta: f64,
    eigenvalue: EigenvalueJson,
    real_roots: Option<[f64; 2]>,
    correlation: f64,
}

/// Damped frequency, damping ratio and root of a conjugate pair (ζ =
/// −Re λ/|λ|) or of two real roots (ζ = −(λ₁+λ₂)/(2√(λ₁λ₂)), from
/// λ² + 2ζω λ + ω² = 0).
fn matched_root(slot: Slot, roots: &[C64], score: &[f64]) -> MatchedRoot {
    match slot {
        Slot::Pair(c) => {
            let l = roots[c];
            MatchedRoot {
                damped_hz: l.im.abs() / (2.0 * std::f64::consts::PI),
                zeta: -l.re / l.norm(),
                eigenvalue: EigenvalueJson {
                    re: l.re,
                    im: l.im.abs(),
                },
                real_roots: None,
                correlation: score[c],
            }
        }
        Slot::Real(a, b) => {
            let (l1, l2) = (roots[a].re, roots[b].re);
            let (hi, lo) = if l1 >= l2 { (l1, l2) } else { (l2, l1) };
            MatchedRoot {
                damped_hz: 0.0,
                zeta: -(l1 + l2) / (2.0 * (l1 * l2).abs().sqrt()),
                eigenvalue: EigenvalueJson { re: hi, im: 0.0 },
                real_roots: Some([hi, lo]),
                correlation: 0.5 * (score[a] + score[b]),
            }
        }
    }
}

/// The modes with the vehicle-level figures: ride frequencies, pitch/bounce
/// ratio, dynamic index and the guidance.
fn analysis(v: &Vehicle, dofs: Vec<&'static str>, modes: Vec<Mode>) -> ModalAnalysis {
    let ride = ride_frequencies(v);
    let freq_of = |k: &str| {
        modes
            .iter()
            .find(|m| m.kind == k)
            .map_or(f64::NAN, |m| m.undamped_frequency_hz)
    };
    let pitch_to_bounce = freq_of("pitch") / freq_of("bounce");
    let (a, b) = (v.axles[0].x_m, -v.axles[1].x_m);
    let dynamic_index = v.pitch_inertia_kg_m2 / (v.body_mass_kg * a * b);
    let guidance = guidance(&ride, pitch_to_bounce, dynamic_index);
    ModalAnalysis {
        vehicle: v.name.clone(),
        dofs,
        modes,
        ride_frequencies: ride,
        pitch_to_bounce_ratio: pitch_to_bounce,
        dynamic_index,
        wheelbase_m: v.wheelbase_m(),
        guidance,
        matching: "damped roots matched to undamped modes by the largest total mass-weighted modal assurance criterion (exhaustive search)",
    }
}

/// The flat-ride statements: observations beside the usual guidance, no verdict.
fn guidance(ride: &RideFrequencies, pitch_to_bounce: f64, dynamic_index: f64) -> Vec<String> {
    let mut g = Vec::new();
    let relation = if ride.front_hz < ride.rear_hz {
        "below"
    } else if ride.front_hz > ride.rear_hz {
        "above"
    } else {
        "equal to"
    };
    g.push(format!(
        "Front ride frequency {:.2} Hz is {relation} the rear {:.2} Hz (front/rear = {:.2}). Flat-ride guidance (M. Olley, as presented by Gillespie 1992, ch. 5; the percentage from memory): front below rear, commonly about {:.0} % of it, so the rear catches up with the front's motion after a bump.",
        ride.front_hz,
        ride.rear_hz,
        ride.front_to_rear,
        FLAT_RIDE_FRONT_TO_REAR * 100.0
    ));
    if pitch_to_bounce.is_finite() {
        let close = if (1.0 / CLOSE_PITCH_BOUNCE_RATIO..=CLOSE_PITCH_BOUNCE_RATIO)
            .contains(&pitch_to_bounce)
        {
            "within"
        } else {
            "outside"
        };
        g.push(format!(
            "Pitch/bounce frequency ratio {:.2} is {close} the band 1/{r}–{r} often quoted for pitch and bounce being close (common practice).",
            pitch_to_bounce,
            r = CLOSE_PITCH_BOUNCE_RATIO
        ));
    }
    g.push(format!(
        "Dynamic index J/(m·a·b) = {:.2}: 1 uncouples the axles (each axle is the other's centre of percussion), below 1 the body pitches more readily than it bounces (Gillespie 1992, ch. 5).",
        dynamic_index
    ));
    if (dynamic_index - 1.0).abs() < 0.15 {
        g.push(
            "With the dynamic index near 1 each body mode is close to a motion of one end of the car with its node near the other axle, so the bounce and pitch labels (by dominant kinetic energy) are loose."
                .to_string(),
        );
    }
    g.push(
        "These are design guidance from the literature, not a verdict; the frequency response and a time-domain run show the actual ride."
            .to_string(),
    );
    g
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::vehicle::parse_vehicle;

    fn two_dof(kf: f64, kr: f64, a: f64, b: f64, cf: f64, cr: f64) -> Vehicle {
        let text = format!(
            "[body]\nmass = 1200.0\npitch_inertia = 1900.0\n\
             [front]\ncg_distance = {a}\nspring_rate = {kf}\ndamping = {cf}\n\
             [rear]\ncg_distance = {b}\nspring_rate = {kr}\ndamping = {cr}\n\
             [[seat]]\nx = 0.3\n"
        );
        parse_vehicle(&text, std::path::Path::new("t.toml")).unwrap()
    }

    #[test]
    fn equal_moments_decouple_pure_heave_and_pure_pitch() {
        // a·k_f = b·k_r removes the stiffness coupling: bounce is pure heave
        // with ω² = (k_f + k_r)/m and pitch pure pitch with
        // ω² = (a²k_f + b²k_r)/J (textbook fact; Thomson, Theory of
        // Vibration with Applications, ch. 6; Gillespie 1992, ch. 5).
        let (a, b, kr) = (1.2, 1.5, 30000.0);
        let kf = b * kr / a;
        let v = two_dof(kf, kr, a, b, 2000.0, 1600.0);
        let m = modes(&v);
        let two_pi = 2.0 * std::f64::consts::PI;
        let f_heave = ((kf + kr) / 1200.0).sqrt() / two_pi;
        let f_pitch = ((a * a * kf + b * b * kr) / 1900.0).sqrt() / two_pi;
        let bounce = m.modes.iter().find(|x| x.kind == "bounce").unwrap();
        let pitch = m.modes.iter().find(|x| x.kind == "pitch").unwrap();
        assert!((bounce.undamped_frequency_hz / f_heave - 1.0).abs() < 1e-10);
        assert!((pitch.undamped_frequency_hz / f_pitch - 1.0).abs() < 1e-10);
        assert!(bounce.shape[1].value.abs() < 1e-10, "{:?}", bounce.shape);
        assert!(pitch.shape[0].value.abs() < 1e-10, "{:?}", pitch.shape);
        assert!(bounce.node.is_none(), "pure heave has no node");
        assert!(
            pitch.node.as_ref().unwrap().x_m.abs() < 1e-9,
            "pure pitch: node at the CG"
        );
    }

    #[test]
    fn nodes_follow_the_closed_form_of_the_undamped_two_dof_model() {
        // m z̈ + k11 z + k12 θ = 0, J θ̈ + k12 z + k22 θ = 0 with
        // k11 = k_f + k_r, k12 = a k_f − b k_r, k22 = a²k_f + b²k_r:
        // ω² from (k11 − ω²m)(k22 − ω²J) = k12², and θ/z = −(k11 − ω²m)/k12,
        // so the node x = −z/θ = k12/(k11 − ω²m) (Thomson, ch. 6, the
        // automobile bounce–pitch example; Gillespie 1992, ch. 5).
        for (kf, kr, a, b) in [(35300.0, 34100.0, 1.05, 1.50), (30000.0, 42000.0, 1.3, 1.2)] {
            let v = two_dof(kf, kr, a, b, 2500.0, 2400.0);
            let (m, j) = (1200.0, 1900.0);
            let (k11, k12, k22) = (kf + kr, a * kf - b * kr, a * a * kf + b * b * kr);
            // (mJ) ω⁴ − (m k22 + J k11) ω² + (k11 k22 − k12²) = 0.
            let (qa, qb, qc) = (m * j, -(m * k22 + j * k11), k11 * k22 - k12 * k12);
            let disc = (qb * qb - 4.0 * qa * qc).sqrt();
            let w2 = [(-qb - disc) / (2.0 * qa), (-qb + disc) / (2.0 * qa)];
            let got = modes(&v);
            for (mode, w2) in got.modes.iter().zip(w2) {
                let f = w2.sqrt() / (2.0 * std::f64::consts::PI);
                assert!((mode.undamped_frequency_hz / f - 1.0).abs() < 1e-10);
                let x = k12 / (k11 - w2 * m);
                let node = mode.node.as_ref().unwrap();
                assert!(
                    (node.x_m - x).abs() < 1e-9 * x.abs().max(1.0),
                    "{} node {} vs {x}",
                    mode.kind,
                    node.x_m
                );
                assert_eq!(node.outside_wheelbase, x > a || x < -b);
            }
        }
    }

    #[test]
    fn one_degree_of_freedom_damping_ratio_and_overdamped_roots() {
        // Equal axles at a = b decouple completely: heave is a single-DOF
        // oscillator with ζ = c/(2√(k m)), c = c_f + c_r (textbook). With
        // ζ > 1 the roots are real and the reported ratio is
        // −(λ₁+λ₂)/(2√(λ₁λ₂)), which is again c/(2√(k m)).
        for c in [2000.0, 30000.0] {
            let v = two_dof(30000.0, 30000.0, 1.3, 1.3, c, c);
            let m = modes(&v);
            let bounce = m.modes.iter().find(|x| x.kind == "bounce").unwrap();
            let zeta = 2.0 * c / (2.0 * (60000.0f64 * 1200.0).sqrt());
            assert!(
                (bounce.damping_ratio / zeta - 1.0).abs() < 1e-9,
                "{} vs {zeta}",
                bounce.damping_ratio
            );
            assert_eq!(bounce.overdamped, zeta > 1.0);
            if zeta < 1.0 {
                let fd = (60000.0f64 / 1200.0).sqrt() * (1.0 - zeta * zeta).sqrt()
                    / (2.0 * std::f64::consts::PI);
                assert!((bounce.damped_frequency_hz / fd - 1.0).abs() < 1e-9);
            } else {
                assert_eq!(bounce.damped_frequency_hz, 0.0);
            }
        }
    }

    #[test]
    fn schur_and_weierstrass_roots_agree() {
        // Two independent root finders on the same model (a Schur form of A
        // and the polynomial det(λ²M + λC + K)) must give the same roots.
        let text = include_str!("../../profiles/vehicles/demo_hatchback.toml");
        let v = parse_vehicle(text, std::path::Path::new("demo.toml")).unwrap();
        let a = schur_eigenvalues(&v.state_space(0.0).a).unwrap();
        let b = weierstrass_eigenvalues(&v);
        assert_eq!(a.len(), 8);
        assert_eq!(b.len(), 8);
        for x in &a {
            let nearest = b
                .iter()
                .map(|y| (x - y).norm())
                .fold(f64::INFINITY, f64::min);
            assert!(
                nearest < 1e-8 * x.norm(),
                "{x}: nearest Weierstrass root {nearest} away"
            );
        }
    }
}
