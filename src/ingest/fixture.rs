//! Fixture corrections: empty-fixture subtraction and open/short compensation.
//!
//! Both take the fixture sweeps already turned into impedance (same method and reference as the
//! measurement), interpolate them onto the measurement's frequency grid and record what was done,
//! with each fixture file's name and SHA-256, in [`ImpedanceSweep::corrections`].

use super::{ImpedanceSweep, IngestError};
use crate::error::Diagnostic;
use crate::C64;

/// Relative slack at the ends of a fixture sweep: two exports of the same grid written in
/// different units (MHz vs Hz) can differ in the last bits, which must not count as "outside".
pub const EDGE_SLACK: f64 = 1e-9;

/// Interpolate `z(freq)` onto `at`, linearly in ln f for the real and the imaginary part
/// separately (impedance of wound cores changes smoothly over decades, not linearly in f).
/// `freq` must be strictly increasing. Returns the index into `at` of the first frequency
/// outside `freq`'s range as the error.
pub fn interpolate_log_f(freq: &[f64], z: &[C64], at: &[f64]) -> Result<Vec<C64>, usize> {
    let (Some(&lo), Some(&hi)) = (freq.first(), freq.last()) else {
        return Err(0);
    };
    at.iter()
        .enumerate()
        .map(|(i, &f)| {
            if f < lo * (1.0 - EDGE_SLACK) || f > hi * (1.0 + EDGE_SLACK) || !f.is_finite() {
                return Err(i);
            }
            let f = f.clamp(lo, hi);
            // First index with freq[k] >= f; an exact grid match returns the value unchanged.
            let k = freq.partition_point(|&g| g < f);
            if freq[k] == f {
                return Ok(z[k]);
            }
            let (f0, f1) = (freq[k - 1], freq[k]);
            let t = (f / f0).ln() / (f1 / f0).ln();
            Ok(z[k - 1] + (z[k] - z[k - 1]) * t)
        })
        .collect()
}

/// One fixture sweep on the measurement's grid, or an error naming its range.
fn on_grid(
    meas: &ImpedanceSweep,
    fixture: &ImpedanceSweep,
    role: &str,
) -> Result<Vec<C64>, IngestError> {
    interpolate_log_f(&fixture.freq_hz, &fixture.z, &meas.freq_hz).map_err(|i| {
        let (lo, hi) = band(&fixture.freq_hz);
        let (m_lo, m_hi) = band(&meas.freq_hz);
        Diagnostic::new(format!(
            "point {}: {} Hz is outside the {} sweep {} ({} Hz to {} Hz)",
            i + 1,
            meas.freq_hz.get(i).copied().unwrap_or(f64::NAN),
            role,
            fixture.source.file_name(),
            lo,
            hi
        ))
        .file(&meas.source.path)
        .expected(format!(
            "a {} sweep covering the measurement's band ({} Hz to {} Hz)",
            role, m_lo, m_hi
        ))
        .hint(format!(
            "re-measure the {} fixture over the whole band; extrapolating a fixture is not safe",
            role
        ))
        .into()
    })
}

/// First and last frequency (NaN for an empty grid, which validation never lets through).
fn band(freq: &[f64]) -> (f64, f64) {
    (
        freq.first().copied().unwrap_or(f64::NAN),
        freq.last().copied().unwrap_or(f64::NAN),
    )
}

fn describe(fixture: &ImpedanceSweep) -> String {
    format!(
        "{} (sha256 {})",
        fixture.source.file_name(),
        fixture.source.sha256
    )
}

/// Carry a fixture file's warnings over, naming the file they came from.
fn take_warnings(out: &mut ImpedanceSweep, fixture: &ImpedanceSweep, role: &str) {
    for w in &fixture.warnings {
        out.warnings.push(format!(
            "{} sweep {}: {}",
            role,
            fixture.source.file_name(),
            w
        ));
    }
}

