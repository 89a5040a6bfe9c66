//! What the measures of one channel suggest: the comfort reactions of
//! ISO 2631-1 Annex C, the health guidance caution zone of Annex B
//! (equations B.1 and B.2) for a daily exposure duration, and the daily
//! exposure A(8) and VDV against the action and limit values of EU Directive
//! 2002/44/EC. Always printed with [`HEALTH_CAUTION`].
//!
//! The health statements apply to seated persons with Wk (z, k = 1) or
//! Wd (x, y, k = 1.4) (ISO 2631-1 7.2.3; EU Directive 2002/44/EC Annex A);
//! for the other weightings they are computed with k = 1 and flagged as
//! outside their scope.
//!
//! # Several axes at one seat ([`seat_guidance`])
//! The vibration total value of ISO 2631-1 6.5 combines the axes,
//! `a_v = (kx²·awx² + ky²·awy² + kz²·awz²)^½` ([`total_value`]). Which
//! factors and which rule apply depends on the purpose (ISO 2631-1:1997;
//! the clause numbers and factors are from memory):
//! - comfort (clause 8.2): on the seat surface kx = ky = kz = 1
//!   ([`COMFORT_SEAT_K`]); the comfort reaction of Annex C is read from the
//!   total value with these factors;
//! - health (clause 7.2.3): kx = ky = 1.4, kz = 1 ([`HEALTH_SEAT_K`]), and
//!   the assessment is made for each axis independently, against the axis
//!   with the highest k·aw (the dominant-axis rule). The standard notes
//!   that the vector sum is sometimes used when two or more axes are
//!   comparable; [`SeatTotals::health_m_s2`] reports it for information,
//!   but the health guidance follows the dominant axis.

use serde::Serialize;

use super::{Measures, Weighting};

/// The caution printed beside every health-related result.
pub const HEALTH_CAUTION: &str = "These are estimates from a recorded or simulated signal, \
not measurements made to the standard. ISO 2631-1, local regulation and qualified \
occupational-health practice govern any decision about exposure.";

/// Reference daily exposure, s (8 h; Directive 2002/44/EC A(8)).
pub const REFERENCE_DAY_S: f64 = 8.0 * 3600.0;
/// Directive 2002/44/EC Art. 3(2)(a): daily exposure limit value A(8), m/s².
pub const A8_LIMIT_M_S2: f64 = 1.15;
/// Directive 2002/44/EC Art. 3(2)(b): daily exposure action value A(8), m/s².
pub const A8_ACTION_M_S2: f64 = 0.5;
/// Directive 2002/44/EC Art. 3(2)(a): limit value as VDV, m/s^1.75.
pub const VDV_LIMIT_M_S175: f64 = 21.0;
/// Directive 2002/44/EC Art. 3(2)(b): action value as VDV, m/s^1.75.
pub const VDV_ACTION_M_S175: f64 = 9.1;
/// Lower bound of the Annex B caution zone at 8 h, m/s² (from memory: the
/// zone "for 4–8 h is roughly 0.45–0.9 m/s²"; sources differ slightly).
pub const CAUTION_LOWER_8H_M_S2: f64 = 0.45;
/// Upper bound of the Annex B caution zone at 8 h, m/s² (from memory, as above).
pub const CAUTION_UPPER_8H_M_S2: f64 = 0.9;

/// One comfort reaction band of ISO 2631-1 Annex C, `[lower, upper)` in m/s².
#[derive(Debug, Clone, Copy, Serialize)]
pub struct ComfortBand {
    /// Lower edge, m/s² (inclusive).
    pub lower_m_s2: f64,
    /// Upper edge, m/s² (exclusive; infinite for the last band).
    pub upper_m_s2: f64,
    /// The reaction.
    pub label: &'static str,
}

