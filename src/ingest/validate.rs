//! Checks every reader's output goes through: finite, positive, strictly increasing frequencies
//! (exact repeats at segment boundaries merged with a warning), finite values, enough points,
//! passivity (|S| ≤ 1, Re Z ≥ 0; a warning with the count, not fatal).
//!
//! Readers do not keep a line number per point, so errors name the point (1-based, in file
//! order) and its frequency instead.

use super::{IngestError, Sweep, SweepData};
use crate::error::Diagnostic;
use crate::C64;

/// Fewest points a sweep may have: extraction and fitting need a band, not a spot value.
pub const MIN_POINTS: usize = 3;

/// Check a freshly read sweep; merge exact repeated frequencies; add passivity warnings.
pub fn check_sweep(sweep: Sweep) -> Result<Sweep, IngestError> {
    let mut sweep = sweep;
    check_shape(&sweep)?;
    check_references(&sweep.data)?;
    check_frequencies(&sweep.freq_hz)?;
    check_values(&sweep)?;
    let merged = merge_repeats(&mut sweep);
    if merged > 0 {
        sweep.warnings.push(format!(
            "{} repeated frequenc{} (sweep-segment boundaries) merged by averaging their values",
            merged,
            if merged == 1 { "y" } else { "ies" }
        ));
    }
    if sweep.freq_hz.len() < MIN_POINTS {
        return Err(Diagnostic::new(format!(
            "only {} distinct frequency point{}; at least {} are needed",
            sweep.freq_hz.len(),
            if sweep.freq_hz.len() == 1 { "" } else { "s" },
            MIN_POINTS
        ))
        .expected(format!("a sweep of at least {} frequencies", MIN_POINTS))
        .hint("export the whole sweep from the analyser, not a single marker reading")
        .into());
    }
    sweep.warnings.extend(passivity_warning(&sweep));
    Ok(sweep)
}

fn check_shape(sweep: &Sweep) -> Result<(), IngestError> {
    if sweep.freq_hz.is_empty() {
        return Err(Diagnostic::new("the file holds no data points")
            .expected(format!(
                "at least {} rows of frequency and data",
                MIN_POINTS
            ))
            .hint("check that this is the exported sweep and not an empty or truncated file")
            .into());
    }
    if sweep.data.len() != sweep.freq_hz.len() {
        // A reader bug rather than a user error, but still reported, never a panic.
        return Err(Diagnostic::new(format!(
            "{} frequencies but {} data values were read",
            sweep.freq_hz.len(),
            sweep.data.len()
        ))
        .expected("one data value per frequency")
        .into());
    }
    Ok(())
}

fn check_references(data: &SweepData) -> Result<(), IngestError> {
    let refs: &[f64] = match data {
        SweepData::Impedance(_) => &[],
        SweepData::Reflection { z0, .. } => std::slice::from_ref(z0),
        SweepData::Transmission { z0, .. } | SweepData::TwoPort { z0, .. } => z0,
    };
    for &r in refs {
        if !(r.is_finite() && r > 0.0) {
            return Err(Diagnostic::new(format!(
                "reference impedance {} Ω is not a positive number",
                r
            ))
            .expected("a positive, real reference impedance such as 50 Ω")
            .hint("give the reference with --z0, e.g. --z0 50")
            .into());
        }
    }
    Ok(())
}

fn check_frequencies(freq: &[f64]) -> Result<(), IngestError> {
    for (i, &f) in freq.iter().enumerate() {
        if !f.is_finite() {
            return Err(
                point_error(i, format!("frequency is {}", f), "a finite frequency")
                    .hint("check the row for a missing or non-numeric frequency")
                    .into(),
            );
        }
        if f <= 0.0 {
            return Err(point_error(
                i,
                format!("frequency {} Hz is not positive", f),
                "frequencies above 0 Hz",
            )
            .hint("drop DC or negative-frequency rows from the export")
            .into());
        }
        if i > 0 && f < freq[i - 1] {
            return Err(point_error(
                i,
                format!("frequency decreases: {} Hz after {} Hz", f, freq[i - 1]),
                "frequencies in strictly increasing order",
            )
            .hint("sort the rows by frequency, or check for two sweeps pasted into one file")
            .into());
        }
    }
    Ok(())
}

fn check_values(sweep: &Sweep) -> Result<(), IngestError> {
    let finite = |z: &C64| z.re.is_finite() && z.im.is_finite();
    let first_bad = |v: &[C64]| v.iter().position(|z| !finite(z)).map(|i| (i, v[i]));
    let found = match &sweep.data {
        SweepData::Impedance(v) => first_bad(v),
        SweepData::Reflection { s11: v, .. } | SweepData::Transmission { s21: v, .. } => {
            first_bad(v)
        }
        SweepData::TwoPort { s, .. } => s
            .iter()
            .enumerate()
            .find_map(|(i, m)| m.iter().find(|z| !finite(z)).map(|&z| (i, z))),
    };
    let Some((i, z)) = found else { return Ok(()) };
    Err(point_error(
        i,
        format!(
            "{} value {}{:+}j at {} Hz is not finite",
            sweep.data.describe(),
            z.re,
            z.im,
            sweep.freq_hz[i]
        ),
        "finite numbers in every data column",
    )
    .hint("check the row for NaN, inf or an overflowed value")
    .into())
}

