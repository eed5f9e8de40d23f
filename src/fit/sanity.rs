//! Physics sanity of a measured spectrum and its fitted model, published as warnings with the
//! numbers (PHYSICS.md §4): a passive core has μ″ ≥ 0 at every frequency, and a polycrystalline
//! ferrite's static permeability and loss-peak frequency obey Snoek's product
//! (μ_s − 1)·f_r ≈ (2/3)·(γ/2π)·J_s.

use super::synthetic::log_freqs;
use crate::model::Model;
use crate::C64;

/// Gyromagnetic ratio over 2π for the electron spin, Hz/T [PHYSICS.md §4: 28.0 GHz/T].
pub const GAMMA_OVER_2PI_HZ_PER_T: f64 = 28.0e9;
/// Typical saturation polarisation of sintered ferrites, T [PHYSICS.md §4, M: 0.3–0.5 T]. With
/// no stated J_s the check uses the upper end, so a warning means the product is too high even
/// for the most generous typical material.
pub const TYPICAL_JS_RANGE_T: (f64, f64) = (0.3, 0.5);
/// Measured μ″ counts as negative only below −this·|μ| however quiet the data: a 1 % phase
/// error of the analyser and fixture is an ordinary systematic error, not an active core, and
/// scatter does not reveal it [common practice].
pub const NEGATIVE_LOSS_TOLERANCE: f64 = 0.01;
/// Beyond the phase floor, measured μ″ counts as negative only below −this many local standard
/// deviations of the noise (times |μ|). A one-sided Gaussian tail beyond 4σ holds 3.2·10⁻⁵ of
/// the draws, so even a 2000-point sweep whose true μ″ were 0 everywhere would show such a point
/// by chance about once in sixteen; at 3σ (1.35·10⁻³) it would show about three, and a band
/// where μ″ ≈ 0 (below the loss peak) would block vetting on noise alone [standard normal table].
pub const NOISE_SIGMAS: f64 = 4.0;
/// The allowance, as a fraction of |μ|, where the local scatter cannot be estimated (fewer than
/// [`MIN_SCATTER_POINTS`] points around): the 1–2 % scatter of a reflection measurement of a
/// near-short winding, at its upper end [common practice].
pub const UNKNOWN_SCATTER_TOLERANCE: f64 = 0.02;
/// Neighbours on each side whose second differences estimate the scatter at a point.
const SCATTER_HALF_WINDOW: usize = 10;
/// Fewest second differences a local scatter estimate rests on.
pub const MIN_SCATTER_POINTS: usize = 5;
/// Median of a Rayleigh distribution over its parameter σ, √(2 ln 2): the magnitude of complex
/// Gaussian noise with σ per component has this median [standard result].
const RAYLEIGH_MEDIAN: f64 = 1.177_410_022_515_474_6;
/// Points of the fine grid on which the fitted model's loss peak and sign are searched.
const MODEL_GRID_POINTS: usize = 400;

/// Saturation polarisation to check Snoek's product against.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum SaturationPolarisation {
    /// Given by the user, T.
    Stated(f64),
    /// Not given: the typical range [`TYPICAL_JS_RANGE_T`] is assumed.
    Typical,
}

/// Snoek's limit (2/3)·(γ/2π)·J_s in Hz for a saturation polarisation in T.
pub fn snoek_limit_hz(js_tesla: f64) -> f64 {
    2.0 / 3.0 * GAMMA_OVER_2PI_HZ_PER_T * js_tesla
}

/// The numbers behind the Snoek check.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SnoekCheck {
    /// Static permeability of the model, μ∞ + ΣΔμ.
    pub mu_s: f64,
    /// Frequency of the model's largest μ″, Hz.
    pub f_peak_hz: f64,
    /// (μ_s − 1)·f_peak, Hz.
    pub product_hz: f64,
    /// The limit compared against, Hz, and the J_s it was computed for.
    pub limit_hz: f64,
    pub js_tesla: f64,
}

