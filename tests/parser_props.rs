//! Property-based testing of every parser a user can reach (proptest):
//! arbitrary and mutated inputs must give a value or an error, never a
//! panic. Each property runs `CASES` inputs (proptest's default is 256);
//! with eight properties that is 16,000 inputs per `cargo test`.

use std::path::Path;
use std::str::FromStr;

use proptest::prelude::*;
use roughride::batch::values::{Shard, parse_duration_s, parse_speed_list_m_s, parse_speed_m_s};
use roughride::comfort::Weighting;
use roughride::comfort::read_record_from;
use roughride::road::iso8608::RoadClass;
use roughride::road::obstacle::Obstacle;
use roughride::road::read_profile_from;
use roughride::vehicle::parse_vehicle;

const CASES: u32 = 2000;

const GOOD_CAR: &str = "[body]\nmass = 1000.0\npitch_inertia = 1500.0\n[front]\ncg_distance = 1.2\nspring_rate = 30000.0\ndamping = 2500.0\nunsprung_mass = 40.0\ntyre_rate = 200000.0\n[rear]\ncg_distance = 1.4\nspring_rate = 30000.0\ndamping_bump = 2000.0\ndamping_rebound = 4000.0\nbump_clearance = 0.05\nstop_rate = 100000.0\n[[seat]]\nx = 0.3\n";

/// Numbers a user might type, including the awkward ones.
fn number_text() -> impl Strategy<Value = String> {
    prop_oneof![
        any::<f64>().prop_map(|v| format!("{v}")),
        (-1e6f64..1e6).prop_map(|v| format!("{v}")),
        Just("nan".to_string()),
        Just("inf".to_string()),
        Just("-0.0".to_string()),
        Just("1e309".to_string()),
        Just("\"12\"".to_string()),
        Just("".to_string()),
        "[a-z0-9.e+-]{0,8}",
    ]
}

proptest! {
    #![proptest_config(ProptestConfig { cases: CASES, ..ProptestConfig::default() })]

    #[test]
    fn vehicle_files_with_any_text_never_panic(text in "\\PC{0,300}") {
        let _ = parse_vehicle(&text, Path::new("fuzz.toml"));
    }

    #[test]
    fn vehicle_files_with_mutated_numbers_never_panic(which in 0usize..15, value in number_text()) {
        // Replace the `which`-th number of a valid file by `value`.
        let mut count = 0;
        let text: String = GOOD_CAR
            .lines()
            .map(|line| match line.split_once(" = ") {
                Some((k, v)) if v.parse::<f64>().is_ok() => {
                    count += 1;
                    if count - 1 == which { format!("{k} = {value}") } else { line.to_string() }
                }
                _ => line.to_string(),
            })
            .collect::<Vec<_>>()
            .join("\n");
        if let Ok(v) = parse_vehicle(&text, Path::new("fuzz.toml")) {
            // Whatever is accepted is physically meaningful.
            prop_assert!(v.body_mass_kg > 0.0 && v.pitch_inertia_kg_m2 > 0.0);
            prop_assert!(v.axles[0].x_m > 0.0 && v.axles[1].x_m < 0.0);
            prop_assert!(v.axles.iter().all(|a| a.spring_n_m > 0.0 && a.spring_n_m.is_finite()));
        }
    }

    #[test]
    fn profile_csv_with_any_bytes_never_panics(bytes in proptest::collection::vec(any::<u8>(), 0..400)) {
        let _ = read_profile_from(&bytes[..], Path::new("fuzz.csv"));
    }

    #[test]
    fn profile_csv_with_any_rows_never_panics(rows in proptest::collection::vec((number_text(), number_text()), 0..40)) {
        let mut text = String::from("distance_m,elevation_m\n");
        for (x, z) in &rows {
            text.push_str(&format!("{x},{z}\n"));
        }
        if let Ok((p, _)) = read_profile_from(text.as_bytes(), Path::new("fuzz.csv")) {
            prop_assert!(p.len() >= 2);
            prop_assert!(p.spacing_m > 0.0 && p.spacing_m.is_finite());
            prop_assert!(p.elevation_m.iter().all(|z| z.is_finite()));
        }
    }

    #[test]
    fn acceleration_records_never_panic(rows in proptest::collection::vec((number_text(), number_text()), 0..40)) {
        let mut text = String::from("time_s,seat_z\n");
        for (t, a) in &rows {
            text.push_str(&format!("{t},{a}\n"));
        }
        let _ = read_record_from(text.as_bytes(), Path::new("fuzz.csv"), "seat_z");
    }

    #[test]
    fn option_values_never_panic(text in "\\PC{0,24}") {
        let _ = parse_speed_m_s(&text);
        let _ = parse_speed_list_m_s(&text);
        let _ = parse_duration_s(&text);
        let _ = Shard::parse(&text);
        let _ = RoadClass::from_str(&text);
        let _ = Weighting::from_str(&text);
        let _ = Obstacle::from_str(&text);
    }

    #[test]
    fn range_like_option_values_never_panic(a in number_text(), b in number_text(), c in number_text(), unit in prop_oneof![Just(String::new()), Just("kmh".to_string())]) {
        let text = format!("{a}{unit}:{b}{unit}:{c}{unit}");
        if let Ok(v) = parse_speed_list_m_s(&text) {
            prop_assert!(!v.is_empty() && v.len() <= roughride::batch::values::MAX_RANGE_VALUES);
            prop_assert!(v.iter().all(|s| s.is_finite() && *s > 0.0));
        }
        let _ = Shard::parse(&format!("{a}/{b}"));
    }

    #[test]
    fn obstacle_specs_never_panic(kind in prop_oneof![Just("bump".to_string()), Just("pothole".to_string()), Just("step".to_string()), "[a-z]{0,6}"], values in proptest::collection::vec(number_text(), 0..5)) {
        let _ = Obstacle::from_str(&format!("{kind}:{}", values.join(",")));
    }
}
