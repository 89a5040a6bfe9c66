//! The vehicle: its description (read from the documented TOML file)
//! and the damped bounce–pitch model built from it.
//!
//! # Model
//! Generalised coordinates `q = [z, θ, z_uf, z_ur]`: body heave at the
//! centre of gravity (CG, positive up), pitch (positive nose-up) and, for an
//! axle with an unsprung mass, that wheel's vertical displacement. An axle
//! without an unsprung mass connects the body to the road through its
//! spring and damper directly (the 2-DOF bounce–pitch model). Axle `i` sits
//! at `x_i` (front `+a`, rear `−b`), so its body point moves by `z + x_i·θ`.
//!
//! The equations follow from Lagrange's equations with
//! `T = ½mż² + ½Jθ̇² + ½Σ m_ui ż_ui²`,
//! `V = ½Σ k_i (δ_i)² + ½Σ k_ti (r_i − z_ui)²` and the Rayleigh function
//! of the dampers (e.g. Gillespie, *Fundamentals of Vehicle Dynamics*,
//! SAE 1992, ch. 5; Wong, *Theory of Ground Vehicles*, 4th ed., ch. 7):
//! `M q̈ + C q̇ + K q = K_r r + C_r ṙ + f_b F`, with `M` diagonal in these
//! coordinates and the heave–pitch stiffness coupling `K[0][1] = a·k_f − b·k_r`.
//! [`Vehicle::matrices`] assembles them from the same elements that
//! [`Vehicle::evaluate`] uses for the nonlinear time-domain model, so the
//! two cannot drift apart (a test checks that they agree).
//!
//! # Signs and states
//! Travel `δ_i` is positive in compression (wheel or road moving up towards
//! the body); suspension and tyre forces are positive in compression. All
//! states are deviations from static equilibrium on the first road sample,
//! so gravity enters only through the static loads that decide tyre lift-off.

pub mod modal;
pub mod response;
mod spec;

pub use spec::{FLOOR_SUFFIX, FORE_AFT_SUFFIX, VehicleError, parse_vehicle, read_vehicle};

use nalgebra::{DMatrix, DVector};

/// Standard gravity, m/s² (ISO 80000-3).
pub const GRAVITY_M_S2: f64 = 9.80665;

/// Most degrees of freedom a vehicle can have (heave, pitch, two wheels,
/// [`MAX_SUSPENDED_SEATS`] suspended seats).
pub const MAX_DOF: usize = 4 + MAX_SUSPENDED_SEATS;

/// Most suspended seats a vehicle can have (one degree of freedom each).
pub const MAX_SUSPENDED_SEATS: usize = 2;

/// Names of the suspended seats' coordinates in `q`, in seat order.
pub const SEAT_DOF_NAMES: [&str; MAX_SUSPENDED_SEATS] = ["suspended_seat_1", "suspended_seat_2"];

/// Front (index 0) and rear (index 1).
pub const AXLE_NAMES: [&str; 2] = ["front", "rear"];

/// A validated vehicle.
#[derive(Debug, Clone, PartialEq)]
pub struct Vehicle {
    /// Free text from the file.
    pub name: String,
    /// Sprung (body) mass, kg.
    pub body_mass_kg: f64,
    /// Body pitch inertia about the CG, kg m².
    pub pitch_inertia_kg_m2: f64,
    /// Front and rear axle.
    pub axles: [Axle; 2],
    /// Evaluation points on the body.
    pub seats: Vec<Seat>,
}

/// One axle (both wheels together).
#[derive(Debug, Clone, PartialEq)]
pub struct Axle {
    /// Signed distance from the CG, m: positive ahead (front), negative behind (rear).
    pub x_m: f64,
    /// Suspension spring rate, N/m.
    pub spring_n_m: f64,
    /// Suspension damper.
    pub damper: Damper,
    /// Unsprung mass on a tyre; `None` for a body on springs.
    pub tyre: Option<Tyre>,
    /// Bump and rebound stops.
    pub stops: Option<Stops>,
}

/// A damper, linear in each direction.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Damper {
    /// Rate in compression (travel rate > 0), N s/m.
    pub bump_n_s_m: f64,
    /// Rate in extension (travel rate < 0), N s/m.
    pub rebound_n_s_m: f64,
}

impl Damper {
    /// The rate a linear model uses: the mean of bump and rebound (equal for
    /// a symmetric damper).
    pub fn linear_n_s_m(&self) -> f64 {
        0.5 * (self.bump_n_s_m + self.rebound_n_s_m)
    }

    /// True when bump and rebound rates differ.
    pub fn is_asymmetric(&self) -> bool {
        self.bump_n_s_m != self.rebound_n_s_m
    }

