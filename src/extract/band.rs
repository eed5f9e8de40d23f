//! Where an extraction still measures the material: the validity band of one winding.
//!
//! A point counts when its |Z| lies in the set-up's accurate range, it is not noise-dominated
//! and the winding is inductive (X > 0). The band is the clean stretch spanning the most
//! decades below the first self-resonance (X crossing from + to −), cut further where the
//! winding capacitance estimated from that resonance distorts Z by more than
//! [`DISTORTION_LIMIT`], or where the apparent μ′ turns sharply upward (a resonance outside the
//! sweep announcing itself).

use super::self_resonance::{estimate_cp, find_self_resonance};
use crate::ingest::Method;
use crate::C64;
use std::f64::consts::TAU;

/// Accurate |Z| range of a set-up, ohms [common practice, PHYSICS.md §3]: reflection
/// ~1 Ω–2 kΩ, series-through ~10 Ω–10 kΩ, shunt-through mΩ–10 Ω. None for impedance files.
pub fn accurate_range(method: Option<Method>) -> Option<(f64, f64)> {
    match method? {
        Method::Reflection => Some((1.0, 2e3)),
        Method::Series => Some((10.0, 10e3)),
        Method::Shunt => Some((1e-3, 10.0)),
    }
}

/// Largest local relative scatter of Z (about a running median) still taken as signal.
pub const NOISE_LIMIT: f64 = 0.05;
/// Half-width of the running windows used for the scatter, points.
pub const NOISE_HALF_WINDOW: usize = 3;
/// Largest |ωC_p·Z| inside the band: the winding capacitance changes Z by about this fraction.
pub const DISTORTION_LIMIT: f64 = 0.05;
/// Largest rise of the (smoothed) apparent μ′ above its running minimum inside the band.
pub const RISE_LIMIT: f64 = 0.25;
/// Fewest points a band may hold.
pub const MIN_POINTS: usize = 3;

/// The validity of one winding's sweep.
#[derive(Debug, Clone, PartialEq)]
pub struct BandReport {
    /// First and last index (inclusive) inside the band; None when no stretch qualifies.
    pub band: Option<(usize, usize)>,
    /// First self-resonance found in the sweep, Hz.
    pub f_sr: Option<f64>,
    /// Winding capacitance estimated from that resonance, F.
    pub c_p: Option<f64>,
    /// Why the band starts and ends where it does, in words.
    pub reasons: Vec<String>,
}

