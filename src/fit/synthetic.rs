//! Synthetic spectra with known parameters and reproducible noise, for the benchmark and for
//! tests that must recover what they put in. Noise is complex Gaussian, relative to |μ| in each
//! component, from the crate's SplitMix64 source so every run and platform draws the same values.

use crate::demo::rng::SplitMix64;
use crate::model::{Model, Term};
use crate::C64;

/// `n` frequencies log-spaced from `lo` to `hi` inclusive.
pub fn log_freqs(n: usize, lo: f64, hi: f64) -> Vec<f64> {
    match n {
        0 => Vec::new(),
        1 => vec![(lo * hi).sqrt()],
        _ => (0..n)
            .map(|i| lo * (hi / lo).powf(i as f64 / (n - 1) as f64))
            .collect(),
    }
}

/// The model's μ at each frequency.
pub fn spectrum(model: &Model, freq_hz: &[f64]) -> Vec<C64> {
    freq_hz.iter().map(|&f| model.mu(f)).collect()
}

/// `mu` with complex Gaussian noise of standard deviation `rel`·|μ| in each component.
pub fn with_noise(mu: &[C64], rel: f64, seed: u64) -> Vec<C64> {
    let mut rng = SplitMix64::new(seed);
    mu.iter()
        .map(|m| {
            let (a, b) = rng.gaussian_pair();
            m + C64::new(a, b) * (rel * m.norm())
        })
        .collect()
}

/// `mu` with a Gaussian bump (in log f, centred on `f0_hz`, `width_dec` decades wide) added to
/// μ′ alone, `rel`·|μ| high: a feature with no μ″ counterpart, so it violates Kramers–Kronig
/// by construction (the artefact the Lin-KK check must catch).
pub fn with_mu_prime_bump(
    freq_hz: &[f64],
    mu: &[C64],
    rel: f64,
    f0_hz: f64,
    width_dec: f64,
) -> Vec<C64> {
    freq_hz
        .iter()
        .zip(mu)
        .map(|(&f, m)| {
            m + rel * m.norm() * (-0.5 * ((f / f0_hz).log10() / width_dec).powi(2)).exp()
        })
        .collect()
}

/// One sweep of a synthetic lot.
#[derive(Debug, Clone)]
pub struct SyntheticSweep {
    pub truth: Model,
    pub freq_hz: Vec<f64>,
    pub mu: Vec<C64>,
}

/// A lot of spin + wall spectra (debye + lorentz, PHYSICS.md §4) with parameters drawn
/// log-uniformly over ranges typical of sintered NiZn suppression ferrites [M], 100 kHz–1 GHz.
pub fn debye_lorentz_lot(
    sweeps: usize,
    points: usize,
    noise_rel: f64,
    seed: u64,
) -> Vec<SyntheticSweep> {
    let mut rng = SplitMix64::new(seed);
    let mut draw = |lo: f64, hi: f64| lo * (hi / lo).powf(rng.uniform());
    let freq = log_freqs(points, 1e5, 1e9);
    (0..sweeps)
        .map(|k| {
            let truth = Model {
                mu_inf: 1.0,
                terms: vec![
                    Term::debye(draw(100.0, 1500.0), draw(2e6, 60e6)),
                    Term::lorentz(draw(20.0, 400.0), draw(1e6, 200e6), draw(0.2, 1.5)),
                ],
            };
            let mu = with_noise(
                &spectrum(&truth, &freq),
                noise_rel,
                seed ^ (k as u64 + 1).wrapping_mul(0x9E37_79B9),
            );
            SyntheticSweep {
                truth,
                freq_hz: freq.clone(),
                mu,
            }
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn noise_has_the_stated_relative_size() {
        let mu = vec![C64::new(300.0, -400.0); 20000];
        let noisy = with_noise(&mu, 0.01, 42);
        let var: f64 = noisy
            .iter()
            .zip(&mu)
            .map(|(n, m)| ((n - m) / m.norm()).norm_sqr())
            .sum::<f64>()
            / (2.0 * mu.len() as f64);
        // Sample variance of 40 000 unit normals is 1 ± 0.007 (1σ): allow 3σ.
        assert!((var.sqrt() / 0.01 - 1.0).abs() < 0.011, "{}", var.sqrt());
    }

    #[test]
    fn lot_is_reproducible_and_in_range() {
        let a = debye_lorentz_lot(3, 11, 0.005, 7);
        let b = debye_lorentz_lot(3, 11, 0.005, 7);
        assert_eq!(a[2].mu, b[2].mu);
        assert_ne!(a[0].mu, a[1].mu);
        assert!(a
            .iter()
            .all(|s| s.truth.terms[1].damping >= 0.2 && s.truth.terms[1].damping <= 1.5));
    }
}