/// A diagnostic about point `index` (0-based inside, 1-based for the user).
fn point_error(index: usize, what: String, expected: &str) -> Diagnostic {
    Diagnostic::new(format!("point {}: {}", index + 1, what)).expected(expected)
}

/// Groups of equal, adjacent frequencies as (start, end-exclusive) index ranges.
fn runs(freq: &[f64]) -> Vec<(usize, usize)> {
    let mut out = Vec::new();
    let mut start = 0;
    for i in 1..=freq.len() {
        if i == freq.len() || freq[i] != freq[start] {
            out.push((start, i));
            start = i;
        }
    }
    out
}

fn average<T: Copy>(values: &[T], ranges: &[(usize, usize)], mean: impl Fn(&[T]) -> T) -> Vec<T> {
    ranges.iter().map(|&(a, b)| mean(&values[a..b])).collect()
}

fn mean_c(v: &[C64]) -> C64 {
    v.iter().sum::<C64>() / v.len() as f64
}

fn mean_matrix(v: &[[C64; 4]]) -> [C64; 4] {
    let mut m = [C64::new(0.0, 0.0); 4];
    for row in v {
        for k in 0..4 {
            m[k] += row[k];
        }
    }
    m.map(|x| x / v.len() as f64)
}

/// Merge runs of exactly equal frequencies into one point holding the mean value (real exports
/// repeat the boundary frequency of consecutive sweep segments). Returns how many points were
/// removed. Frequencies must already be non-decreasing.
fn merge_repeats(sweep: &mut Sweep) -> usize {
    let ranges = runs(&sweep.freq_hz);
    let removed = sweep.freq_hz.len() - ranges.len();
    if removed == 0 {
        return 0;
    }
    sweep.freq_hz = ranges.iter().map(|&(a, _)| sweep.freq_hz[a]).collect();
    match &mut sweep.data {
        SweepData::Impedance(v) => *v = average(v, &ranges, mean_c),
        SweepData::Reflection { s11: v, .. } | SweepData::Transmission { s21: v, .. } => {
            *v = average(v, &ranges, mean_c)
        }
        SweepData::TwoPort { s, .. } => *s = average(s, &ranges, mean_matrix),
    }
    removed
}

