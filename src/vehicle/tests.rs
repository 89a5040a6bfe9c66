//! Checks of the bounce–pitch model against closed-form results.

use super::*;
use std::path::Path;

/// An example half car (invented), the shape of the examples in `profiles/reference.md`.
pub(crate) const HALF_CAR: &str = r#"
name = "documented example"
[body]
mass = 1250.0
pitch_inertia = 2100.0
[front]
cg_distance = 1.15
spring_rate = 38000.0
damping = 3200.0
unsprung_mass = 85.0
tyre_rate = 420000.0
[rear]
cg_distance = 1.45
spring_rate = 33000.0
damping = 2900.0
unsprung_mass = 75.0
tyre_rate = 420000.0
[[seat]]
x = 0.35
"#;

pub(crate) fn half_car() -> Vehicle {
    parse_vehicle(HALF_CAR, Path::new("half_car.toml")).unwrap()
}

pub(crate) fn body_on_springs() -> Vehicle {
    let text = HALF_CAR
        .replace("unsprung_mass = 85.0\ntyre_rate = 420000.0\n", "")
        .replace("unsprung_mass = 75.0\ntyre_rate = 420000.0\n", "");
    parse_vehicle(&text, Path::new("two_dof.toml")).unwrap()
}

#[test]
fn mass_matrix_is_diagonal_and_stiffness_symmetric_with_the_textbook_coupling() {
    // Textbook result of the Lagrange derivation (Gillespie 1992, ch. 5;
    // Wong, Theory of Ground Vehicles, ch. 7): K[z][θ] = a·k_f − b·k_r with
    // z up and θ nose-up.
    for v in [half_car(), body_on_springs()] {
        let m = v.matrices();
        let n = v.dof_count();
        for r in 0..n {
            for c in 0..n {
                if r != c {
                    assert_eq!(m.m[(r, c)], 0.0);
                }
                assert!((m.k[(r, c)] - m.k[(c, r)]).abs() < 1e-9);
                assert!((m.c[(r, c)] - m.c[(c, r)]).abs() < 1e-9);
            }
        }
        let (a, b) = (1.15, 1.45);
        let (kf, kr) = (38000.0, 33000.0);
        assert!((m.k[(0, 1)] - (a * kf - b * kr)).abs() < 1e-9);
        assert!((m.k[(0, 0)] - (kf + kr)).abs() < 1e-9);
        assert!((m.k[(1, 1)] - (a * a * kf + b * b * kr)).abs() < 1e-9);
    }
    let hc = half_car().matrices();
    assert_eq!(hc.k[(2, 2)], 38000.0 + 420000.0);
    assert_eq!(hc.k[(0, 2)], -38000.0);
    assert_eq!(hc.k[(1, 2)], -1.15 * 38000.0);
    assert_eq!(hc.k[(1, 3)], 1.45 * 33000.0);
    assert_eq!(hc.k_road[(2, 0)], 420000.0);
    assert_eq!(hc.k_road[(0, 0)], 0.0);
}

/// Undamped frequencies from the symmetric form M^-½ K M^-½ (M diagonal).
fn undamped_hz(v: &Vehicle) -> Vec<f64> {
    let m = v.matrices();
    let s = DMatrix::from_diagonal(&m.m.diagonal().map(|x| 1.0 / x.sqrt()));
    let sym = &s * &m.k * &s;
    let mut w2: Vec<f64> = sym.symmetric_eigen().eigenvalues.iter().copied().collect();
    w2.sort_by(f64::total_cmp);
    w2.iter()
        .map(|x| x.sqrt() / (2.0 * std::f64::consts::PI))
        .collect()
}

#[test]
fn two_dof_frequencies_match_the_closed_form_quadratic() {
    // det(K − ω²M) = 0 for the 2×2 case: m·J·ω⁴ − (m·k22 + J·k11)·ω² +
    // (k11·k22 − k12²) = 0 (closed form, e.g. Thomson, Theory of Vibration
    // with Applications, §5.1).
    let v = body_on_springs();
    let (m, j) = (1250.0, 2100.0);
    let (a, b, kf, kr): (f64, f64, f64, f64) = (1.15, 1.45, 38000.0, 33000.0);
    let k11 = kf + kr;
    let k12 = a * kf - b * kr;
    let k22 = a * a * kf + b * b * kr;
    let p = m * k22 + j * k11;
    let disc = (p * p - 4.0 * m * j * (k11 * k22 - k12 * k12)).sqrt();
    let lo = ((p - disc) / (2.0 * m * j)).sqrt() / (2.0 * std::f64::consts::PI);
    let hi = ((p + disc) / (2.0 * m * j)).sqrt() / (2.0 * std::f64::consts::PI);
    let got = undamped_hz(&v);
    assert!((got[0] - lo).abs() / lo < 1e-10, "{got:?} vs {lo}");
    assert!((got[1] - hi).abs() / hi < 1e-10, "{got:?} vs {hi}");
    // Plausibility (common practice): body bounce of a car near 1–1.5 Hz.
    assert!(lo > 0.8 && lo < 1.6, "bounce {lo} Hz");
}

