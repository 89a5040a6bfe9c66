//! Roughness of a profile: ISO 8608 class from a fitted `Gd(n0)`, the free
//! waviness fit, the octave-band spectrum and the IRI.
//!
//! # Method
//! 1. Welch PSD ([`super::psd::welch_psd`]) with segments of a power-of-two
//!    number of samples: the smallest spanning at least 4/0.011 ≈ 364 m (so the
//!    lowest ISO band starts four frequency bins above zero), but at most
//!    half the profile (at least two or three averaged segments).
//! 2. Octave bands centred on `2^j` cycle/m, `j = −6 … 1` (1/64 … 2 cycle/m,
//!    edges `centre/√2 … centre·√2`, i.e. 0.011–2.83 cycle/m; the fitting
//!    range is from memory of ISO 8608's octave-band table). A band is used
//!    for fitting when its lower edge is at least four Welch bins above zero
//!    (window leakage and the detrend distort the first bins) and its upper
//!    edge does not exceed the Nyquist frequency `1/(2Δ)`.
//! 3. Least squares in log space over the usable bands, each band weighted
//!    equally: `log Gd_b = log Gd(n0) − w·log(n_b/n0)`. With `w` fixed at 2
//!    (ISO 8608 classification) this gives `gd_n0` and the class; with `w`
//!    free (two or more bands) it gives `gd_n0_free` and `waviness_fit`.
//!    For `w = 2` the mean of the power law over an octave equals its value
//!    at the geometric centre, so band means need no correction.
//! 4. IRI over the whole profile ([`super::iri`]); `None` when the profile
//!    is too coarse (spacing > 0.25 m) or too short, with the reason.

use serde::Serialize;

use super::iri;
use super::iso8608::{CLASS_WAVINESS, N0_CYCLE_M, RoadClass};
use super::psd::{OctaveBand, Spectrum, welch_psd};
use super::{Profile, ProfileError};

/// Lowest and highest octave-band exponent: centres `2^j` cycle/m.
const BAND_EXPONENTS: std::ops::RangeInclusive<i32> = -6..=1;
/// Lower band edge of the lowest ISO band, cycle/m (1/64/√2).
const LOWEST_EDGE_CYCLE_M: f64 = 0.011;
/// A usable band's lower edge lies at least this many Welch bins above 0.
pub const MIN_BINS_ABOVE_ZERO: f64 = 4.0;

/// The roughness summary of one profile (all values SI).
#[derive(Debug, Clone, Serialize)]
pub struct Classification {
    /// `Gd(n0)` at `n0 = 0.1 cycle/m` fitted with `w = 2`, m³.
    pub gd_n0: f64,
    /// ISO 8608 class of `gd_n0`.
    pub class: RoadClass,
    /// Waviness of the free fit (`None` with fewer than two usable bands).
    pub waviness_fit: Option<f64>,
    /// `Gd(n0)` of the free fit, m³.
    pub gd_n0_free: Option<f64>,
    /// IRI of the whole profile, m/km (`None`: see `iri_note`).
    pub iri_m_per_km: Option<f64>,
    /// Why the IRI is missing, if it is.
    pub iri_note: Option<String>,
    /// Lowest frequency of the bands used in the fit, cycle/m.
    pub fit_min_cycle_m: f64,
    /// Highest frequency of the bands used in the fit, cycle/m.
    pub fit_max_cycle_m: f64,
    /// Octave bands (all bands holding Welch bins, used or not).
    pub bands: Vec<BandResult>,
    /// Profile length, m.
    pub length_m: f64,
    /// Sample spacing, m.
    pub spacing_m: f64,
    /// Welch segment length, m.
    pub welch_segment_m: f64,
    /// Number of Welch segments averaged.
    pub welch_segments: usize,
}

/// One octave band and whether it entered the fit.
#[derive(Debug, Clone, Serialize)]
pub struct BandResult {
    /// The band and its mean PSD.
    #[serde(flatten)]
    pub band: OctaveBand,
    /// Whether the band lies in the usable range and was fitted.
    pub used: bool,
}

/// Welch segment length in samples for a profile of `len` samples at
/// `spacing_m` (see the module doc).
pub fn welch_segment_len(len: usize, spacing_m: f64) -> usize {
    let want = MIN_BINS_ABOVE_ZERO / (LOWEST_EDGE_CYCLE_M * spacing_m);
    let mut l = 4usize;
    while (l as f64) < want && l * 2 <= len / 2 {
        l *= 2;
    }
    l.min(len)
}