/// Snoek's product of `model`: μ_s from the static limit of the terms, f_r as the frequency of
/// the largest μ″ searched a decade beyond `band` on either side.
pub fn snoek(model: &Model, band: (f64, f64), js: SaturationPolarisation) -> SnoekCheck {
    let mu_s = model.mu_inf + model.terms.iter().map(|t| t.delta_mu).sum::<f64>();
    let grid = log_freqs(MODEL_GRID_POINTS, band.0 / 10.0, band.1 * 10.0);
    let f_peak_hz = grid
        .iter()
        .copied()
        .fold((band.0, f64::NEG_INFINITY), |best, f| {
            let loss = -model.mu(f).im;
            if loss > best.1 {
                (f, loss)
            } else {
                best
            }
        });
    let js_tesla = match js {
        SaturationPolarisation::Stated(j) => j,
        SaturationPolarisation::Typical => TYPICAL_JS_RANGE_T.1,
    };
    SnoekCheck {
        mu_s,
        f_peak_hz: f_peak_hz.0,
        product_hz: (mu_s - 1.0) * f_peak_hz.0,
        limit_hz: snoek_limit_hz(js_tesla),
        js_tesla,
    }
}

/// One measured spectrum: increasing frequencies and μ′ − jμ″ at each.
pub type Spectrum<'a> = (&'a [f64], &'a [C64]);

/// All sanity findings for the measured `spectra` (each source on its own, so the scatter of
/// one is not taken for the difference between samples) and the fitted `model`.
pub fn warnings(spectra: &[Spectrum], model: &Model, js: SaturationPolarisation) -> Vec<String> {
    let mut out = Vec::new();
    out.extend(negative_measured_loss(spectra));
    if let Some(band) = band(spectra) {
        out.extend(negative_model_loss(model, band));
        out.extend(snoek_warning(&snoek(model, band, js), js));
    }
    out
}

/// The lowest and highest frequency of all `spectra` (None if they hold no points).
pub fn band(spectra: &[Spectrum]) -> Option<(f64, f64)> {
    let lo = spectra
        .iter()
        .filter_map(|s| s.0.first())
        .copied()
        .reduce(f64::min)?;
    let hi = spectra
        .iter()
        .filter_map(|s| s.0.last())
        .copied()
        .reduce(f64::max)?;
    Some((lo, hi))
}

/// The relative standard deviation of the noise in each component of μ near each point, or
/// `None` where fewer than [`MIN_SCATTER_POINTS`] second differences are around.
///
/// A smooth spectrum is locally linear in log f, so the second difference
/// d_i = μ_i − (w·μ_{i−1} + (1 − w)·μ_{i+1}), w the log-frequency interpolation weight, holds
/// noise alone: with independent noise of σ per component, |d_i| / √(1 + w² + (1 − w)²) is
/// Rayleigh-distributed with parameter σ. σ is the median of those values over the window,
/// divided by the Rayleigh median — robust to the outlier being judged, which disturbs only
/// three of the differences. A systematic offset (a phase error) leaves no trace here.
pub fn local_scatter(freq_hz: &[f64], mu: &[C64]) -> Vec<Option<f64>> {
    let ratios = scatter_ratios(freq_hz, mu);
    (0..ratios.len())
        .map(|i| scatter_around(&ratios, i))
        .collect()
}

/// |d_i| / (√(1 + w² + (1 − w)²)·|μ_i|) at each point (see [`local_scatter`]); `None` at the
/// ends and where the frequencies do not increase or μ is 0.
fn scatter_ratios(freq_hz: &[f64], mu: &[C64]) -> Vec<Option<f64>> {
    let n = freq_hz.len().min(mu.len());
    let log_f: Vec<f64> = freq_hz[..n].iter().map(|f| f.ln()).collect();
    (0..n)
        .map(|i| {
            if i == 0 || i + 1 >= n {
                return None;
            }
            let (a, b, c) = (log_f[i - 1], log_f[i], log_f[i + 1]);
            // √ of squared norms rather than hypot: μ of a core is far from the over- and
            // underflow limits hypot guards against.
            let size_sqr = mu[i].norm_sqr();
            if !(a < b && b < c) || size_sqr == 0.0 {
                return None;
            }
            let w = (c - b) / (c - a);
            let d = mu[i] - (mu[i - 1] * w + mu[i + 1] * (1.0 - w));
            let gain_sqr = 1.0 + w * w + (1.0 - w) * (1.0 - w);
            Some((d.norm_sqr() / (gain_sqr * size_sqr)).sqrt())
        })
        .collect()
}