#[test]
fn with_a_kf_equal_b_kr_the_modes_are_pure_heave_and_pure_pitch() {
    // Textbook fact: no static coupling when a·k_f = b·k_r; the heave
    // frequency is √((k_f+k_r)/m) and the pitch frequency √((a²k_f+b²k_r)/J).
    let text = HALF_CAR
        .replace("unsprung_mass = 85.0\ntyre_rate = 420000.0\n", "")
        .replace("unsprung_mass = 75.0\ntyre_rate = 420000.0\n", "")
        .replace("spring_rate = 38000.0", "spring_rate = 41608.695652173914");
    let v = parse_vehicle(&text, Path::new("decoupled.toml")).unwrap();
    let (a, b, kf, kr): (f64, f64, f64, f64) = (1.15, 1.45, 41608.695652173914, 33000.0);
    assert!((a * kf - b * kr).abs() < 1e-6);
    let mats = v.matrices();
    let s = DMatrix::from_diagonal(&mats.m.diagonal().map(|x| 1.0 / x.sqrt()));
    let eig = (&s * &mats.k * &s).symmetric_eigen();
    for col in 0..2 {
        let shape = eig.eigenvectors.column(col);
        // One component vanishes: the mode is pure heave or pure pitch.
        assert!(shape[0].abs() < 1e-9 || shape[1].abs() < 1e-9, "{shape}");
    }
    let got = undamped_hz(&v);
    let heave = ((kf + kr) / 1250.0_f64).sqrt() / (2.0 * std::f64::consts::PI);
    let pitch = ((a * a * kf + b * b * kr) / 2100.0_f64).sqrt() / (2.0 * std::f64::consts::PI);
    let mut want = [heave, pitch];
    want.sort_by(f64::total_cmp);
    for (g, w) in got.iter().zip(want) {
        assert!((g - w).abs() / w < 1e-10, "{got:?} vs {want:?}");
    }
}

#[test]
fn the_element_model_equals_the_state_space_form_while_linear() {
    // Chain of trust: the nonlinear element evaluation and the assembled
    // matrices describe the same linear system (both derived here, checked
    // against each other at states small enough to stay in contact).
    for v in [half_car(), body_on_springs()] {
        let n = v.dof_count();
        let force_x = 0.8;
        let ss = v.state_space(force_x);
        let mut seed = 12345u64;
        let mut rnd = || {
            seed = seed
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            ((seed >> 11) as f64 / (1u64 << 53) as f64) - 0.5
        };
        for _ in 0..20 {
            let mut q = [0.0; MAX_DOF];
            let mut qd = [0.0; MAX_DOF];
            for j in 0..n {
                q[j] = 0.002 * rnd();
                qd[j] = 0.02 * rnd();
            }
            let road = RoadState {
                elevation_m: [0.002 * rnd(), 0.002 * rnd()],
                rate_m_s: [0.02 * rnd(), 0.02 * rnd()],
            };
            let f = 100.0 * rnd();
            let mut qdd = [0.0; MAX_DOF];
            let st = v.evaluate(&q, &qd, &road, f, force_x, &mut qdd);
            assert!(st.in_contact.iter().all(|c| *c));
            let mut x = DVector::zeros(2 * n);
            for j in 0..n {
                x[j] = q[j];
                x[n + j] = qd[j];
            }
            let u = DVector::from_vec(vec![
                road.elevation_m[0],
                road.elevation_m[1],
                road.rate_m_s[0],
                road.rate_m_s[1],
                f,
            ]);
            let xd = &ss.a * &x + &ss.b * &u;
            for j in 0..n {
                assert!(
                    (xd[n + j] - qdd[j]).abs() < 1e-9 * (1.0 + qdd[j].abs()),
                    "dof {j}"
                );
            }
        }
    }
}

#[test]
fn static_loads_balance_the_weight() {
    // Statics, force and moment balance: the axle loads carry the weight
    // (ΣF = 0) and their moments about the CG cancel (ΣM = 0).
    let v = half_car();
    let s = v.static_suspension_n();
    let w = 1250.0 * GRAVITY_M_S2;
    assert!((s[0] + s[1] - w).abs() < 1e-9);
    // Moment balance about the CG.
    assert!((s[0] * 1.15 - s[1] * 1.45).abs() < 1e-9);
    let c = v.static_contact_n();
    assert!((c[0] + c[1] - (1250.0 + 85.0 + 75.0) * GRAVITY_M_S2).abs() < 1e-9);
}