    /// Force (compression positive) at a travel rate (compression positive).
    #[inline]
    pub fn force_n(&self, travel_rate_m_s: f64) -> f64 {
        if travel_rate_m_s >= 0.0 {
            self.bump_n_s_m * travel_rate_m_s
        } else {
            self.rebound_n_s_m * travel_rate_m_s
        }
    }
}

/// An unsprung mass and its tyre.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Tyre {
    /// Unsprung mass, kg.
    pub unsprung_mass_kg: f64,
    /// Tyre radial rate, N/m.
    pub rate_n_m: f64,
    /// Tyre damping, N s/m.
    pub damping_n_s_m: f64,
}

/// Travel stops: a linear spring that engages past a clearance.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Stops {
    /// Compression travel before the bump stop engages, m.
    pub bump_clearance_m: Option<f64>,
    /// Extension travel before the rebound stop engages, m.
    pub rebound_clearance_m: Option<f64>,
    /// Stop rate, N/m.
    pub rate_n_m: f64,
}

impl Stops {
    /// Stop force (compression positive) at a travel (compression positive).
    /// Continuous in travel, so the adaptive solver sees a kink, not a jump.
    #[inline]
    pub fn force_n(&self, travel_m: f64) -> f64 {
        if let Some(c) = self.bump_clearance_m {
            if travel_m > c {
                return self.rate_n_m * (travel_m - c);
            }
        }
        if let Some(c) = self.rebound_clearance_m {
            if travel_m < -c {
                return self.rate_n_m * (travel_m + c);
            }
        }
        0.0
    }
}

/// Which side of a damper acts in a linear regime.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum DamperSide {
    /// The mean of bump and rebound (the linear model; exact for a symmetric damper).
    Mean,
    /// Compression rate (travel rate ≥ 0).
    Bump,
    /// Extension rate (travel rate < 0).
    Rebound,
}

/// Which stop is engaged in a linear regime.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum StopSide {
    /// Neither (travel within the clearances).
    Free,
    /// The bump stop (travel past the bump clearance).
    Bump,
    /// The rebound stop (travel past the rebound clearance, extension).
    Rebound,
}

/// One axle's elements in one linear regime of the piecewise-linear
/// model: between two switches (a damper changing side, a stop engaging or
/// releasing, a tyre leaving or touching the road) the element model is
/// affine in the state and the road.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub struct AxleRegime {
    /// Damper side.
    pub damper: DamperSide,
    /// Stop engaged.
    pub stop: StopSide,
    /// Tyre (or, without a tyre, the spring) on the road.
    pub on_road: bool,
}

impl AxleRegime {
    /// The linear model's regime: mean damper, no stop, on the road.
    pub const LINEAR: AxleRegime = AxleRegime {
        damper: DamperSide::Mean,
        stop: StopSide::Free,
        on_road: true,
    };

    /// Suspension spring rate, damper rate and constant force (compression
    /// positive) of `axle` in this regime: a stop engaged past clearance `c`
    /// adds `k_s (δ ∓ c)`, i.e. rate `k_s` and offset `∓k_s c`.
    pub fn suspension(&self, axle: &Axle) -> (f64, f64, f64) {
        let cs = match self.damper {
            DamperSide::Mean => axle.damper.linear_n_s_m(),
            DamperSide::Bump => axle.damper.bump_n_s_m,
            DamperSide::Rebound => axle.damper.rebound_n_s_m,
        };
        let stop = axle.stops.as_ref();
        let (ks, offset) = match (self.stop, stop) {
            (StopSide::Bump, Some(s)) => (
                axle.spring_n_m + s.rate_n_m,
                -s.rate_n_m * s.bump_clearance_m.unwrap_or(0.0),
            ),
            (StopSide::Rebound, Some(s)) => (
                axle.spring_n_m + s.rate_n_m,
                s.rate_n_m * s.rebound_clearance_m.unwrap_or(0.0),
            ),
            _ => (axle.spring_n_m, 0.0),
        };
        (ks, cs, offset)
    }
}

/// An evaluation point on the body.
#[derive(Debug, Clone, PartialEq)]
pub struct Seat {
    /// Position ahead of the CG, m.
    pub x_m: f64,
    /// Height above the CG (the pitch axis), m; 0 unless the file gives
    /// `height`. A point this high moves `−h·θ` fore and aft when the body
    /// pitches by `θ` (small angles; x forward, pitch positive nose-up).
    pub height_m: f64,
    /// Label for tables and history columns.
    pub name: String,
    /// The seat's own suspension, if it has one: the seat surface then
    /// moves on it, not with the body point (the floor).
    pub suspension: Option<SeatSuspension>,
}