/// Analyse one winding: `l0` is M·N²·μ0/C1, used for the apparent μ′ and the C_p estimate.
pub fn analyse(freq: &[f64], z: &[C64], l0: f64, range: Option<(f64, f64)>) -> BandReport {
    let n = freq.len();
    let noisy = noise_mask(freq, z);
    let in_range = |i: usize| {
        range
            .map(|(lo, hi)| z[i].norm() >= lo && z[i].norm() <= hi)
            .unwrap_or(true)
    };
    let finite = |i: usize| z[i].re.is_finite() && z[i].im.is_finite();
    let clean: Vec<bool> = (0..n)
        .map(|i| finite(i) && !noisy[i] && in_range(i) && z[i].im > 0.0)
        .collect();
    let first_clean =
        (0..n).find(|&i| i + MIN_POINTS <= n && clean[i..i + MIN_POINTS].iter().all(|&c| c));
    let sr = first_clean.and_then(|i| find_self_resonance(freq, z, i));
    let f_sr = sr.map(|(_, f)| f);
    let mut reasons = Vec::new();

    let Some((i0, i1)) = widest_run(freq, &clean, sr.map(|(i, _)| i + 1).unwrap_or(n)) else {
        reasons.push(no_band_reason(range, &noisy, z));
        return BandReport {
            band: None,
            f_sr,
            c_p: None,
            reasons,
        };
    };
    reasons.push(start_reason(freq, z, i0, range, &noisy));

    let c_p = f_sr.and_then(|f| {
        let r = freq[i0..=i1].partition_point(|&g| g < f / 5.0).min(i1 - i0) + i0;
        let mu_ref = z[r] / (C64::new(0.0, TAU * freq[r]) * l0);
        estimate_cp(f, l0, mu_ref)
    });
    let mu_prime: Vec<f64> = (i0..=i1)
        .map(|i| (z[i] / (C64::new(0.0, TAU * freq[i]) * l0)).re)
        .collect();
    let smooth = running_median(&mu_prime, 2);
    let mut end = i1;
    let mut end_reason = match (f_sr, i1 + 1 < n) {
        (_, false) => "ends at the end of the sweep".to_string(),
        (Some(f), true) if sr.map(|(i, _)| i1 >= i).unwrap_or(false) => {
            format!("ends below the self-resonance at {}", hz(f))
        }
        _ => format!(
            "ends at {}: {}",
            hz(freq[i1 + 1]),
            point_problem(z, i1 + 1, range, &noisy)
        ),
    };
    let mut lowest = f64::INFINITY;
    for i in i0..=i1 {
        let k = i - i0;
        let distortion = c_p.map(|c| TAU * freq[i] * c * z[i].norm()).unwrap_or(0.0);
        if distortion > DISTORTION_LIMIT && i > i0 {
            end = i - 1;
            end_reason = format!(
                "ends at {}: the winding capacitance ≈ {:.3} pF (self-resonance {}) changes Z by more than {} %",
                hz(freq[end]),
                c_p.unwrap_or(0.0) * 1e12,
                hz(f_sr.unwrap_or(f64::NAN)),
                DISTORTION_LIMIT * 100.0
            );
            break;
        }
        lowest = lowest.min(smooth[k]);
        if lowest > 0.0 && smooth[k] > (1.0 + RISE_LIMIT) * lowest && i > i0 {
            end = i - 1;
            end_reason = format!(
                "ends at {}: the apparent μ′ turns up by more than {} % (a resonance outside the material)",
                hz(freq[end]),
                RISE_LIMIT * 100.0
            );
            break;
        }
    }
    reasons.push(end_reason);
    if end + 1 < i0 + MIN_POINTS {
        reasons.push(format!("fewer than {} points remain", MIN_POINTS));
        return BandReport {
            band: None,
            f_sr,
            c_p,
            reasons,
        };
    }
    BandReport {
        band: Some((i0, end)),
        f_sr,
        c_p,
        reasons,
    }
}

/// Scatter of each point about the running median of its neighbours, relative to that median,
/// smoothed by a second running median so single outliers do not split the band. The scatter
/// is taken on Z/f (∝ L0·μ), which a wound core keeps nearly flat, so a coarse grid on a steep
/// |Z| ∝ f does not pass for noise.
pub fn noise_mask(freq: &[f64], z: &[C64]) -> Vec<bool> {
    let h = NOISE_HALF_WINDOW;
    let re: Vec<f64> = z.iter().zip(freq).map(|(v, f)| v.re / f).collect();
    let im: Vec<f64> = z.iter().zip(freq).map(|(v, f)| v.im / f).collect();
    let (mre, mim) = (running_median(&re, h), running_median(&im, h));
    let scatter: Vec<f64> = (0..z.len())
        .map(|i| {
            let m = C64::new(mre[i], mim[i]);
            let s = (C64::new(re[i], im[i]) - m).norm() / m.norm();
            if s.is_finite() {
                s
            } else {
                f64::INFINITY
            }
        })
        .collect();
    running_median(&scatter, h)
        .into_iter()
        .map(|s| s > NOISE_LIMIT)
        .collect()
}