#[test]
fn a_tyre_cannot_pull_and_stops_engage_past_their_clearance() {
    let mut v = half_car();
    v.axles[0].stops = Some(Stops {
        bump_clearance_m: Some(0.05),
        rebound_clearance_m: Some(0.07),
        rate_n_m: 1.0e6,
    });
    let mut qdd = [0.0; MAX_DOF];
    // Front wheel 0.06 m up into the body: stop engaged by 0.01 m.
    let mut q = [0.0; MAX_DOF];
    q[2] = 0.06;
    let road = RoadState {
        elevation_m: [0.06, 0.0],
        rate_m_s: [0.0; 2],
    };
    let st = v.evaluate(&q, &[0.0; MAX_DOF], &road, 0.0, 0.0, &mut qdd);
    assert!((st.suspension_n[0] - (38000.0 * 0.06 + 1.0e6 * 0.01)).abs() < 1e-6);
    // Road drops 0.1 m below a wheel at rest: the tyre would pull 42 kN,
    // more than the static load, so it leaves the road.
    let road = RoadState {
        elevation_m: [-0.1, 0.0],
        rate_m_s: [0.0; 2],
    };
    let st = v.evaluate(&[0.0; MAX_DOF], &[0.0; MAX_DOF], &road, 0.0, 0.0, &mut qdd);
    assert!(!st.in_contact[0]);
    assert!((st.contact_n[0] + v.static_contact_n()[0]).abs() < 1e-9);
    assert!(st.in_contact[1]);
}

#[test]
fn axle_kinematics_are_the_element_models_travel_rate_and_contact_bit_for_bit() {
    // Self-check (no outside reference): the piecewise solver's lean regime
    // test must read exactly what the full element model computes, or it
    // would switch at other instants. States spread over and beyond the
    // stops and lift-off, with and without unsprung masses, asymmetric
    // dampers and stops.
    let stops = Stops {
        bump_clearance_m: Some(0.05),
        rebound_clearance_m: Some(0.07),
        rate_n_m: 1.0e6,
    };
    let mut vehicles = vec![half_car(), body_on_springs()];
    for base in [half_car(), body_on_springs()] {
        let mut v = base;
        for axle in &mut v.axles {
            axle.stops = Some(stops);
            axle.damper.bump_n_s_m *= 0.4;
            axle.damper.rebound_n_s_m *= 1.6;
        }
        vehicles.push(v);
    }
    // A small linear congruential generator (Knuth's MMIX constants).
    let mut seed = 0x2545_f491_4f6c_dd1du64;
    let mut next = |scale: f64| {
        seed = seed
            .wrapping_mul(6_364_136_223_846_793_005)
            .wrapping_add(1_442_695_040_888_963_407);
        scale * ((seed >> 11) as f64 / (1u64 << 53) as f64 - 0.5)
    };
    let mut lifted = 0;
    for v in &vehicles {
        let model = v.element_model();
        for _ in 0..2000 {
            let mut q = [0.0; MAX_DOF];
            let mut qd = [0.0; MAX_DOF];
            for j in 0..v.dof_count() {
                q[j] = next(0.4);
                qd[j] = next(4.0);
            }
            let road = RoadState {
                elevation_m: [next(0.4), next(0.4)],
                rate_m_s: [next(4.0), next(4.0)],
            };
            let mut qdd = [0.0; MAX_DOF];
            let full = model.evaluate_with(&q, &qd, &road, 0.0, 0.0, Contact::LiftOff, &mut qdd);
            let lean = model.axle_kinematics(&q, &qd, &road);
            assert_eq!(lean, AxleKinematics::from(&full), "{q:?} {qd:?} {road:?}");
            // The same read from the solvers' state layout `[q, q̇]`.
            let mut x = [0.0; 2 * MAX_DOF];
            x[..MAX_DOF].copy_from_slice(&q);
            x[MAX_DOF..].copy_from_slice(&qd);
            for i in 0..2 {
                let flat = model.axle_margins_of_state(i, &x, &road);
                let arrays = model.axle_margins(i, &q, &qd, &road);
                assert_eq!(flat.0.to_bits(), arrays.0.to_bits());
                assert_eq!(flat.1.to_bits(), arrays.1.to_bits());
                assert_eq!(flat.2.to_bits(), arrays.2.to_bits());
            }
            lifted += full.in_contact.iter().filter(|c| !**c).count();
        }
    }
    assert!(lifted > 100, "the states must reach lift-off: {lifted}");
}