/// Empty-fixture subtraction, Z_dut = Z_meas − Z_empty (PHYSICS.md §2: the shorted coaxial
/// fixture measured without the core, Radonić et al. 2010).
pub fn subtract_empty(
    meas: ImpedanceSweep,
    empty: &ImpedanceSweep,
) -> Result<ImpedanceSweep, IngestError> {
    let z_empty = on_grid(&meas, empty, "empty-fixture")?;
    let mut out = meas;
    for (z, e) in out.z.iter_mut().zip(&z_empty) {
        *z -= e;
    }
    out.corrections.push(format!(
        "empty fixture subtracted: {}, {} points, interpolated linearly in log f",
        describe(empty),
        empty.freq_hz.len()
    ));
    take_warnings(&mut out, empty, "empty-fixture");
    Ok(out)
}

/// Open/short compensation for a fixture modelled, as is common practice of impedance-analyser
/// compensation, by a series residual impedance Z_s followed by a stray admittance Y_o across the
/// part: Z_m = Z_s + 1/(Y_o + 1/Z_dut). The short standard (Z_dut = 0) measures Z_s, the open
/// standard (Z_dut = ∞) measures Z_o = Z_s + 1/Y_o, so Y_o = 1/(Z_o − Z_s) and
/// Z_dut = (Z_m − Z_s)/(1 − (Z_m − Z_s)·Y_o).
pub fn open_short_compensate(z_m: C64, z_open: C64, z_short: C64) -> C64 {
    let y_o = 1.0 / (z_open - z_short);
    (z_m - z_short) / (1.0 - (z_m - z_short) * y_o)
}