/// The local scatter at point `i` from the `ratios` of [`scatter_ratios`] within
/// [`SCATTER_HALF_WINDOW`] of it: their median over the Rayleigh median.
fn scatter_around(ratios: &[Option<f64>], i: usize) -> Option<f64> {
    let lo = i.saturating_sub(SCATTER_HALF_WINDOW);
    let hi = (i + SCATTER_HALF_WINDOW + 1).min(ratios.len());
    let mut around = [0.0f64; 2 * SCATTER_HALF_WINDOW + 1];
    let mut m = 0;
    for r in ratios[lo..hi].iter().flatten() {
        around[m] = *r;
        m += 1;
    }
    if m < MIN_SCATTER_POINTS {
        return None;
    }
    let around = &mut around[..m];
    around.sort_unstable_by(f64::total_cmp);
    let median = if m % 2 == 1 {
        around[m / 2]
    } else {
        0.5 * (around[m / 2 - 1] + around[m / 2])
    };
    Some(median / RAYLEIGH_MEDIAN)
}

/// How far below zero measured μ″ may go at a point, as a fraction of |μ|: the phase floor, or
/// [`NOISE_SIGMAS`] local standard deviations where the noise is larger, or
/// [`UNKNOWN_SCATTER_TOLERANCE`] where the scatter cannot be estimated.
fn negative_loss_allowance(scatter: Option<f64>) -> f64 {
    NEGATIVE_LOSS_TOLERANCE.max(scatter.map_or(UNKNOWN_SCATTER_TOLERANCE, |s| NOISE_SIGMAS * s))
}

fn negative_measured_loss(spectra: &[Spectrum]) -> Option<String> {
    // (frequency, μ″, allowance as a μ″ value) of every point below its allowance; μ″ = −Im μ.
    let mut bad: Vec<(f64, f64, f64)> = Vec::new();
    let mut total = 0;
    for (f, mu) in spectra {
        total += mu.len();
        let ratios = scatter_ratios(f, mu);
        for (i, (&fi, m)) in f.iter().zip(*mu).enumerate() {
            // |μ| from its square (as above). The allowance is at least the phase floor, so the
            // local scatter is looked up only at points below that.
            let size = m.norm_sqr().sqrt();
            if !(m.im > NEGATIVE_LOSS_TOLERANCE * size) {
                continue;
            }
            let a = negative_loss_allowance(scatter_around(&ratios, i));
            if m.im > a * size {
                bad.push((fi, -m.im, a * size));
            }
        }
    }
    let worst = bad.iter().min_by(|a, b| a.1.total_cmp(&b.1))?;
    Some(format!(
        "measured μ″ is negative beyond the noise at {} of {} frequencies (lowest {:.4} at {}, where the noise allows \
         down to −{:.4}); a passive core has μ″ ≥ 0 — check the fixture compensation, the lead-inductance correction \
         and the valid band",
        bad.len(),
        total,
        worst.1,
        fmt_hz(worst.0),
        worst.2
    ))
}

fn negative_model_loss(model: &Model, band: (f64, f64)) -> Option<String> {
    let grid = log_freqs(MODEL_GRID_POINTS, band.0, band.1);
    let worst = grid
        .iter()
        .map(|&f| (f, -model.mu(f).im))
        .min_by(|a, b| a.1.total_cmp(&b.1))?;
    (worst.1 < 0.0).then(|| {
        format!(
            "the fitted model has μ″ = {:.4} < 0 at {}: it is not passive there",
            worst.1,
            fmt_hz(worst.0)
        )
    })
}

fn snoek_warning(s: &SnoekCheck, js: SaturationPolarisation) -> Option<String> {
    if !(s.product_hz > s.limit_hz) {
        return None;
    }
    let basis = match js {
        SaturationPolarisation::Stated(_) => format!("the stated J_s = {} T", s.js_tesla),
        SaturationPolarisation::Typical => format!(
            "J_s = {} T, the upper end of the typical {}–{} T (state the material's J_s to sharpen this)",
            s.js_tesla, TYPICAL_JS_RANGE_T.0, TYPICAL_JS_RANGE_T.1
        ),
    };
    Some(format!(
        "Snoek product (μ_s − 1)·f_r = ({:.1} − 1) × {} = {} exceeds (2/3)(γ/2π)J_s = {} for {}; domain-wall \
         contributions can exceed Snoek's limit, otherwise check the geometry and turns",
        s.mu_s,
        fmt_hz(s.f_peak_hz),
        fmt_hz(s.product_hz),
        fmt_hz(s.limit_hz),
        basis
    ))
}

