//! Spectral estimates of a road profile: Welch's averaged periodogram of the
//! elevation and its reduction to octave bands.
//!
//! # Normalisation
//! One-sided displacement PSD `Gd(n)` in m³ (m² per cycle/m) against spatial
//! frequency `n` in cycle/m, so that `∫ Gd dn` over `0 … 1/(2Δ)` is the
//! variance of the (detrended, windowed) elevation. Per segment of `L`
//! samples: linear least-squares detrend, periodic Hann window `w`, DFT `X_k`;
//! `Gd(n_k) = 2·|X_k|²·Δ / Σw²` (the factor 2 folds negative frequencies in;
//! not applied at DC and, for even `L`, the Nyquist bin), `n_k = k/(L·Δ)`.
//! Segments overlap by 50 % (step `L/2`, rounded down); trailing samples that
//! do not fill a segment are not used. This is the convention of
//! `scipy.signal.welch(x, fs=1/Δ, window="hann", nperseg=L, noverlap=L//2,
//! detrend="linear", scaling="density")` (Welch, IEEE Trans. Audio
//! Electroacoust. AU-15, 1967), checked against it in `tests/road_cli.rs`.

use rustfft::FftPlannerScalar;
use rustfft::num_complex::Complex64;
use serde::Serialize;

use super::{Profile, ProfileError};

/// A one-sided displacement PSD on a uniform frequency grid.
#[derive(Debug, Clone, PartialEq)]
pub struct Spectrum {
    /// Spatial frequencies `k/(L·Δ)`, cycle/m, from 0 to the Nyquist
    /// frequency (inclusive for even `L`).
    pub frequency_cycle_m: Vec<f64>,
    /// `Gd(n)`, m³.
    pub gd_m3: Vec<f64>,
    /// Segment length, samples.
    pub segment_len: usize,
    /// Number of segments averaged.
    pub segments: usize,
    /// Frequency resolution `1/(L·Δ)`, cycle/m.
    pub resolution_cycle_m: f64,
}

/// The mean PSD over one octave band.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct OctaveBand {
    /// Band centre, cycle/m (a power of two).
    pub centre_cycle_m: f64,
    /// Lower edge `centre/√2`, cycle/m.
    pub lower_cycle_m: f64,
    /// Upper edge `centre·√2`, cycle/m.
    pub upper_cycle_m: f64,
    /// Mean of `Gd` over the Welch bins inside the band, m³.
    pub mean_gd_m3: f64,
    /// Number of Welch bins averaged.
    pub bins: usize,
}

/// Periodic Hann window of length `len` (`0.5 − 0.5·cos(2πi/len)`), the
/// window scipy's `get_window("hann", len)` returns for spectral analysis.
pub fn hann_periodic(len: usize) -> Vec<f64> {
    (0..len)
        .map(|i| 0.5 - 0.5 * (2.0 * std::f64::consts::PI * i as f64 / len as f64).cos())
        .collect()
}

/// Removes the least-squares straight line from `seg` in place.
fn detrend_linear(seg: &mut [f64]) {
    let n = seg.len() as f64;
    let xm = (n - 1.0) / 2.0;
    let ym = seg.iter().sum::<f64>() / n;
    let (mut sxy, mut sxx) = (0.0, 0.0);
    for (i, y) in seg.iter().enumerate() {
        let dx = i as f64 - xm;
        sxy += dx * (y - ym);
        sxx += dx * dx;
    }
    let slope = if sxx > 0.0 { sxy / sxx } else { 0.0 };
    for (i, y) in seg.iter_mut().enumerate() {
        *y -= ym + slope * (i as f64 - xm);
    }
}

/// Welch PSD of the profile's elevation with segments of `segment_len`
/// samples (see the module doc for the normalisation). Needs
/// `4 ≤ segment_len ≤ profile.len()`.
pub fn welch_psd(profile: &Profile, segment_len: usize) -> Result<Spectrum, ProfileError> {
    let x = &profile.elevation_m;
    if segment_len < 4 || segment_len > x.len() {
        return Err(ProfileError::Parameter(format!(
            "Welch segment length must lie between 4 samples and the profile's {} samples, got {segment_len}",
            x.len()
        )));
    }
    let l = segment_len;
    let step = l - l / 2;
    let segments = (x.len() - l) / step + 1;
    let window = hann_periodic(l);
    let wsum2: f64 = window.iter().map(|w| w * w).sum();
    let fft = FftPlannerScalar::<f64>::new().plan_fft_forward(l);
    let nbins = l / 2 + 1;
    let mut acc = vec![0.0; nbins];
    let mut seg = vec![0.0; l];
    let mut buf = vec![Complex64::new(0.0, 0.0); l];
    let mut scratch = vec![Complex64::new(0.0, 0.0); fft.get_inplace_scratch_len()];
    for s in 0..segments {
        seg.copy_from_slice(&x[s * step..s * step + l]);
        detrend_linear(&mut seg);
        for ((b, v), w) in buf.iter_mut().zip(&seg).zip(&window) {
            *b = Complex64::new(v * w, 0.0);
        }
        fft.process_with_scratch(&mut buf, &mut scratch);
        for (a, b) in acc.iter_mut().zip(&buf) {
            *a += b.norm_sqr();
        }
    }
    let dx = profile.spacing_m;
    let scale = dx / (wsum2 * segments as f64);
    let gd_m3: Vec<f64> = acc
        .iter()
        .enumerate()
        .map(|(k, a)| {
            let one_sided = if k == 0 || (l % 2 == 0 && k == l / 2) {
                1.0
            } else {
                2.0
            };
            one_sided * a * scale
        })
        .collect();
    let resolution = 1.0 / (l as f64 * dx);
    Ok(Spectrum {
        frequency_cycle_m: (0..nbins).map(|k| k as f64 * resolution).collect(),
        gd_m3,
        segment_len: l,
        segments,
        resolution_cycle_m: resolution,
    })
}