/// ISO 2631-1 Annex C (C.2.3): the bands overlap, so a value may fall in two.
pub const COMFORT_BANDS: [ComfortBand; 6] = [
    ComfortBand {
        lower_m_s2: 0.0,
        upper_m_s2: 0.315,
        label: "not uncomfortable",
    },
    ComfortBand {
        lower_m_s2: 0.315,
        upper_m_s2: 0.63,
        label: "a little uncomfortable",
    },
    ComfortBand {
        lower_m_s2: 0.5,
        upper_m_s2: 1.0,
        label: "fairly uncomfortable",
    },
    ComfortBand {
        lower_m_s2: 0.8,
        upper_m_s2: 1.6,
        label: "uncomfortable",
    },
    ComfortBand {
        lower_m_s2: 1.25,
        upper_m_s2: 2.5,
        label: "very uncomfortable",
    },
    ComfortBand {
        lower_m_s2: 2.0,
        upper_m_s2: f64::INFINITY,
        label: "extremely uncomfortable",
    },
];

/// Where a value stands against the caution zone of one Annex B equation.
#[derive(Debug, Clone, Serialize)]
pub struct CautionZone {
    /// "B.1" (aw·T^½ constant) or "B.2" (aw·T^¼ constant).
    pub equation: &'static str,
    /// Zone lower bound at the exposure duration, m/s².
    pub lower_m_s2: f64,
    /// Zone upper bound at the exposure duration, m/s².
    pub upper_m_s2: f64,
    /// "below", "within" or "above" the zone, for k·aw.
    pub position: &'static str,
    /// Daily exposure at which k·aw reaches the lower bound, s (None for aw = 0).
    pub time_to_lower_s: Option<f64>,
    /// Daily exposure at which k·aw reaches the upper bound, s (None for aw = 0).
    pub time_to_upper_s: Option<f64>,
}

/// The guidance for one channel at one daily exposure duration.
#[derive(Debug, Clone, Serialize)]
pub struct Guidance {
    /// Daily exposure duration assumed, s.
    pub exposure_s: f64,
    /// Every Annex C band holding aw (they overlap), mildest first.
    pub comfort_reactions: Vec<&'static str>,
    /// The same joined into one phrase, e.g. "a little uncomfortable / fairly uncomfortable".
    pub comfort_label: String,
    /// True for Wk and Wd, the weightings Annex B and the Directive address.
    pub health_applicable: bool,
    /// Multiplying factor k applied to aw and VDV for health (1.4 for Wd, else 1).
    pub health_k: f64,
    /// Annex B caution zone by equation B.1.
    pub caution_zone_b1: CautionZone,
    /// Annex B caution zone by equation B.2.
    pub caution_zone_b2: CautionZone,
    /// Daily exposure A(8) = k·aw·√(T/8 h), m/s².
    pub a8_m_s2: f64,
    /// Directive action value for A(8), m/s².
    pub a8_action_m_s2: f64,
    /// Directive limit value for A(8), m/s².
    pub a8_limit_m_s2: f64,
    /// "below the action value", "above the action value" or "above the limit value".
    pub a8_status: &'static str,
    /// Daily VDV = k·VDV·(T/T_record)^¼, m/s^1.75.
    pub vdv_exposure_m_s175: f64,
    /// Directive action value as VDV, m/s^1.75.
    pub vdv_action_m_s175: f64,
    /// Directive limit value as VDV, m/s^1.75.
    pub vdv_limit_m_s175: f64,
    /// Status of the daily VDV, worded as for A(8).
    pub vdv_status: &'static str,
    /// [`HEALTH_CAUTION`].
    pub caution: &'static str,
    /// For a seat evaluated in several axes ([`seat_guidance`]): the axis
    /// whose k·aw is largest, on which the health statements rest.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub health_axis: Option<&'static str>,
    /// For a seat evaluated in several axes: the value the comfort reaction
    /// was read from (the comfort total value), m/s².
    #[serde(skip_serializing_if = "Option::is_none")]
    pub comfort_value_m_s2: Option<f64>,
}