/// A frequency with an SI prefix, 4 significant figures.
pub fn fmt_hz(f: f64) -> String {
    let (scale, unit) = match f.abs() {
        a if a >= 1e9 => (1e9, "GHz"),
        a if a >= 1e6 => (1e6, "MHz"),
        a if a >= 1e3 => (1e3, "kHz"),
        _ => (1.0, "Hz"),
    };
    format!("{} {}", sig4(f / scale), unit)
}

fn sig4(v: f64) -> String {
    let digits = if v.abs() >= 100.0 {
        1
    } else if v.abs() >= 10.0 {
        2
    } else {
        3
    };
    format!("{:.*}", digits, v)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::synthetic::{spectrum, with_noise};
    use crate::model::Term;

    /// PHYSICS.md §4 [D]: J_s = 0.3 T gives a Snoek limit of 5.6 GHz.
    #[test]
    fn snoek_limit_for_0_3_tesla_is_5_6_ghz() {
        assert!((snoek_limit_hz(0.3) - 5.6e9).abs() < 1e3);
    }

    /// PHYSICS.md §4 [D]: NiZn with μ_i = 100 has f_r ≈ 50–75 MHz at J_s 0.3–0.5 T, so a Debye
    /// spectrum with Δμ = 99 at 60 MHz sits under the typical limit, and the same at 600 MHz
    /// does not. The Debye loss peak is at f_r (PHYSICS.md §4).
    #[test]
    fn snoek_check_passes_a_typical_nizn_and_flags_ten_times_the_product() {
        let ok = Model {
            mu_inf: 1.0,
            terms: vec![Term::debye(99.0, 60e6)],
        };
        let s = snoek(&ok, (1e5, 1e9), SaturationPolarisation::Typical);
        assert!((s.mu_s - 100.0).abs() < 1e-12);
        assert!((s.f_peak_hz / 60e6 - 1.0).abs() < 0.02, "{}", s.f_peak_hz);
        let two = [C64::new(100.0, -1.0); 2];
        let flat: [Spectrum; 1] = [(&[1e5, 1e9], &two)];
        assert!(warnings(&flat, &ok, SaturationPolarisation::Typical).is_empty());
        let hot = Model {
            mu_inf: 1.0,
            terms: vec![Term::debye(99.0, 600e6)],
        };
        let w = warnings(&flat, &hot, SaturationPolarisation::Typical);
        assert_eq!(w.len(), 1, "{w:?}");
        assert!(w[0].contains("Snoek") && w[0].contains("0.5 T"), "{}", w[0]);
        // A stated, lower J_s makes the first spectrum exceed its limit too: 99 × 60 MHz = 5.94 GHz > 5.6 GHz.
        let w = warnings(&flat, &ok, SaturationPolarisation::Stated(0.3));
        assert!(w.iter().any(|m| m.contains("stated J_s = 0.3 T")), "{w:?}");
    }

    #[test]
    fn negative_measured_loss_is_reported_with_count_and_worst_point() {
        let f = [1e6, 2e6, 3e6];
        // μ = μ′ − jμ″: +j·5 means μ″ = −5.
        let mu = [
            C64::new(100.0, -3.0),
            C64::new(100.0, 5.0),
            C64::new(100.0, 0.5),
        ];
        let model = Model {
            mu_inf: 1.0,
            terms: vec![Term::debye(99.0, 60e6)],
        };
        let w = warnings(&[(&f, &mu)], &model, SaturationPolarisation::Typical);
        assert_eq!(w.len(), 1, "{w:?}");
        assert!(
            w[0].contains("1 of 3") && w[0].contains("-5.0000") && w[0].contains("2.000 MHz"),
            "{}",
            w[0]
        );
    }

    fn measured_loss_flagged(f: &[f64], mu: &[C64]) -> Vec<String> {
        let passive = Model {
            mu_inf: 1.0,
            terms: vec![Term::debye(99.0, 60e6)],
        };
        warnings(&[(f, mu)], &passive, SaturationPolarisation::Typical)
            .into_iter()
            .filter(|w| w.starts_with("measured μ″"))
            .collect()
    }

    /// μ = 100 (true μ″ = 0) with `rel` noise per component, and μ″ = −`dip`·100 at one point.
    fn flat_with_dip(f: &[f64], rel: f64, dip: f64) -> Vec<C64> {
        let mut mu = with_noise(&vec![C64::new(100.0, 0.0); f.len()], rel, 5);
        mu[f.len() / 2] = C64::new(100.0, dip * 100.0);
        mu
    }

    /// The estimator is calibrated: complex Gaussian noise of 1.5 % and 0.1 % per component
    /// comes back within 10 % on average (median of Rayleigh draws, standard result), on a
    /// constant spectrum and on a Debye spectrum whose curvature the second difference removes.
    #[test]
    fn local_scatter_recovers_the_noise_level() {
        let f = log_freqs(401, 1e5, 1e9);
        let debye = Model {
            mu_inf: 1.0,
            terms: vec![Term::debye(600.0, 8e6)],
        };
        for clean in [vec![C64::new(100.0, 0.0); f.len()], spectrum(&debye, &f)] {
            for rel in [0.015, 0.001] {
                let s: Vec<f64> = local_scatter(&f, &with_noise(&clean, rel, 3))
                    .into_iter()
                    .flatten()
                    .collect();
                assert_eq!(s.len(), f.len(), "every point has neighbours enough");
                let mean = s.iter().sum::<f64>() / s.len() as f64;
                assert!((mean / rel - 1.0).abs() < 0.1, "{mean} for {rel}");
            }
        }
    }

    /// One point at μ″ = −3 % of |μ| (worse than the 1 % phase floor): inside the noise of a
    /// sweep with 1.5 % scatter (4σ = 6 %), beyond it in a 0.1 % sweep, where the floor binds.
    /// −10 % is beyond the noise of both. Noise alone is never flagged.
    #[test]
    fn negative_loss_is_judged_against_the_local_noise() {
        let f = log_freqs(401, 1e5, 1e9);
        assert!(measured_loss_flagged(&f, &flat_with_dip(&f, 0.015, 0.0)).is_empty());
        assert!(measured_loss_flagged(&f, &flat_with_dip(&f, 0.001, 0.0)).is_empty());
        assert!(measured_loss_flagged(&f, &flat_with_dip(&f, 0.015, 0.03)).is_empty());
        let w = measured_loss_flagged(&f, &flat_with_dip(&f, 0.001, 0.03));
        assert!(w.len() == 1 && w[0].contains("at 1 of 401"), "{w:?}");
        assert!(
            w[0].contains("down to −1.00"),
            "the phase floor binds: {w:?}"
        );
        let w = measured_loss_flagged(&f, &flat_with_dip(&f, 0.015, 0.10));
        assert!(w.len() == 1 && w[0].contains("-10.0000"), "{w:?}");
    }

    /// Too few points to estimate the scatter: the allowance is 2 % of |μ|, so −1.5 % passes and
    /// −2.5 % is flagged.
    #[test]
    fn unknown_scatter_allows_two_percent() {
        let f = [1e6, 2e6, 3e6, 4e6];
        let at = |dip: f64| {
            let mut mu = vec![C64::new(100.0, -1.0); 4];
            mu[2] = C64::new(100.0, dip * 100.0);
            mu
        };
        assert!(local_scatter(&f, &at(0.0)).iter().all(Option::is_none));
        assert!(measured_loss_flagged(&f, &at(0.015)).is_empty());
        assert_eq!(measured_loss_flagged(&f, &at(0.025)).len(), 1);
    }

    #[test]
    fn frequencies_are_printed_with_si_prefixes() {
        assert_eq!(fmt_hz(5.6e9), "5.600 GHz");
        assert_eq!(fmt_hz(59.4e6), "59.40 MHz");
        assert_eq!(fmt_hz(250.0), "250.0 Hz");
    }
}
