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
/// Measured μ″ counts as negative only below −this·|μ|: a 1 % phase error of the analyser and
/// fixture is ordinary measurement scatter, not an active core [common practice].
pub const NEGATIVE_LOSS_TOLERANCE: f64 = 0.01;
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

/// All sanity warnings for measured `mu` (μ′ − jμ″ at `freq_hz`) and the fitted `model`.
pub fn warnings(
    freq_hz: &[f64],
    mu: &[C64],
    model: &Model,
    js: SaturationPolarisation,
) -> Vec<String> {
    let mut out = Vec::new();
    out.extend(negative_measured_loss(freq_hz, mu));
    if let (Some(&lo), Some(&hi)) = (freq_hz.first(), freq_hz.last()) {
        out.extend(negative_model_loss(model, (lo, hi)));
        out.extend(snoek_warning(&snoek(model, (lo, hi), js), js));
    }
    out
}

fn negative_measured_loss(freq_hz: &[f64], mu: &[C64]) -> Option<String> {
    // μ″ = −Im μ in the μ′ − jμ″ convention.
    let bad: Vec<usize> = (0..mu.len())
        .filter(|&i| -mu[i].im < -NEGATIVE_LOSS_TOLERANCE * mu[i].norm())
        .collect();
    let worst = *bad
        .iter()
        .min_by(|&&a, &&b| (-mu[a].im).total_cmp(&(-mu[b].im)))?;
    Some(format!(
        "measured μ″ is negative at {} of {} frequencies (lowest {:.4} at {}); a passive core has μ″ ≥ 0 — check the \
         fixture compensation, the lead-inductance correction and the valid band",
        bad.len(),
        mu.len(),
        -mu[worst].im,
        fmt_hz(freq_hz[worst])
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
        assert!(warnings(
            &[1e5, 1e9],
            &[C64::new(100.0, -1.0); 2],
            &ok,
            SaturationPolarisation::Typical
        )
        .is_empty());
        let hot = Model {
            mu_inf: 1.0,
            terms: vec![Term::debye(99.0, 600e6)],
        };
        let w = warnings(
            &[1e5, 1e9],
            &[C64::new(100.0, -1.0); 2],
            &hot,
            SaturationPolarisation::Typical,
        );
        assert_eq!(w.len(), 1, "{w:?}");
        assert!(w[0].contains("Snoek") && w[0].contains("0.5 T"), "{}", w[0]);
        // A stated, lower J_s makes the first spectrum exceed its limit too: 99 × 60 MHz = 5.94 GHz > 5.6 GHz.
        let w = warnings(
            &[1e5, 1e9],
            &[C64::new(100.0, -1.0); 2],
            &ok,
            SaturationPolarisation::Stated(0.3),
        );
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
        let w = warnings(&f, &mu, &model, SaturationPolarisation::Typical);
        assert_eq!(w.len(), 1, "{w:?}");
        assert!(
            w[0].contains("1 of 3") && w[0].contains("-5.0000") && w[0].contains("2.000 MHz"),
            "{}",
            w[0]
        );
    }

    #[test]
    fn frequencies_are_printed_with_si_prefixes() {
        assert_eq!(fmt_hz(5.6e9), "5.600 GHz");
        assert_eq!(fmt_hz(59.4e6), "59.40 MHz");
        assert_eq!(fmt_hz(250.0), "250.0 Hz");
    }
}