/// A suspended seat: the moving mass (occupant and seat top together) on a
/// linear spring and damper standing on the body point `z + x·θ` beneath it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SeatSuspension {
    /// Moving mass (the part of the occupant and seat the suspension
    /// carries), kg; carried in addition to `body.mass`.
    pub mass_kg: f64,
    /// Spring rate, N/m.
    pub rate_n_m: f64,
    /// Damping, N s/m.
    pub damping_n_s_m: f64,
}

/// The linear model's matrices, `M q̈ + C q̇ + K q = K_r r + C_r ṙ + f_b F`.
#[derive(Debug, Clone, PartialEq)]
pub struct Matrices {
    /// Mass matrix (diagonal), ndof × ndof.
    pub m: DMatrix<f64>,
    /// Damping matrix (dampers at their mean rate), ndof × ndof.
    pub c: DMatrix<f64>,
    /// Stiffness matrix, ndof × ndof.
    pub k: DMatrix<f64>,
    /// Road elevation input, ndof × 2 (front, rear).
    pub k_road: DMatrix<f64>,
    /// Road elevation-rate input, ndof × 2 (front, rear).
    pub c_road: DMatrix<f64>,
}

/// First-order form `ẋ = A x + B u` with `x = [q; q̇]` and
/// `u = [r_f, r_r, ṙ_f, ṙ_r, F]`.
#[derive(Debug, Clone, PartialEq)]
pub struct StateSpace {
    /// State matrix, 2·ndof square.
    pub a: DMatrix<f64>,
    /// Input matrix, 2·ndof × 5.
    pub b: DMatrix<f64>,
}

/// Road seen by each axle: dynamic elevation (relative to the first
/// sample) and its time rate.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct RoadState {
    /// Elevation under front and rear, m.
    pub elevation_m: [f64; 2],
    /// Elevation rate under front and rear, m/s.
    pub rate_m_s: [f64; 2],
}

/// How the road contact behaves when the tyre would have to pull.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Contact {
    /// The physical model: a tyre cannot pull, so it leaves the road.
    LiftOff,
    /// The linear model: the tyre stays bonded to the road and may pull.
    Bonded,
}

/// Element forces and kinematics at one instant.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct ElementState {
    /// Suspension travel, compression positive, m (dynamic).
    pub travel_m: [f64; 2],
    /// Travel rate, compression positive, m/s.
    pub travel_rate_m_s: [f64; 2],
    /// Suspension force (spring + damper + stop), compression positive, N (dynamic).
    pub suspension_n: [f64; 2],
    /// Dynamic road contact force, compression positive, N: the tyre force,
    /// or the suspension force for an axle without an unsprung mass.
    pub contact_n: [f64; 2],
    /// False while the tyre (or the spring, without a tyre) is off the road.
    pub in_contact: [bool; 2],
    /// Travel of each suspended seat (in the order of [`SEAT_DOF_NAMES`]),
    /// compression positive: floor point minus seat mass, m (dynamic).
    pub seat_travel_m: [f64; MAX_SUSPENDED_SEATS],
    /// Its rate, m/s.
    pub seat_travel_rate_m_s: [f64; MAX_SUSPENDED_SEATS],
    /// Force of each seat suspension, compression positive, N (dynamic).
    pub seat_force_n: [f64; MAX_SUSPENDED_SEATS],
}

impl Vehicle {
    /// Wheelbase `a + b`, m: the rear wheel sees the front wheel's road this
    /// much later in distance.
    pub fn wheelbase_m(&self) -> f64 {
        self.axles[0].x_m - self.axles[1].x_m
    }

    /// Degrees of freedom: 2 (heave, pitch) plus one per unsprung mass and
    /// one per suspended seat.
    pub fn dof_count(&self) -> usize {
        self.wheel_count() + 2 + self.suspended_seat_count()
    }

    fn wheel_count(&self) -> usize {
        self.axles.iter().filter(|a| a.tyre.is_some()).count()
    }

    /// Number of suspended seats.
    pub fn suspended_seat_count(&self) -> usize {
        self.seats.iter().filter(|s| s.suspension.is_some()).count()
    }