/// Median over a window of ±h points (clipped at the ends).
pub fn running_median(v: &[f64], h: usize) -> Vec<f64> {
    (0..v.len())
        .map(|i| {
            let mut w: Vec<f64> = v[i.saturating_sub(h)..(i + h + 1).min(v.len())].to_vec();
            w.sort_by(f64::total_cmp);
            let m = w.len();
            if m % 2 == 1 {
                w[m / 2]
            } else {
                (w[m / 2 - 1] + w[m / 2]) / 2.0
            }
        })
        .collect()
}

/// The run of `clean` points below index `limit` spanning the most decades.
fn widest_run(freq: &[f64], clean: &[bool], limit: usize) -> Option<(usize, usize)> {
    let mut best: Option<(usize, usize, f64)> = None;
    let mut i = 0;
    let limit = limit.min(clean.len());
    while i < limit {
        if !clean[i] {
            i += 1;
            continue;
        }
        let start = i;
        while i + 1 < limit && clean[i + 1] {
            i += 1;
        }
        let span = (freq[i] / freq[start]).ln();
        if i + 1 - start >= MIN_POINTS && best.map(|b| span > b.2).unwrap_or(true) {
            best = Some((start, i, span));
        }
        i += 1;
    }
    best.map(|(a, b, _)| (a, b))
}

fn point_problem(z: &[C64], i: usize, range: Option<(f64, f64)>, noisy: &[bool]) -> String {
    let m = z[i].norm();
    match range {
        Some((lo, _)) if m < lo => format!(
            "|Z| = {} below the set-up's accurate range from {} (common practice)",
            ohm(m),
            ohm(lo)
        ),
        Some((_, hi)) if m > hi => format!(
            "|Z| = {} above the set-up's accurate range up to {} (common practice)",
            ohm(m),
            ohm(hi)
        ),
        _ if noisy[i] => format!(
            "noise-dominated (local scatter above {} %)",
            NOISE_LIMIT * 100.0
        ),
        _ if z[i].im <= 0.0 => "the winding is not inductive (X ≤ 0)".to_string(),
        _ => "not a finite impedance".to_string(),
    }
}

fn start_reason(
    freq: &[f64],
    z: &[C64],
    i0: usize,
    range: Option<(f64, f64)>,
    noisy: &[bool],
) -> String {
    if i0 == 0 {
        format!("starts at the start of the sweep, {}", hz(freq[0]))
    } else {
        format!(
            "starts at {}: below it, {}",
            hz(freq[i0]),
            point_problem(z, i0 - 1, range, noisy)
        )
    }
}

fn no_band_reason(range: Option<(f64, f64)>, noisy: &[bool], z: &[C64]) -> String {
    let low = range
        .map(|(lo, _)| z.iter().filter(|v| v.norm() < lo).count())
        .unwrap_or(0);
    let high = range
        .map(|(_, hi)| z.iter().filter(|v| v.norm() > hi).count())
        .unwrap_or(0);
    let noise = noisy.iter().filter(|&&b| b).count();
    let capacitive = z.iter().filter(|v| v.im <= 0.0).count();
    format!(
        "no stretch of {} clean inductive points: of {} points, {} have |Z| below and {} above the accurate range, {} are noise-dominated, {} are not inductive",
        MIN_POINTS,
        z.len(),
        low,
        high,
        noise,
        capacitive
    )
}

/// Frequency in words with an engineering prefix.
pub fn hz(f: f64) -> String {
    eng(f, "Hz")
}

fn ohm(r: f64) -> String {
    eng(r, "Ω")
}