/// A passive part cannot reflect or pass more power than it receives, nor have negative
/// resistance. Such points usually mean a calibration or reference-impedance problem.
fn passivity_warning(sweep: &Sweep) -> Option<String> {
    let (name, magnitudes): (&str, Vec<f64>) = match &sweep.data {
        SweepData::Impedance(v) => {
            // Re Z < 0 is the impedance form of |S11| > 1.
            let n = v.iter().filter(|z| z.re < 0.0).count();
            return (n > 0).then(|| {
                format!(
                    "{} of {} points have negative resistance (Re Z < 0), which a passive part cannot have; \
                     check the export's sign convention and the fixture correction",
                    n,
                    v.len()
                )
            });
        }
        SweepData::Reflection { s11, .. } => ("|S11|", s11.iter().map(|s| s.norm()).collect()),
        SweepData::Transmission { s21, .. } => ("|S21|", s21.iter().map(|s| s.norm()).collect()),
        SweepData::TwoPort { s, .. } => ("|S11|", s.iter().map(|m| m[0].norm()).collect()),
    };
    let over: Vec<usize> = (0..magnitudes.len())
        .filter(|&i| magnitudes[i] > 1.0)
        .collect();
    let worst = over
        .iter()
        .copied()
        .max_by(|&a, &b| magnitudes[a].total_cmp(&magnitudes[b]))?;
    Some(format!(
        "{} of {} points have {} > 1 (largest {:.6} at {} Hz), which a passive part cannot produce; \
         check the calibration and the reference impedance",
        over.len(),
        magnitudes.len(),
        name,
        magnitudes[worst],
        sweep.freq_hz[worst]
    ))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::ingest::SourceInfo;
    use std::path::Path;

    fn sweep(freq: &[f64], data: SweepData) -> Sweep {
        Sweep {
            source: SourceInfo::from_bytes(Path::new("t.csv"), b""),
            freq_hz: freq.to_vec(),
            data,
            detected: vec![],
            warnings: vec![],
        }
    }

    fn z(values: &[(f64, f64)]) -> SweepData {
        SweepData::Impedance(values.iter().map(|&(r, x)| C64::new(r, x)).collect())
    }

    fn message(r: Result<Sweep, IngestError>) -> String {
        r.expect_err("should fail").0.to_string()
    }

    #[test]
    fn repeated_boundary_frequencies_are_averaged_with_a_warning() {
        // Two segments meeting at 2 MHz, each measuring it once: common practice of segmented sweeps.
        let s = sweep(
            &[1e6, 2e6, 2e6, 3e6],
            z(&[(1.0, 1.0), (2.0, 4.0), (4.0, 6.0), (5.0, 5.0)]),
        );
        let s = check_sweep(s).unwrap();
        assert_eq!(s.freq_hz, vec![1e6, 2e6, 3e6]);
        assert_eq!(s.data, z(&[(1.0, 1.0), (3.0, 5.0), (5.0, 5.0)]));
        assert_eq!(s.warnings.len(), 1);
        assert!(
            s.warnings[0].starts_with("1 repeated frequency"),
            "{}",
            s.warnings[0]
        );
    }

    #[test]
    fn two_port_repeats_average_every_entry() {
        let a = [
            C64::new(0.1, 0.0),
            C64::new(0.5, 0.0),
            C64::new(0.5, 0.0),
            C64::new(0.1, 0.0),
        ];
        let b = a.map(|x| x * 3.0);
        let s = sweep(
            &[1e6, 1e6, 1e6, 2e6, 3e6],
            SweepData::TwoPort {
                s: vec![a, b, b, a, a],
                z0: [50.0, 50.0],
            },
        );
        let s = check_sweep(s).unwrap();
        let SweepData::TwoPort { s: m, .. } = &s.data else {
            panic!("kind changed")
        };
        // (1 + 3 + 3)/3 = 7/3 of the first matrix.
        assert!((m[0][1] - C64::new(0.5 * 7.0 / 3.0, 0.0)).norm() < 1e-15);
        assert!(
            s.warnings[0].starts_with("2 repeated frequencies"),
            "{:?}",
            s.warnings
        );
    }

    #[test]
    fn decreasing_frequency_names_the_point_and_values() {
        let m = message(check_sweep(sweep(
            &[1e6, 3e6, 2e6, 4e6],
            z(&[(1.0, 0.0); 4]),
        )));
        assert!(
            m.contains("point 3") && m.contains("2000000 Hz after 3000000 Hz"),
            "{}",
            m
        );
    }

    #[test]
    fn non_positive_and_non_finite_frequencies_are_refused() {
        let m = message(check_sweep(sweep(&[-1e6, 1e6, 2e6], z(&[(1.0, 0.0); 3]))));
        assert!(m.contains("point 1") && m.contains("not positive"), "{}", m);
        let m = message(check_sweep(sweep(&[0.0, 1e6, 2e6], z(&[(1.0, 0.0); 3]))));
        assert!(m.contains("not positive"), "{}", m);
        let m = message(check_sweep(sweep(
            &[1e6, f64::NAN, 2e6],
            z(&[(1.0, 0.0); 3]),
        )));
        assert!(m.contains("point 2") && m.contains("NaN"), "{}", m);
    }

    #[test]
    fn non_finite_values_are_refused() {
        let m = message(check_sweep(sweep(
            &[1e6, 2e6, 3e6],
            z(&[(1.0, 0.0), (1.0, f64::INFINITY), (1.0, 0.0)]),
        )));
        assert!(
            m.contains("point 2: Z value 1+infj at 2000000 Hz is not finite"),
            "{}",
            m
        );
    }

    #[test]
    fn too_few_points_counted_after_merging() {
        let m = message(check_sweep(sweep(&[1e6, 2e6, 2e6], z(&[(1.0, 0.0); 3]))));
        assert!(
            m.contains("only 2 distinct frequency points") && m.contains("at least 3"),
            "{}",
            m
        );
        let m = message(check_sweep(sweep(&[], z(&[]))));
        assert!(m.contains("no data points"), "{}", m);
    }

    #[test]
    fn reflection_above_one_is_a_warning_with_the_count() {
        let s11 = vec![
            C64::new(0.5, 0.0),
            C64::new(1.01, 0.0),
            C64::new(0.0, 1.02),
            C64::new(0.2, 0.1),
        ];
        let s = check_sweep(sweep(
            &[1e6, 2e6, 3e6, 4e6],
            SweepData::Reflection { s11, z0: 50.0 },
        ))
        .unwrap();
        assert_eq!(s.warnings.len(), 1);
        assert!(
            s.warnings[0]
                .starts_with("2 of 4 points have |S11| > 1 (largest 1.020000 at 3000000 Hz"),
            "{}",
            s.warnings[0]
        );
        let s = check_sweep(sweep(
            &[1e6, 2e6, 3e6],
            SweepData::Reflection {
                s11: vec![C64::new(0.9, 0.0); 3],
                z0: 50.0,
            },
        ))
        .unwrap();
        assert!(s.warnings.is_empty());
    }

    #[test]
    fn bad_reference_impedance_is_refused() {
        let m = message(check_sweep(sweep(
            &[1e6, 2e6, 3e6],
            SweepData::Reflection {
                s11: vec![C64::new(0.1, 0.0); 3],
                z0: 0.0,
            },
        )));
        assert!(m.contains("reference impedance 0"), "{}", m);
    }
}