/// Classifies a profile (see the module doc). Fails when no octave band is
/// usable (profile too short or too coarse).
pub fn classify(profile: &Profile) -> Result<Classification, ProfileError> {
    if profile.len() < 16 {
        return Err(ProfileError::Parameter(format!(
            "classification needs at least 16 samples, got {}",
            profile.len()
        )));
    }
    let seg = welch_segment_len(profile.len(), profile.spacing_m);
    let spectrum = welch_psd(profile, seg)?;
    let bands = octave_bands(profile, &spectrum)?;
    let used: Vec<&OctaveBand> = bands.iter().filter(|b| b.used).map(|b| &b.band).collect();
    let (iri_m_per_km, iri_note) = match iri::iri_m_per_km(profile) {
        Ok(v) => (Some(v), None),
        Err(e) => (None, Some(e.to_string())),
    };
    let mut result = Classification {
        gd_n0: 0.0,
        class: RoadClass::A,
        waviness_fit: None,
        gd_n0_free: None,
        iri_m_per_km,
        iri_note,
        fit_min_cycle_m: used
            .iter()
            .map(|b| b.lower_cycle_m)
            .fold(f64::INFINITY, f64::min),
        fit_max_cycle_m: used.iter().map(|b| b.upper_cycle_m).fold(0.0, f64::max),
        bands: bands.clone(),
        length_m: profile.length_m(),
        spacing_m: profile.spacing_m,
        welch_segment_m: seg as f64 * profile.spacing_m,
        welch_segments: spectrum.segments,
    };
    if used.is_empty() {
        // No power in any usable band: a flat road, Gd(n0) = 0, class A.
        result.fit_min_cycle_m = 0.0;
        return Ok(result);
    }
    let fit = fit_bands(&used);
    result.gd_n0 = fit.gd_n0;
    result.class = RoadClass::from_gd_n0(fit.gd_n0);
    result.waviness_fit = fit.waviness;
    result.gd_n0_free = fit.gd_n0_free;
    Ok(result)
}

/// The octave bands of the estimate, each marked used when it lies far
/// enough above zero (in Welch bins) and below the Nyquist frequency and
/// holds power; an error when no band lies in range.
fn octave_bands(profile: &Profile, spectrum: &Spectrum) -> Result<Vec<BandResult>, ProfileError> {
    let nyquist = 0.5 / profile.spacing_m;
    let min_edge = MIN_BINS_ABOVE_ZERO * spectrum.resolution_cycle_m;
    let mut bands = Vec::new();
    let mut in_range = 0;
    for j in BAND_EXPONENTS {
        let centre = 2f64.powi(j);
        if let Some(band) = spectrum.octave_band(centre) {
            let usable = band.lower_cycle_m >= min_edge * (1.0 - 1e-12)
                && band.upper_cycle_m <= nyquist * (1.0 + 1e-12);
            in_range += usize::from(usable);
            // A band with no power (a perfectly flat stretch) has no logarithm.
            let used = usable && band.mean_gd_m3 > 0.0;
            bands.push(BandResult { band, used });
        }
    }
    if in_range == 0 {
        return Err(ProfileError::Parameter(format!(
            "profile too short or too coarse to classify: no octave band between {} and 2.83 cycle/m \
             lies at least {MIN_BINS_ABOVE_ZERO} Welch bins ({:.4} cycle/m) above zero and below the Nyquist \
             frequency {nyquist} cycle/m (length {} m, spacing {} m; about 400 m or more is needed for the full range)",
            LOWEST_EDGE_CYCLE_M,
            min_edge,
            profile.length_m(),
            profile.spacing_m
        )));
    }
    Ok(bands)
}

/// The fits of the used bands' mean PSD values.
struct BandFit {
    /// Gd(n0) with the waviness fixed at 2 (ISO 8608 classification).
    gd_n0: f64,
    /// The fitted waviness (two or more bands).
    waviness: Option<f64>,
    /// Gd(n0) of the free-waviness fit.
    gd_n0_free: Option<f64>,
}