/// Apply [`open_short_compensate`] at every point, with both standards interpolated onto the
/// measurement grid.
pub fn compensate_open_short(
    meas: ImpedanceSweep,
    open: &ImpedanceSweep,
    short: &ImpedanceSweep,
) -> Result<ImpedanceSweep, IngestError> {
    let z_open = on_grid(&meas, open, "open")?;
    let z_short = on_grid(&meas, short, "short")?;
    let mut out = meas;
    for i in 0..out.z.len() {
        let z = open_short_compensate(out.z[i], z_open[i], z_short[i]);
        if !(z.re.is_finite() && z.im.is_finite()) {
            return Err(Diagnostic::new(format!(
                "point {}: open/short compensation is singular at {} Hz (the measurement or the short equals the open)",
                i + 1,
                out.freq_hz[i]
            ))
            .file(&out.source.path)
            .expected("an open standard that differs from both the short and the part")
            .hint("check that --open and --short name the right files")
            .into());
        }
        out.z[i] = z;
    }
    out.corrections.push(format!(
        "open/short compensation: open {}, short {}; Z = (Zm - Zs)/(1 - (Zm - Zs)/(Zo - Zs)), standards interpolated linearly in log f",
        describe(open),
        describe(short)
    ));
    take_warnings(&mut out, open, "open");
    take_warnings(&mut out, short, "short");
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::ingest::SourceInfo;
    use std::path::Path;

    fn c(re: f64, im: f64) -> C64 {
        C64::new(re, im)
    }

    fn sweep(name: &str, freq: &[f64], z: Vec<C64>) -> ImpedanceSweep {
        ImpedanceSweep {
            source: SourceInfo::from_bytes(Path::new(name), name.as_bytes()),
            freq_hz: freq.to_vec(),
            z,
            method: None,
            z0: None,
            detected: vec![],
            corrections: vec![],
            warnings: vec![],
        }
    }

    // Hand arithmetic: halfway in log f between 1 MHz and 100 MHz is 10 MHz.
    #[test]
    fn interpolation_is_linear_in_log_frequency() {
        let f = [1e6, 1e8];
        let z = [c(1.0, 10.0), c(3.0, 30.0)];
        let got = interpolate_log_f(&f, &z, &[1e6, 1e7, 1e8]).unwrap();
        assert_eq!(got[0], z[0]);
        assert!((got[1] - c(2.0, 20.0)).norm() < 1e-12, "{}", got[1]);
        assert_eq!(got[2], z[1]);
        // A quarter decade in: t = log10(10^0.5)/2 = 0.25.
        let q = interpolate_log_f(&f, &z, &[10f64.powf(6.5)]).unwrap();
        assert!((q[0] - c(1.5, 15.0)).norm() < 1e-12);
        // Outside the range, and within the edge slack.
        assert_eq!(interpolate_log_f(&f, &z, &[2e6, 2e8]), Err(1));
        assert_eq!(interpolate_log_f(&f, &z, &[0.9e6]), Err(0));
        assert!(interpolate_log_f(&f, &z, &[1e8 * (1.0 + 1e-12)]).is_ok());
    }

    #[test]
    fn empty_subtraction_on_a_coarser_grid() {
        let meas = sweep(
            "m.csv",
            &[1e6, 1e7, 1e8],
            vec![c(10.0, 100.0), c(20.0, 200.0), c(30.0, 300.0)],
        );
        let empty = sweep("e.csv", &[1e6, 1e8], vec![c(1.0, 10.0), c(3.0, 30.0)]);
        let out = subtract_empty(meas, &empty).unwrap();
        assert!((out.z[1] - c(18.0, 180.0)).norm() < 1e-12);
        assert_eq!(out.z[2], c(27.0, 270.0));
        assert!(
            out.corrections[0].starts_with("empty fixture subtracted: e.csv (sha256 "),
            "{:?}",
            out.corrections
        );
        assert!(out.corrections[0].contains(&crate::ingest::sha256_hex(b"e.csv")));
    }

    #[test]
    fn empty_sweep_not_covering_the_band_is_an_error_naming_the_range() {
        let meas = sweep("m.csv", &[1e6, 1e7, 1e9], vec![c(1.0, 1.0); 3]);
        let empty = sweep("e.csv", &[1e6, 1e8], vec![c(0.0, 0.0); 2]);
        let e = subtract_empty(meas, &empty).unwrap_err().0.to_string();
        assert!(e.starts_with("m.csv: point 3: 1000000000 Hz is outside the empty-fixture sweep e.csv (1000000 Hz to 100000000 Hz)"), "{}", e);
    }

    // Hand arithmetic: Zs = 1 Ω, Zo = 1001 Ω → Yo = 1 mS; Zm = 101 Ω → Zm − Zs = 100 Ω,
    // Z = 100/(1 − 0.1) = 111.11 Ω; forward check 1 + 1/(0.001 + 1/111.11) = 101 Ω.
    #[test]
    fn open_short_against_hand_arithmetic() {
        let z = open_short_compensate(c(101.0, 0.0), c(1001.0, 0.0), c(1.0, 0.0));
        assert!((z - c(1000.0 / 9.0, 0.0)).norm() < 1e-12, "{}", z);
        // Complex fixture: forward model with Zs = 0.2 + j3 Ω, Yo = j2π·1 MHz·5 pF, then undo.
        let zs = c(0.2, 3.0);
        let yo = c(0.0, 2.0 * std::f64::consts::PI * 1e6 * 5e-12);
        let dut = c(43.552, 87.103);
        let zm = zs + 1.0 / (yo + 1.0 / dut);
        let zo = zs + 1.0 / yo;
        assert!((open_short_compensate(zm, zo, zs) - dut).norm() < 1e-9 * dut.norm());
    }

    #[test]
    fn open_short_records_both_files_and_refuses_singular_points() {
        let f = [1e6, 2e6, 3e6];
        let meas = sweep("m.csv", &f, vec![c(101.0, 0.0); 3]);
        let open = sweep("open.csv", &f, vec![c(1001.0, 0.0); 3]);
        let short = sweep("short.csv", &f, vec![c(1.0, 0.0); 3]);
        let out = compensate_open_short(meas.clone(), &open, &short).unwrap();
        assert!((out.z[2] - c(1000.0 / 9.0, 0.0)).norm() < 1e-12);
        assert!(
            out.corrections[0].contains("open open.csv (sha256")
                && out.corrections[0].contains("short short.csv (sha256")
        );
        let e = compensate_open_short(meas, &open, &open)
            .unwrap_err()
            .0
            .to_string();
        assert!(
            e.contains("point 1: open/short compensation is singular at 1000000 Hz"),
            "{}",
            e
        );
    }
}