impl Spectrum {
    /// Mean `Gd` over the octave band centred on `centre_cycle_m` (bins with
    /// `centre/√2 ≤ n < centre·√2`); `None` when no bin falls inside.
    pub fn octave_band(&self, centre_cycle_m: f64) -> Option<OctaveBand> {
        let lower = centre_cycle_m / std::f64::consts::SQRT_2;
        let upper = centre_cycle_m * std::f64::consts::SQRT_2;
        let (mut sum, mut bins) = (0.0, 0usize);
        for (n, g) in self.frequency_cycle_m.iter().zip(&self.gd_m3) {
            if *n >= lower && *n < upper {
                sum += g;
                bins += 1;
            }
        }
        (bins > 0).then(|| OctaveBand {
            centre_cycle_m,
            lower_cycle_m: lower,
            upper_cycle_m: upper,
            mean_gd_m3: sum / bins as f64,
            bins,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parseval_white_noise_variance_is_the_integral_of_the_psd() {
        // For a stationary signal, ∫ Gd dn ≈ variance (Parseval; the
        // Hann-window normalisation Σw² makes the estimate unbiased for
        // broadband signals).
        use rand::{Rng, SeedableRng};
        let mut rng = rand_chacha::ChaCha20Rng::seed_from_u64(11);
        let z: Vec<f64> = (0..200_000).map(|_| rng.random::<f64>() - 0.5).collect();
        let var = 1.0 / 12.0;
        let p = Profile::new(0.0, 0.1, z);
        let s = welch_psd(&p, 1024).unwrap();
        let integral: f64 = s.gd_m3.iter().sum::<f64>() * s.resolution_cycle_m;
        assert!((integral / var - 1.0).abs() < 0.01, "{integral} vs {var}");
        // White noise: flat at 2·σ²·Δ (one-sided density).
        let mid = s.gd_m3[100..400].iter().sum::<f64>() / 300.0;
        assert!((mid / (2.0 * var * 0.1) - 1.0).abs() < 0.02, "{mid}");
    }

    #[test]
    fn a_bin_centred_sine_puts_its_power_where_it_belongs() {
        // A sine of amplitude a on bin k of every segment: ∫ Gd dn = a²/2, and
        // the periodic Hann window spreads it over bins k−1, k, k+1 in the
        // ratio 1:4:1 (the window's DFT is −¼, ½, −¼). The linear detrend
        // removes a small line (a whole-cycle sine still correlates with a
        // ramp), whose windowed spectrum at bin 20 is ~1e-5 of the sine's.
        let (l, dx, k, a) = (256usize, 0.05, 20usize, 0.003);
        let z: Vec<f64> = (0..l * 8)
            .map(|i| a * (2.0 * std::f64::consts::PI * (k * i) as f64 / l as f64).sin())
            .collect();
        let s = welch_psd(&Profile::new(0.0, dx, z), l).unwrap();
        let band: f64 = s.gd_m3[k - 1..=k + 1].iter().sum::<f64>() * s.resolution_cycle_m;
        assert!((band / (a * a / 2.0) - 1.0).abs() < 1e-3, "{band}");
        assert!((s.gd_m3[k] / s.gd_m3[k + 1] - 4.0).abs() < 1e-3);
        assert_eq!(s.segments, 15);
    }

    #[test]
    fn refuses_a_segment_longer_than_the_profile() {
        let p = Profile::new(0.0, 0.1, vec![0.0; 10]);
        assert!(
            welch_psd(&p, 11)
                .unwrap_err()
                .to_string()
                .contains("segment")
        );
        assert!(welch_psd(&p, 10).is_ok());
    }

    #[test]
    fn octave_band_averages_the_bins_inside() {
        let s = Spectrum {
            frequency_cycle_m: vec![0.0, 0.5, 0.75, 1.0, 1.25, 1.5],
            gd_m3: vec![9.0, 9.0, 1.0, 2.0, 3.0, 9.0],
            segment_len: 10,
            segments: 1,
            resolution_cycle_m: 0.25,
        };
        let b = s.octave_band(1.0).unwrap();
        assert_eq!(b.bins, 3);
        assert_eq!(b.mean_gd_m3, 2.0);
        assert!(s.octave_band(64.0).is_none());
    }
}
