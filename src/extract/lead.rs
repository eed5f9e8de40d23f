//! Lead inductance solved from windings of different turns on the same core (PHYSICS.md §2):
//! at each frequency Z_k = z_lead + N_k²·y, where y = jω·M·L0(1 turn)·μ_e is common to all
//! windings and z_lead (≈ jωL_lead) does not scale with N². A complex least-squares straight
//! line in N² gives z_lead; L_lead = Im(z_lead)/ω, summarised by its median over the band.

use super::gap::percentile;
use crate::C64;
use std::f64::consts::TAU;

/// The lead inductance found and its spread over the band.
#[derive(Debug, Clone, PartialEq)]
pub struct LeadSolution {
    /// Median of the per-frequency values, H.
    pub l_lead: f64,
    /// 16th and 84th percentiles of the per-frequency values, H.
    pub p16: f64,
    pub p84: f64,
    /// Frequencies used.
    pub points: usize,
}

/// Least-squares line Z = a + u·b over the windings (u_k = N_k²); None unless at least two
/// distinct u are given.
pub fn intercept_and_slope(u: &[f64], z: &[C64]) -> Option<(C64, C64)> {
    let n = u.len() as f64;
    let u_mean = u.iter().sum::<f64>() / n;
    let z_mean = z.iter().sum::<C64>() / n;
    let suu: f64 = u.iter().map(|x| (x - u_mean).powi(2)).sum();
    if !(suu > 0.0) {
        return None;
    }
    let b = u
        .iter()
        .zip(z)
        .map(|(x, zk)| (x - u_mean) * (zk - z_mean))
        .sum::<C64>()
        / suu;
    Some((z_mean - b * u_mean, b))
}

/// Solve the lead inductance from `z[k][i]` (winding k at frequency index i) with turns `turns`
/// over the indices `points`.
pub fn solve(
    freq: &[f64],
    z: &[Vec<C64>],
    turns: &[f64],
    points: impl Iterator<Item = usize>,
) -> Option<LeadSolution> {
    let u: Vec<f64> = turns.iter().map(|n| n * n).collect();
    let per: Vec<f64> = points
        .filter_map(|i| {
            let zi: Vec<C64> = z.iter().map(|zk| zk[i]).collect();
            intercept_and_slope(&u, &zi).map(|(a, _)| a.im / (TAU * freq[i]))
        })
        .collect();
    Some(LeadSolution {
        l_lead: percentile(&per, 50.0)?,
        p16: percentile(&per, 16.0)?,
        p84: percentile(&per, 84.0)?,
        points: per.len(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    // The model of PHYSICS.md §2 ("the lead term does not scale with N², the core term does"),
    // built from known parts: 35 nH of lead, a lossy core, N = 1, 2, 5.
    #[test]
    fn physics_lead_solve_recovers_stated_lead() {
        let freq: Vec<f64> = (1..50).map(|k| k as f64 * 1e6).collect();
        let turns = [1.0, 2.0, 5.0];
        let z: Vec<Vec<C64>> = turns
            .iter()
            .map(|n| {
                freq.iter()
                    .map(|&f| {
                        let jw = C64::new(0.0, TAU * f);
                        jw * 35e-9 + n * n * jw * 1e-9 * C64::new(80.0, -30.0)
                    })
                    .collect()
            })
            .collect();
        let s = solve(&freq, &z, &turns, 0..freq.len()).unwrap();
        assert!(
            (s.l_lead - 35e-9).abs() < 1e-15 && (s.p84 - s.p16).abs() < 1e-15,
            "{:?}",
            s
        );
        assert!(intercept_and_slope(&[4.0, 4.0], &[C64::new(1.0, 0.0); 2]).is_none());
    }
}