/// Multiplying factors (kx, ky, kz) on the seat surface for comfort
/// (ISO 2631-1 clause 8.2; from memory).
pub const COMFORT_SEAT_K: [f64; 3] = [1.0, 1.0, 1.0];
/// Multiplying factors (kx, ky, kz) on the seat surface for health
/// (ISO 2631-1 clause 7.2.3; EU Directive 2002/44/EC Annex A.1).
pub const HEALTH_SEAT_K: [f64; 3] = [1.4, 1.4, 1.0];

/// The vibration total value `(Σ kᵢ²·awᵢ²)^½` of ISO 2631-1 6.5 for the
/// axes' aw `[x, y, z]` and factors `k`, m/s².
pub fn total_value(aw_xyz_m_s2: [f64; 3], k: [f64; 3]) -> f64 {
    aw_xyz_m_s2
        .iter()
        .zip(k)
        .map(|(a, k)| (k * a) * (k * a))
        .sum::<f64>()
        .sqrt()
}

/// A seat's vibration total values, m/s².
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct SeatTotals {
    /// With the comfort factors ([`COMFORT_SEAT_K`]): the `total_value`.
    pub comfort_m_s2: f64,
    /// With the health factors ([`HEALTH_SEAT_K`]); for information, the
    /// health guidance uses the dominant axis.
    pub health_m_s2: f64,
}

/// The total values of a seat from its fore-aft (x) and vertical (z)
/// evaluations; the lateral axis (y) is not modelled and counts as 0.
pub fn seat_totals(vertical: &Measures, fore_aft: &Measures) -> SeatTotals {
    let aw = [fore_aft.aw, 0.0, vertical.aw];
    SeatTotals {
        comfort_m_s2: total_value(aw, COMFORT_SEAT_K),
        health_m_s2: total_value(aw, HEALTH_SEAT_K),
    }
}

/// The guidance for a seat evaluated vertically and fore and aft: health
/// statements for the dominant axis (largest k·aw, ISO 2631-1 7.2.3; the
/// vertical axis on a tie), the comfort reaction for the comfort total
/// value (ISO 2631-1 6.5 and 8.2). With no fore-aft motion this is
/// [`guidance`] of the vertical channel, number for number.
pub fn seat_guidance(vertical: &Measures, fore_aft: &Measures, exposure_s: f64) -> Guidance {
    let k_of = |m: &Measures| guidance_k(m.weighting.parse::<Weighting>().ok());
    let fore_aft_dominates = k_of(fore_aft) * fore_aft.aw > k_of(vertical) * vertical.aw;
    let (axis, m) = if fore_aft_dominates {
        ("fore_aft", fore_aft)
    } else {
        ("vertical", vertical)
    };
    let mut g = guidance(m, exposure_s);
    let comfort = seat_totals(vertical, fore_aft).comfort_m_s2;
    g.comfort_reactions = comfort_reactions(comfort);
    g.comfort_label = g.comfort_reactions.join(" / ");
    g.health_axis = Some(axis);
    g.comfort_value_m_s2 = Some(comfort);
    g
}

/// The health factor k of a weighting: 1.4 for Wd (x, y), else 1
/// (ISO 2631-1 7.2.3: kz = 1 for Wk).
fn guidance_k(w: Option<Weighting>) -> f64 {
    if w == Some(Weighting::Wd) {
        HEALTH_SEAT_K[0]
    } else {
        HEALTH_SEAT_K[2]
    }
}

/// The Annex C bands that hold `aw_m_s2`.
pub fn comfort_reactions(aw_m_s2: f64) -> Vec<&'static str> {
    COMFORT_BANDS
        .iter()
        .filter(|b| aw_m_s2 >= b.lower_m_s2 && aw_m_s2 < b.upper_m_s2)
        .map(|b| b.label)
        .collect()
}

fn status(value: f64, action: f64, limit: f64) -> &'static str {
    if value > limit {
        "above the limit value"
    } else if value > action {
        "above the action value"
    } else {
        "below the action value"
    }
}