    /// The suspended seats in order: (seat index, suspension, coordinate
    /// index in `q`). Coordinates follow the wheels, one per suspended seat.
    pub fn suspended_seats(&self) -> impl Iterator<Item = (usize, &SeatSuspension, usize)> + '_ {
        let first = 2 + self.wheel_count();
        self.seats
            .iter()
            .enumerate()
            .filter_map(|(i, s)| s.suspension.as_ref().map(|p| (i, p)))
            .enumerate()
            .map(move |(k, (i, p))| (i, p, first + k))
    }

    /// Index of seat `s`'s coordinate in `q`, if the seat is suspended.
    pub fn seat_dof(&self, s: usize) -> Option<usize> {
        self.suspended_seats()
            .find(|(i, _, _)| *i == s)
            .map(|(_, _, d)| d)
    }

    /// Rank of seat `s` among the suspended seats (its slot in
    /// [`ElementState::seat_travel_m`]), if it is suspended.
    pub fn seat_slot(&self, s: usize) -> Option<usize> {
        self.suspended_seats().position(|(i, _, _)| i == s)
    }

    /// Index of axle `i`'s wheel coordinate in `q`, if it has one.
    pub fn wheel_dof(&self, i: usize) -> Option<usize> {
        self.axles[i].tyre?;
        let front_wheel = usize::from(self.axles[0].tyre.is_some());
        Some(if i == 0 { 2 } else { 2 + front_wheel })
    }

    /// Names of the coordinates in `q`, in order.
    pub fn dof_names(&self) -> Vec<&'static str> {
        let mut v = vec!["heave", "pitch"];
        if self.axles[0].tyre.is_some() {
            v.push("front_wheel");
        }
        if self.axles[1].tyre.is_some() {
            v.push("rear_wheel");
        }
        v.extend(SEAT_DOF_NAMES.iter().take(self.suspended_seat_count()));
        v
    }

    /// True when every element is linear (symmetric dampers, no stops; seat
    /// suspensions are linear).
    /// Tyre lift-off can still occur on a rough road; the solver watches for it.
    pub fn is_linear(&self) -> bool {
        self.axles
            .iter()
            .all(|a| !a.damper.is_asymmetric() && a.stops.is_none())
    }

    /// True when the element model is linear between switches (every
    /// element of this file format is: linear spring, damper linear on each
    /// side, stops linear past their clearance, tyre linear while on the
    /// road), so the piecewise-exact solver applies. An element with a
    /// curved characteristic would make this false and leave such a
    /// vehicle to the adaptive solver.
    pub fn is_piecewise_linear(&self) -> bool {
        true
    }

    /// Static suspension force of each axle, N: the body weight shared by
    /// moment balance about the CG (`W·b/L` front, `W·a/L` rear), plus the
    /// weight `W_s` of each suspended seat's moving mass at `x_s`
    /// (`W_s·(x_s − x_r)/L` front, `W_s·(x_f − x_s)/L` rear).
    pub fn static_suspension_n(&self) -> [f64; 2] {
        let w = self.body_mass_kg * GRAVITY_M_S2;
        let l = self.wheelbase_m();
        let mut out = [w * -self.axles[1].x_m / l, w * self.axles[0].x_m / l];
        for (i, p, _) in self.suspended_seats() {
            let ws = p.mass_kg * GRAVITY_M_S2;
            let x = self.seats[i].x_m;
            out[0] += ws * (x - self.axles[1].x_m) / l;
            out[1] += ws * (self.axles[0].x_m - x) / l;
        }
        out
    }

    /// Static road contact force of each axle, N (suspension plus unsprung weight).
    pub fn static_contact_n(&self) -> [f64; 2] {
        let s = self.static_suspension_n();
        let mut out = s;
        for i in 0..2 {
            if let Some(t) = &self.axles[i].tyre {
                out[i] += t.unsprung_mass_kg * GRAVITY_M_S2;
            }
        }
        out
    }

    /// Diagonal of the mass matrix.
    pub fn mass_diagonal(&self) -> [f64; MAX_DOF] {
        let mut m = [0.0; MAX_DOF];
        m[0] = self.body_mass_kg;
        m[1] = self.pitch_inertia_kg_m2;
        for i in 0..2 {
            if let (Some(j), Some(t)) = (self.wheel_dof(i), &self.axles[i].tyre) {
                m[j] = t.unsprung_mass_kg;
            }
        }
        for (_, p, j) in self.suspended_seats() {
            m[j] = p.mass_kg;
        }
        m
    }

    /// Assembles `M`, `C`, `K`, `K_r`, `C_r` element by element.
    ///
    /// A suspension between body point `e_b = [1, x_i, 0…]` and wheel `e_w`
    /// adds `k (e_b − e_w)(e_b − e_w)ᵀ`; a tyre adds `k_t e_w e_wᵀ` and
    /// `k_t e_w` to the road input; an axle without a wheel adds `k e_b e_bᵀ`
    /// and `k e_b` to the road input (same for the dampers). A suspended
    /// seat between the floor point `e_b = [1, x_s, 0…]` and its mass `e_s`
    /// adds `k_s (e_b − e_s)(e_b − e_s)ᵀ` and `c_s (e_b − e_s)(e_b − e_s)ᵀ`.
    pub fn matrices(&self) -> Matrices {
        self.matrices_in(&[AxleRegime::LINEAR; 2]).0
    }

    /// [`Vehicle::matrices`] with each axle's elements in the linear regime
    /// `regime` (damper side, stop engaged or not, on or off the road), and
    /// the constant generalised force of that regime (a stop's offset
    /// `∓k_s c`, a lifted tyre's `−static load`): in one regime the element
    /// model is `M q̈ + C q̇ + K q = K_r r + C_r ṙ + f_b F + f_c` exactly.
    pub fn matrices_in(&self, regime: &[AxleRegime; 2]) -> (Matrices, DVector<f64>) {
        let n = self.dof_count();
        let mut m = DMatrix::zeros(n, n);
        for (j, v) in self.mass_diagonal().iter().take(n).enumerate() {
            m[(j, j)] = *v;
        }
        let mut mats = Matrices {
            m,
            c: DMatrix::zeros(n, n),
            k: DMatrix::zeros(n, n),
            k_road: DMatrix::zeros(n, 2),
            c_road: DMatrix::zeros(n, 2),
        };
        let mut f_const = DVector::zeros(n);
        for i in 0..self.axles.len() {
            self.add_axle(i, regime[i], &mut mats, &mut f_const);
        }
        for (s, p, j) in self.suspended_seats() {
            let mut e = DVector::zeros(n);
            e[0] = 1.0;
            e[1] = self.seats[s].x_m;
            e[j] = -1.0; // e_b − e_s
            let outer = &e * e.transpose();
            mats.k += &outer * p.rate_n_m;
            mats.c += &outer * p.damping_n_s_m;
        }
        (mats, f_const)
    }

    /// Adds axle `i`'s suspension (and tyre) in regime `r` to `mats`, and
    /// the regime's constant generalised force to `f_const`.
    fn add_axle(&self, i: usize, r: AxleRegime, mats: &mut Matrices, f_const: &mut DVector<f64>) {
        let n = self.dof_count();
        let axle = &self.axles[i];
        let Matrices {
            k,
            c,
            k_road,
            c_road,
            ..
        } = mats;
        let mut e = DVector::zeros(n);
        e[0] = 1.0;
        e[1] = axle.x_m;
        let (ks, cs, offset) = r.suspension(axle);
        match (self.wheel_dof(i), &axle.tyre) {
            (Some(w), Some(t)) => {
                e[w] = -1.0; // e_b − e_w
                let outer = &e * e.transpose();
                *k += &outer * ks;
                *c += &outer * cs;
                // A suspension force f acts as +f on the body point and
                // −f on the wheel: generalised force e·f.
                if offset != 0.0 {
                    *f_const += &e * offset;
                }
                if r.on_road {
                    k[(w, w)] += t.rate_n_m;
                    c[(w, w)] += t.damping_n_s_m;
                    k_road[(w, i)] += t.rate_n_m;
                    c_road[(w, i)] += t.damping_n_s_m;
                } else {
                    // Off the road the tyre's total force is zero.
                    f_const[w] -= self.static_contact_n()[i];
                }
            }
            _ if r.on_road => {
                let outer = &e * e.transpose();
                *k += &outer * ks;
                *c += &outer * cs;
                if offset != 0.0 {
                    *f_const += &e * offset;
                }
                for row in 0..n {
                    k_road[(row, i)] += ks * e[row];
                    c_road[(row, i)] += cs * e[row];
                }
            }
            // A spring resting on the road, lifted: total force zero.
            _ => *f_const -= &e * self.static_suspension_n()[i],
        }
    }

    /// Generalised force of a vertical force on the body at `x_m`: heave 1,
    /// pitch `x_m` (virtual work of `F` on `δz + x·δθ`).
    pub fn body_force_input(&self, x_m: f64) -> DVector<f64> {
        let mut f = DVector::zeros(self.dof_count());
        f[0] = 1.0;
        f[1] = x_m;
        f
    }

    /// The first-order form with a body force applied at `force_x_m`.
    pub fn state_space(&self, force_x_m: f64) -> StateSpace {
        self.state_space_of(&self.matrices(), force_x_m)
    }

    /// The first-order form of regime `regime` ([`Vehicle::matrices_in`]),
    /// with its constant term `ẋ ∋ [0; M⁻¹ f_c]`.
    pub fn state_space_in(
        &self,
        regime: &[AxleRegime; 2],
        force_x_m: f64,
    ) -> (StateSpace, DVector<f64>) {
        let (mats, f_const) = self.matrices_in(regime);
        let n = self.dof_count();
        let mut c = DVector::zeros(2 * n);
        for j in 0..n {
            c[n + j] = f_const[j] / mats.m[(j, j)];
        }
        (self.state_space_of(&mats, force_x_m), c)
    }

    fn state_space_of(&self, mats: &Matrices, force_x_m: f64) -> StateSpace {
        let n = self.dof_count();
        let minv = DMatrix::from_diagonal(&mats.m.diagonal().map(|v| 1.0 / v));
        let mut a = DMatrix::zeros(2 * n, 2 * n);
        a.view_mut((0, n), (n, n)).fill_with_identity();
        a.view_mut((n, 0), (n, n)).copy_from(&(-&minv * &mats.k));
        a.view_mut((n, n), (n, n)).copy_from(&(-&minv * &mats.c));
        let mut b = DMatrix::zeros(2 * n, 5);
        b.view_mut((n, 0), (n, 2))
            .copy_from(&(&minv * &mats.k_road));
        b.view_mut((n, 2), (n, 2))
            .copy_from(&(&minv * &mats.c_road));
        b.view_mut((n, 4), (n, 1))
            .copy_from(&(&minv * self.body_force_input(force_x_m)));
        StateSpace { a, b }
    }

    /// Element forces at state `(q, q̇)` on `road`, and the accelerations
    /// `q̈` they cause together with a body force `force_n` at `force_x_m`.
    /// This is the full (nonlinear) model: asymmetric dampers, stops, and
    /// contact forces that cannot pull (lift-off). Unused entries of the
    /// fixed-size arrays are ignored and `q̈` is zero there.
    #[inline]
    pub fn evaluate(
        &self,
        q: &[f64; MAX_DOF],
        qd: &[f64; MAX_DOF],
        road: &RoadState,
        force_n: f64,
        force_x_m: f64,
        qdd: &mut [f64; MAX_DOF],
    ) -> ElementState {
        self.evaluate_with(q, qd, road, force_n, force_x_m, Contact::LiftOff, qdd)
    }

    /// [`Vehicle::evaluate`] with a choice of contact model. With
    /// [`Contact::Bonded`] the contact force may pull (the linear model);
    /// `in_contact` then reports whether the tyre *would* have stayed on
    /// the road.
    #[inline]
    #[allow(clippy::too_many_arguments)]
    pub fn evaluate_with(
        &self,
        q: &[f64; MAX_DOF],
        qd: &[f64; MAX_DOF],
        road: &RoadState,
        force_n: f64,
        force_x_m: f64,
        contact_model: Contact,
        qdd: &mut [f64; MAX_DOF],
    ) -> ElementState {
        self.element_model()
            .evaluate_with(q, qd, road, force_n, force_x_m, contact_model, qdd)
    }

    /// The element model with its per-vehicle constants (static loads,
    /// masses, wheel coordinates) worked out once, for loops that evaluate
    /// it at every sample or solver stage.
    pub fn element_model(&self) -> ElementModel<'_> {
        ElementModel {
            vehicle: self,
            static_suspension_n: self.static_suspension_n(),
            static_contact_n: self.static_contact_n(),
            // 1/m (zero for absent coordinates, whose q̈ stays zero).
            inv_mass: self
                .mass_diagonal()
                .map(|m| if m > 0.0 { 1.0 / m } else { 0.0 }),
            wheel: [self.wheel_dof(0), self.wheel_dof(1)],
            seats: self.seat_elements(),
        }
    }

    /// The suspended seats as the element model sees them.
    fn seat_elements(&self) -> [Option<SeatElement>; MAX_SUSPENDED_SEATS] {
        let mut out = [None; MAX_SUSPENDED_SEATS];
        for ((i, p, dof), slot) in self.suspended_seats().zip(out.iter_mut()) {
            *slot = Some(SeatElement {
                x_m: self.seats[i].x_m,
                suspension: *p,
                dof,
            });
        }
        out
    }
}