/// Log-space least squares over the bands, u = ln(n/n0), v = ln Gd: the
/// fixed-waviness mean, and with two or more bands the straight-line fit.
fn fit_bands(used: &[&OctaveBand]) -> BandFit {
    let u: Vec<f64> = used
        .iter()
        .map(|b| (b.centre_cycle_m / N0_CYCLE_M).ln())
        .collect();
    let v: Vec<f64> = used.iter().map(|b| b.mean_gd_m3.ln()).collect();
    let k = used.len() as f64;
    let gd_n0 = (v
        .iter()
        .zip(&u)
        .map(|(v, u)| v + CLASS_WAVINESS * u)
        .sum::<f64>()
        / k)
        .exp();
    let (waviness, gd_n0_free) = if used.len() >= 2 {
        let (um, vm) = (u.iter().sum::<f64>() / k, v.iter().sum::<f64>() / k);
        let sxx: f64 = u.iter().map(|u| (u - um).powi(2)).sum();
        let sxy: f64 = u.iter().zip(&v).map(|(u, v)| (u - um) * (v - vm)).sum();
        let slope = sxy / sxx;
        (Some(-slope), Some((vm - slope * um).exp()))
    } else {
        (None, None)
    };
    BandFit {
        gd_n0,
        waviness,
        gd_n0_free,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::road::iso8608::{RoadSpec, generate};

    #[test]
    fn recovers_the_class_and_gd_n0_of_generated_roads() {
        // ISO 8608 class means (16·4^k·1e-6 m³); a generated road of a class's
        // geometric mean must classify as that class with Gd(n0) within 20 %
        // and waviness within 0.2 of 2. Why these widths: an averaged PSD
        // estimate has a normalised random error of 1/√n_d over n_d averaged
        // values (Bendat & Piersol, "Random Data", on the random error of
        // spectral density estimates; from memory); the lowest octave
        // band of a 1 km road averages about 4 bins of 2–3 segments, so
        // n_d ≈ 10 and ≈ 30 % there, much less in the higher bands; the
        // least-squares line through 8 bands 0.3 decades apart then has a
        // standard error of a few per cent in Gd(n0) and a few hundredths in
        // w, so 20 % and 0.2 are several standard errors (and the class
        // bounds, a factor 2 from the mean, are far outside).
        for (class, seed) in [
            (RoadClass::A, 21),
            (RoadClass::C, 22),
            (RoadClass::E, 23),
            (RoadClass::G, 24),
        ] {
            let p = generate(&RoadSpec::from_class(class, 1000.0, 0.05, seed)).unwrap();
            let c = classify(&p).unwrap();
            assert_eq!(c.class, class, "{c:?}");
            assert!(
                (c.gd_n0 / class.gd_n0_m3() - 1.0).abs() < 0.2,
                "{class}: {}",
                c.gd_n0
            );
            let w = c.waviness_fit.unwrap();
            assert!((w - 2.0).abs() < 0.2, "{class}: w = {w}");
            assert_eq!(c.bands.iter().filter(|b| b.used).count(), 8);
        }
    }

    #[test]
    fn free_fit_recovers_another_waviness() {
        let mut spec = RoadSpec::from_class(RoadClass::D, 2000.0, 0.05, 9);
        spec.waviness = 2.5;
        let c = classify(&generate(&spec).unwrap()).unwrap();
        let w = c.waviness_fit.unwrap();
        // A 2 km road: twice the segments of the test above, so the same
        // reasoning gives a tighter slope (0.15); Gd(n0) as above.
        assert!((w - 2.5).abs() < 0.15, "w = {w}");
        let g = c.gd_n0_free.unwrap();
        assert!((g / spec.gd_n0_m3 - 1.0).abs() < 0.2, "{g}");
    }

    #[test]
    fn a_short_road_uses_fewer_bands_and_a_coarse_one_has_no_iri() {
        let p = generate(&RoadSpec::from_class(RoadClass::C, 100.0, 0.05, 2)).unwrap();
        let c = classify(&p).unwrap();
        let used: Vec<_> = c.bands.iter().filter(|b| b.used).collect();
        assert!(used.len() < 8 && !used.is_empty());
        assert!(c.fit_min_cycle_m > 0.011);
        let mut spec = RoadSpec::from_class(RoadClass::C, 2000.0, 0.3, 2);
        spec.n_max_cycle_m = 1.6;
        let coarse = classify(&generate(&spec).unwrap()).unwrap();
        assert!(coarse.iri_m_per_km.is_none());
        assert!(coarse.iri_note.unwrap().contains("0.25 m"));
        // Highest band (1.41–2.83) lies above the Nyquist frequency 1.67.
        assert!(
            coarse
                .bands
                .iter()
                .all(|b| !b.used || b.band.upper_cycle_m <= 1.67)
        );
    }

    #[test]
    fn refuses_a_road_too_short_for_any_band() {
        let p = Profile::new(0.0, 0.05, vec![0.0; 40]);
        let e = classify(&p).unwrap_err().to_string();
        assert!(e.contains("too short"), "{e}");
    }

    #[test]
    fn a_flat_road_is_class_a_with_zero_psd_and_iri() {
        let p = Profile::new(0.0, 0.05, vec![0.0; 20001]);
        let c = classify(&p).unwrap();
        assert_eq!(
            (c.gd_n0, c.class, c.iri_m_per_km),
            (0.0, RoadClass::A, Some(0.0))
        );
        assert!(c.waviness_fit.is_none());
    }
}