/// Annex B zone for `aw` (already multiplied by k) at `exposure_s`, with
/// bounds scaled from 8 h by `(8 h / T)^p`: p = ½ for B.1, ¼ for B.2.
fn zone(equation: &'static str, p: f64, aw: f64, exposure_s: f64) -> CautionZone {
    let scale = (REFERENCE_DAY_S / exposure_s).powf(p);
    let (lower, upper) = (CAUTION_LOWER_8H_M_S2 * scale, CAUTION_UPPER_8H_M_S2 * scale);
    let position = if aw < lower {
        "below"
    } else if aw > upper {
        "above"
    } else {
        "within"
    };
    // aw·T^p = bound₈·(8 h)^p  ⇒  T = 8 h·(bound₈/aw)^(1/p).
    let time = |bound: f64| (aw > 0.0).then(|| REFERENCE_DAY_S * (bound / aw).powf(1.0 / p));
    CautionZone {
        equation,
        lower_m_s2: lower,
        upper_m_s2: upper,
        position,
        time_to_lower_s: time(CAUTION_LOWER_8H_M_S2),
        time_to_upper_s: time(CAUTION_UPPER_8H_M_S2),
    }
}

/// The guidance for `m` at a daily exposure of `exposure_s` seconds (> 0).
pub fn guidance(m: &Measures, exposure_s: f64) -> Guidance {
    let w = m.weighting.parse::<Weighting>().ok();
    let health_applicable = matches!(w, Some(Weighting::Wk | Weighting::Wd));
    // ISO 2631-1 7.2.3: kx = ky = 1.4 (Wd), kz = 1 (Wk), seated.
    let health_k = guidance_k(w);
    let aw_k = health_k * m.aw;
    let reactions = comfort_reactions(m.aw);
    let a8 = aw_k * (exposure_s / REFERENCE_DAY_S).sqrt();
    // Fourth-power dose: the record's VDV extended to the exposure duration.
    let vdv_exposure = if m.duration_s > 0.0 {
        health_k * m.vdv * (exposure_s / m.duration_s).powf(0.25)
    } else {
        0.0
    };
    Guidance {
        exposure_s,
        comfort_label: reactions.join(" / "),
        comfort_reactions: reactions,
        health_applicable,
        health_k,
        caution_zone_b1: zone("B.1", 0.5, aw_k, exposure_s),
        caution_zone_b2: zone("B.2", 0.25, aw_k, exposure_s),
        a8_m_s2: a8,
        a8_action_m_s2: A8_ACTION_M_S2,
        a8_limit_m_s2: A8_LIMIT_M_S2,
        a8_status: status(a8, A8_ACTION_M_S2, A8_LIMIT_M_S2),
        vdv_exposure_m_s175: vdv_exposure,
        vdv_action_m_s175: VDV_ACTION_M_S175,
        vdv_limit_m_s175: VDV_LIMIT_M_S175,
        vdv_status: status(vdv_exposure, VDV_ACTION_M_S175, VDV_LIMIT_M_S175),
        caution: HEALTH_CAUTION,
        health_axis: None,
        comfort_value_m_s2: None,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn measures(weighting: &str, aw: f64, vdv: f64, duration_s: f64) -> Measures {
        Measures {
            weighting: weighting.into(),
            accel_rms: aw,
            aw,
            vdv,
            mtvv: aw,
            crest_factor: 1.0,
            peak_weighted: aw,
            duration_s,
            mtvv_ratio: 1.0,
            vdv_ratio: 1.0,
            additional_methods_advised: false,
        }
    }

    #[test]
    fn overlapping_annex_c_bands_are_all_reported() {
        // ISO 2631-1 Annex C (C.2.3) bands.
        assert_eq!(comfort_reactions(0.2), ["not uncomfortable"]);
        assert_eq!(
            comfort_reactions(0.55),
            ["a little uncomfortable", "fairly uncomfortable"]
        );
        assert_eq!(comfort_reactions(0.7), ["fairly uncomfortable"]);
        assert_eq!(
            comfort_reactions(0.9),
            ["fairly uncomfortable", "uncomfortable"]
        );
        assert_eq!(
            comfort_reactions(2.2),
            ["very uncomfortable", "extremely uncomfortable"]
        );
        assert_eq!(comfort_reactions(5.0), ["extremely uncomfortable"]);
        // Every value lands in at least one band.
        for i in 0..400 {
            assert!(!comfort_reactions(i as f64 * 0.01).is_empty());
        }
    }

    #[test]
    fn a8_scales_with_the_square_root_of_time_and_k_for_wd() {
        // EU Directive 2002/44/EC Annex A.1: A(8) = k·aw·√(T/T0), T0 = 8 h,
        // k = 1.4 for x, y (Wd) and 1 for z (Wk).
        let g = guidance(&measures("Wk", 0.8, 10.0, 3600.0), 2.0 * 3600.0);
        assert!((g.a8_m_s2 - 0.8 * 0.5).abs() < 1e-12);
        assert_eq!(g.a8_status, "below the action value");
        let g = guidance(&measures("Wd", 0.8, 10.0, 3600.0), 8.0 * 3600.0);
        assert!((g.a8_m_s2 - 1.12).abs() < 1e-12);
        assert_eq!(g.a8_status, "above the action value");
        assert!(g.health_applicable);
        let g = guidance(&measures("Wk", 1.2, 10.0, 3600.0), 8.0 * 3600.0);
        assert_eq!(g.a8_status, "above the limit value");
        assert!(!guidance(&measures("Wf", 1.2, 1.0, 10.0), 3600.0).health_applicable);
    }

    #[test]
    fn daily_vdv_extends_the_dose_by_the_fourth_root_of_time() {
        // VDV is a fourth-power dose: 16 repeats of a record double it
        // (ISO 2631-1 6.3.2; Directive 2002/44/EC Annex A.1).
        let g = guidance(&measures("Wk", 0.5, 6.0, 1800.0), 16.0 * 1800.0);
        assert!((g.vdv_exposure_m_s175 - 12.0).abs() < 1e-9);
        assert_eq!(g.vdv_status, "above the action value");
    }

    #[test]
    fn caution_zone_bounds_follow_equations_b1_and_b2() {
        // ISO 2631-1 B.1: aw·T^½ constant; B.2: aw·T^¼ constant. The 8 h
        // anchor is from memory, so only the scaling laws are checked here.
        let g1 = guidance(&measures("Wk", 0.6, 1.0, 60.0), 2.0 * 3600.0);
        let g2 = guidance(&measures("Wk", 0.6, 1.0, 60.0), 8.0 * 3600.0);
        let (a, b) = (&g1.caution_zone_b1, &g2.caution_zone_b1);
        assert!(
            (a.lower_m_s2 * 2.0f64.sqrt() * 3600f64.sqrt()
                - b.lower_m_s2 * (8.0f64 * 3600.0).sqrt())
            .abs()
                < 1e-9
        );
        assert!((a.upper_m_s2 / b.upper_m_s2 - 2.0).abs() < 1e-12);
        let (a, b) = (&g1.caution_zone_b2, &g2.caution_zone_b2);
        assert!((a.upper_m_s2 / b.upper_m_s2 - 4f64.powf(0.25)).abs() < 1e-12);
        // The time at which aw reaches a bound puts aw exactly on that bound.
        for z in [&g2.caution_zone_b1, &g2.caution_zone_b2] {
            let p = if z.equation == "B.1" { 0.5 } else { 0.25 };
            let t = z.time_to_upper_s.unwrap();
            let bound_at_t = CAUTION_UPPER_8H_M_S2 * (REFERENCE_DAY_S / t).powf(p);
            assert!((bound_at_t - 0.6).abs() < 1e-12);
        }
        assert_eq!(g2.caution_zone_b1.position, "within");
        assert_eq!(
            guidance(&measures("Wk", 0.1, 1.0, 60.0), 3600.0)
                .caution_zone_b1
                .position,
            "below"
        );
        assert!(
            guidance(&measures("Wk", 0.0, 0.0, 60.0), 3600.0)
                .caution_zone_b1
                .time_to_lower_s
                .is_none()
        );
    }

    #[test]
    fn the_total_value_combines_the_axes_with_the_purposes_factors() {
        // ISO 2631-1 6.5, by hand: awx = 0.3, awy = 0.4, awz = 1.2 m/s².
        // Comfort, seat surface, k = 1 (8.2): √(0.09 + 0.16 + 1.44) = 1.3.
        let aw = [0.3, 0.4, 1.2];
        assert!((total_value(aw, COMFORT_SEAT_K) - 1.3).abs() < 1e-15);
        // Health, kx = ky = 1.4, kz = 1 (7.2.3): √(0.1764 + 0.3136 + 1.44)
        // = √1.93 = 1.389244398944980…
        assert!((total_value(aw, HEALTH_SEAT_K) - 1.389_244_398_944_98).abs() < 1e-14);
        // One axis alone is its own k·aw.
        assert_eq!(total_value([0.0, 0.0, 0.61], COMFORT_SEAT_K), 0.61);
        assert!((total_value([0.5, 0.0, 0.0], HEALTH_SEAT_K) - 0.7).abs() < 1e-15);
    }

    #[test]
    fn seat_guidance_reads_comfort_from_the_total_and_health_from_the_dominant_axis() {
        let z = measures("Wk", 0.6, 8.0, 3600.0);
        let x = measures("Wd", 0.5, 6.0, 3600.0);
        let g = seat_guidance(&z, &x, 8.0 * 3600.0);
        // Comfort: √(0.5² + 0.6²) = 0.781 m/s², Annex C: fairly uncomfortable
        // only (0.6 alone would also be "a little uncomfortable").
        assert!((g.comfort_value_m_s2.unwrap() - 0.61f64.sqrt()).abs() < 1e-15);
        assert_eq!(g.comfort_reactions, ["fairly uncomfortable"]);
        assert_eq!(
            guidance(&z, 8.0 * 3600.0).comfort_reactions,
            ["a little uncomfortable", "fairly uncomfortable"]
        );
        // Health: 1.4·0.5 = 0.7 > 1·0.6, so fore-aft governs (7.2.3), with
        // A(8) = 1.4·0.5 at 8 h and the daily VDV 1.4·6·8^¼ (Directive
        // 2002/44/EC Annex A.1).
        assert_eq!(g.health_axis, Some("fore_aft"));
        assert_eq!(g.health_k, 1.4);
        assert!((g.a8_m_s2 - 0.7).abs() < 1e-15);
        assert!((g.vdv_exposure_m_s175 - 1.4 * 6.0 * 8f64.powf(0.25)).abs() < 1e-12);
        // A smaller fore-aft aw leaves health on the vertical axis.
        let x = measures("Wd", 0.4, 6.0, 3600.0);
        let g = seat_guidance(&z, &x, 8.0 * 3600.0);
        assert_eq!(g.health_axis, Some("vertical"));
        assert!((g.a8_m_s2 - 0.6).abs() < 1e-15);
        // No fore-aft motion: the vertical guidance, number for number.
        let g = seat_guidance(&z, &measures("Wd", 0.0, 0.0, 3600.0), 3600.0);
        let plain = guidance(&z, 3600.0);
        assert_eq!(g.comfort_value_m_s2, Some(0.6));
        assert_eq!(g.comfort_label, plain.comfort_label);
        assert_eq!(g.a8_m_s2.to_bits(), plain.a8_m_s2.to_bits());
    }

    #[test]
    fn the_caution_says_estimate_and_names_the_standard() {
        assert!(HEALTH_CAUTION.contains("estimates"));
        assert!(HEALTH_CAUTION.contains("ISO 2631-1"));
        assert!(HEALTH_CAUTION.contains("regulation"));
    }
}