/// [`Vehicle::evaluate_with`] with the vehicle's constants precomputed
/// ([`Vehicle::element_model`]); the arithmetic is the same, so are the
/// results.
#[derive(Debug, Clone, Copy)]
pub struct ElementModel<'a> {
    vehicle: &'a Vehicle,
    static_suspension_n: [f64; 2],
    static_contact_n: [f64; 2],
    inv_mass: [f64; MAX_DOF],
    wheel: [Option<usize>; 2],
    seats: [Option<SeatElement>; MAX_SUSPENDED_SEATS],
}

/// A suspended seat in the element model: its floor point and coordinate.
#[derive(Debug, Clone, Copy)]
struct SeatElement {
    x_m: f64,
    suspension: SeatSuspension,
    dof: usize,
}

impl ElementModel<'_> {
    /// The vehicle this model evaluates.
    pub fn vehicle(&self) -> &Vehicle {
        self.vehicle
    }

    /// See [`Vehicle::evaluate_with`]. `D` is the length of the state
    /// arrays (at least the vehicle's degrees of freedom, at most
    /// [`MAX_DOF`]; coordinates at or past `D` are left out), so a solver
    /// can size its state to the vehicle.
    #[inline(always)]
    #[allow(clippy::too_many_arguments)]
    pub fn evaluate_with<const D: usize>(
        &self,
        q: &[f64; D],
        qd: &[f64; D],
        road: &RoadState,
        force_n: f64,
        force_x_m: f64,
        contact_model: Contact,
        qdd: &mut [f64; D],
    ) -> ElementState {
        let lift_off = contact_model == Contact::LiftOff;
        let static_s = &self.static_suspension_n;
        let static_c = &self.static_contact_n;
        let inv_mass = &self.inv_mass;
        let mut out = ElementState::default();
        let mut body_force = force_n;
        let mut body_moment = force_n * force_x_m;
        *qdd = [0.0; D];
        for (i, axle) in self.vehicle.axles.iter().enumerate() {
            let (travel, rate, wheel) = self.axle_motion(i, q, qd, road);
            let mut fs = suspension_force_n(axle, travel, rate);
            let mut contact = true;
            match (wheel, &axle.tyre) {
                (Some(w), Some(t)) => {
                    let mut ft = t.rate_n_m * (road.elevation_m[i] - q[w])
                        + t.damping_n_s_m * (road.rate_m_s[i] - qd[w]);
                    // A tyre cannot pull on the road: total force ≥ 0.
                    if ft + static_c[i] < 0.0 {
                        contact = false;
                        if lift_off {
                            ft = -static_c[i];
                        }
                    }
                    qdd[w] = (ft - fs) * inv_mass[w];
                    out.contact_n[i] = ft;
                }
                _ => {
                    // Without a wheel the suspension itself rests on the road.
                    if fs + static_s[i] < 0.0 {
                        contact = false;
                        if lift_off {
                            fs = -static_s[i];
                        }
                    }
                    out.contact_n[i] = fs;
                }
            }
            out.travel_m[i] = travel;
            out.travel_rate_m_s[i] = rate;
            out.suspension_n[i] = fs;
            out.in_contact[i] = contact;
            body_force += fs;
            body_moment += axle.x_m * fs;
        }
        // Seat suspensions: the force pushes the seat mass up and the floor
        // (the body point beneath it) down.
        for (k, seat) in self.seats.iter().enumerate() {
            let Some(e) = seat.filter(|e| e.dof < D) else {
                continue;
            };
            let travel = q[0] + e.x_m * q[1] - q[e.dof];
            let rate = qd[0] + e.x_m * qd[1] - qd[e.dof];
            let f = e.suspension.rate_n_m * travel + e.suspension.damping_n_s_m * rate;
            qdd[e.dof] = f * inv_mass[e.dof];
            body_force -= f;
            body_moment -= e.x_m * f;
            out.seat_travel_m[k] = travel;
            out.seat_travel_rate_m_s[k] = rate;
            out.seat_force_n[k] = f;
        }
        qdd[0] = body_force * inv_mass[0];
        qdd[1] = body_moment * inv_mass[1];
        out
    }

    /// Only what decides the piecewise-linear regime, per axle: travel,
    /// travel rate and contact, with the arithmetic of
    /// [`ElementModel::evaluate_with`] (same expressions, same order, so
    /// the same bits and the same comparisons), none of the forces on the
    /// masses or the accelerations. The piecewise-exact solver reads it at
    /// every sub-step end; keep it in step with `evaluate_with`.
    #[inline(always)]
    pub fn axle_kinematics<const D: usize>(
        &self,
        q: &[f64; D],
        qd: &[f64; D],
        road: &RoadState,
    ) -> AxleKinematics {
        let mut out = AxleKinematics::default();
        for i in 0..self.vehicle.axles.len() {
            let (travel, rate, margin) = self.axle_margins(i, q, qd, road);
            // The element model's test: the contact force may not pull.
            out.in_contact[i] = !(margin < 0.0);
            out.travel_m[i] = travel;
            out.travel_rate_m_s[i] = rate;
        }
        out
    }

    /// Axle `i`'s travel (m), travel rate (m/s) and contact margin (N):
    /// the contact force plus the static load, negative when the tyre
    /// (or, without a tyre, the spring) would have to pull. The same
    /// arithmetic as [`ElementModel::evaluate_with`]; the piecewise-exact
    /// solver locates lift-off and touch-down on the margin's zero.
    #[inline]
    pub fn axle_margins<const D: usize>(
        &self,
        i: usize,
        q: &[f64; D],
        qd: &[f64; D],
        road: &RoadState,
    ) -> (f64, f64, f64) {
        self.axle_margins_by(i, D, |j| q[j], |j| qd[j], road)
    }

    /// [`ElementModel::axle_margins`] for a state laid out as the solvers
    /// hold it: `x = [q, q̇]` with `N / 2` coordinates each, read in place.
    #[inline(always)]
    pub fn axle_margins_of_state<const N: usize>(
        &self,
        i: usize,
        x: &[f64; N],
        road: &RoadState,
    ) -> (f64, f64, f64) {
        let n = N / 2;
        self.axle_margins_by(i, n, |j| x[j], |j| x[n + j], road)
    }

    /// The margins with coordinate `j`'s displacement `q(j)` and rate
    /// `qd(j)` (`dof` coordinates): one expression for both layouts.
    #[inline(always)]
    fn axle_margins_by(
        &self,
        i: usize,
        dof: usize,
        q: impl Fn(usize) -> f64,
        qd: impl Fn(usize) -> f64,
        road: &RoadState,
    ) -> (f64, f64, f64) {
        let axle = &self.vehicle.axles[i];
        let (travel, rate, wheel) = self.axle_motion_by(i, dof, &q, &qd, road);
        let margin = match (wheel, &axle.tyre) {
            (Some(w), Some(t)) => {
                let ft = t.rate_n_m * (road.elevation_m[i] - q(w))
                    + t.damping_n_s_m * (road.rate_m_s[i] - qd(w));
                ft + self.static_contact_n[i]
            }
            _ => suspension_force_n(axle, travel, rate) + self.static_suspension_n[i],
        };
        (travel, rate, margin)
    }

    /// Axle `i`'s travel (m, compression positive) and travel rate (m/s),
    /// and its wheel's coordinate when the wheel is modelled (otherwise the
    /// suspension stands on the road).
    #[inline(always)]
    fn axle_motion<const D: usize>(
        &self,
        i: usize,
        q: &[f64; D],
        qd: &[f64; D],
        road: &RoadState,
    ) -> (f64, f64, Option<usize>) {
        self.axle_motion_by(i, D, &|j| q[j], &|j| qd[j], road)
    }

    #[inline(always)]
    fn axle_motion_by(
        &self,
        i: usize,
        dof: usize,
        q: &impl Fn(usize) -> f64,
        qd: &impl Fn(usize) -> f64,
        road: &RoadState,
    ) -> (f64, f64, Option<usize>) {
        let x_m = self.vehicle.axles[i].x_m;
        let zb = q(0) + x_m * q(1);
        let vb = qd(0) + x_m * qd(1);
        let wheel = self.wheel[i].filter(|&w| w < dof);
        let (zl, vl) = match wheel {
            Some(w) => (q(w), qd(w)),
            None => (road.elevation_m[i], road.rate_m_s[i]),
        };
        (zl - zb, vl - vb, wheel)
    }
}

/// Spring, damper and stop force of an axle's suspension, N (compression
/// positive).
#[inline(always)]
fn suspension_force_n(axle: &Axle, travel_m: f64, rate_m_s: f64) -> f64 {
    let mut fs = axle.spring_n_m * travel_m + axle.damper.force_n(rate_m_s);
    if let Some(s) = &axle.stops {
        fs += s.force_n(travel_m);
    }
    fs
}

/// Per-axle travel, travel rate and contact: the part of an
/// [`ElementState`] that decides the piecewise-linear regime.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct AxleKinematics {
    /// Suspension travel, compression positive, m (dynamic).
    pub travel_m: [f64; 2],
    /// Travel rate, compression positive, m/s.
    pub travel_rate_m_s: [f64; 2],
    /// False while the tyre (or the spring, without a tyre) is off the road.
    pub in_contact: [bool; 2],
}

impl From<&ElementState> for AxleKinematics {
    fn from(el: &ElementState) -> AxleKinematics {
        AxleKinematics {
            travel_m: el.travel_m,
            travel_rate_m_s: el.travel_rate_m_s,
            in_contact: el.in_contact,
        }
    }
}

#[cfg(test)]
pub(crate) mod tests;