/// Four significant figures with an SI prefix, trailing zeros dropped: `2.131 MHz`, `875.7 mΩ`.
fn eng(v: f64, unit: &str) -> String {
    let (scale, prefix) = [
        (1e9, "G"),
        (1e6, "M"),
        (1e3, "k"),
        (1.0, ""),
        (1e-3, "m"),
        (1e-6, "µ"),
    ]
    .into_iter()
    .find(|(s, _)| v.abs() >= *s)
    .unwrap_or((1e-6, "µ"));
    let x = v / scale;
    let decimals = (3 - x.abs().max(1.0).log10().floor() as i32).max(0) as usize;
    let text = format!("{:.*}", decimals, x);
    let text = if text.contains('.') {
        text.trim_end_matches('0').trim_end_matches('.')
    } else {
        &text
    };
    format!("{} {}{}", text, prefix, unit)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::extract::tests::{log_grid, Lcg};
    use crate::extract::winding::{impedance_at, Winding};
    use crate::geometry::Core;

    // Self-resonance [D, PHYSICS.md §2]: a 20-turn winding with 4 pF on a Debye material
    // resonates inside the sweep; the band must end below it, with C_p recovered roughly
    // (PHYSICS.md: "fit C_p from the measured resonance").
    #[test]
    fn physics_band_ends_below_self_resonance() {
        let core = Core::parse("toroid:od=10mm,id=4mm,h=4mm").unwrap();
        let w = Winding {
            c_p: Some(4e-12),
            ..Winding::turns(20.0)
        };
        let freq = log_grid(1e4, 4e8, 600);
        let mu = |f: f64| C64::new(5.0, 0.0) + 120.0 / C64::new(1.0, f / 30e6);
        let z: Vec<C64> = freq
            .iter()
            .map(|&f| impedance_at(f, mu(f), &core, &w))
            .collect();
        let r = analyse(&freq, &z, w.l0(&core), Some((1.0, 2e3)));
        let (_, hi) = r.band.unwrap();
        let f_sr = r.f_sr.unwrap();
        assert!(
            freq[hi] < f_sr / 2.0,
            "band to {} with resonance at {}",
            freq[hi],
            f_sr
        );
        let c_p = r.c_p.unwrap();
        assert!(c_p > 2e-12 && c_p < 6e-12, "{}", c_p);
        // Where the band ends, the capacitance distorts Z by at most the limit (checked on the
        // exact model): |Z/Z_core − 1| ≲ DISTORTION_LIMIT.
        let f = freq[hi];
        let z_core = impedance_at(f, mu(f), &core, &Winding::turns(20.0));
        assert!((z[hi] / z_core - 1.0).norm() < 2.0 * DISTORTION_LIMIT);
    }

    // |Z| below the reflection range (1 Ω, common practice PHYSICS.md §3) starts the band late.
    #[test]
    fn band_starts_where_z_enters_accurate_range() {
        let core = Core::parse("toroid:od=10mm,id=5mm,h=5mm").unwrap();
        let w = Winding::turns(1.0);
        let freq = log_grid(1e5, 1e8, 300);
        let z: Vec<C64> = freq
            .iter()
            .map(|&f| impedance_at(f, C64::new(100.0, -5.0), &core, &w))
            .collect();
        let r = analyse(&freq, &z, w.l0(&core), Some((1.0, 2e3)));
        let (lo, _) = r.band.unwrap();
        assert!(z[lo].norm() >= 1.0 && z[lo - 1].norm() < 1.0);
        assert!(
            r.reasons[0].contains("below the set-up's accurate range"),
            "{:?}",
            r.reasons
        );
    }

    // Pure noise has no band, and the reason says so.
    #[test]
    fn noise_has_no_band() {
        let freq = log_grid(1e5, 1e8, 200);
        let mut rng = Lcg(12345);
        let z: Vec<C64> = freq
            .iter()
            .map(|_| C64::new(0.3 * rng.next(), 2.0 * rng.next()))
            .collect();
        let r = analyse(&freq, &z, 1e-9, None);
        assert!(
            r.band.is_none() && r.reasons[0].contains("noise"),
            "{:?}",
            r
        );
    }

    #[test]
    fn engineering_notation_for_people() {
        assert_eq!(hz(2.130_94e6), "2.131 MHz");
        assert_eq!(hz(941_800.0), "941.8 kHz");
        assert_eq!(hz(1e6), "1 MHz");
        assert_eq!(ohm(0.8756918), "875.7 mΩ");
    }
}
