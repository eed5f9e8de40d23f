//! From a [`super::Sweep`] and a measurement set-up to the part's impedance.
//!
//! Defaults: 1-port (S11) data → reflection, 2-port data → series-through, impedance data → no
//! conversion. S21-only data has no default: series and shunt read the same column in opposite
//! ways, so the user must say which. A method or `--z0` given for impedance data is ignored with a
//! warning (the same options are shared by several files, e.g. a measurement and its fixture).

use super::convert;
use super::{ImpedanceSweep, IngestError, Method, Sweep, SweepData};
use crate::error::Diagnostic;
use crate::C64;

/// Turn a checked sweep into impedance. `z0_override` replaces the file's reference impedance
/// on every port (for files whose header lost it).
pub fn to_impedance(
    sweep: &Sweep,
    method: Option<Method>,
    z0_override: Option<f64>,
) -> Result<ImpedanceSweep, IngestError> {
    let mut detected = sweep.detected.clone();
    let mut warnings = sweep.warnings.clone();
    let refs =
        |file: &[f64]| -> Vec<f64> { file.iter().map(|&r| z0_override.unwrap_or(r)).collect() };
    let (z, method, z0) = match &sweep.data {
        SweepData::Impedance(z) => {
            if let Some(m) = method {
                warnings.push(format!(
                    "the file holds impedance; --method {} ignored",
                    m.name()
                ));
            }
            if let Some(r) = z0_override {
                warnings.push(format!("the file holds impedance; --z0 {} ignored", r));
            }
            (z.clone(), None, Vec::new())
        }
        SweepData::Reflection { s11, z0 } => {
            let m = chosen(
                method,
                Method::Reflection,
                "1-port (S11) data",
                &mut detected,
            );
            if m != Method::Reflection {
                return Err(needs_two_port(m, "1-port (S11)"));
            }
            let r = refs(&[*z0])[0];
            (
                convert_each(sweep, s11, |s| convert::s11_to_z(s, r))?,
                Some(m),
                vec![r],
            )
        }
        SweepData::Transmission { s21, z0 } => {
            let Some(m) = method else {
                return Err(Diagnostic::new("the file holds only S21; the set-up cannot be guessed")
                    .expected("--method series (part between the ports) or --method shunt (part across the line)")
                    .hint("add --method series or --method shunt")
                    .into());
            };
            if m == Method::Reflection {
                return Err(Diagnostic::new("--method reflection needs S11, but the file holds only S21")
                    .expected("--method series or --method shunt for S21 data")
                    .hint("use --method series or --method shunt, or export S11 for a reflection measurement")
                    .into());
            }
            let r = refs(z0);
            (through(sweep, s21, m, [r[0], r[1]])?, Some(m), r)
        }
        SweepData::TwoPort { s, z0 } => {
            let m = chosen(method, Method::Series, "2-port data", &mut detected);
            let r = refs(z0);
            let z = match m {
                // Reflection on 2-port data: the part terminates port 1, S11 is all that matters.
                Method::Reflection => {
                    let s11: Vec<C64> = s.iter().map(|m| m[0]).collect();
                    convert_each(sweep, &s11, |x| convert::s11_to_z(x, r[0]))?
                }
                Method::Series | Method::Shunt => {
                    let s21: Vec<C64> = s.iter().map(|m| m[2]).collect();
                    through(sweep, &s21, m, [r[0], r[1]])?
                }
            };
            (z, Some(m), r)
        }
    };
    if let (Some(m), [a, b]) = (method, z0.as_slice()) {
        if a != b && m != Method::Reflection {
            detected.push(format!(
                "unequal port references {} Ω (port 1) and {} Ω (port 2); {} conversion uses both",
                a,
                b,
                m.name()
            ));
        }
    }
    let z0 = z0.first().copied();
    Ok(ImpedanceSweep {
        source: sweep.source.clone(),
        freq_hz: sweep.freq_hz.clone(),
        z,
        method,
        z0,
        detected,
        corrections: Vec::new(),
        warnings,
    })
}

/// The user's method, or the default for this kind of data (said in `detected`).
fn chosen(
    method: Option<Method>,
    default: Method,
    what: &str,
    detected: &mut Vec<String>,
) -> Method {
    method.unwrap_or_else(|| {
        detected.push(format!("method {} (default for {})", default.name(), what));
        default
    })
}

fn needs_two_port(m: Method, what: &str) -> IngestError {
    Diagnostic::new(format!(
        "--method {} needs 2-port data (S21), but the file holds {} data",
        m.name(),
        what
    ))
    .expected("--method reflection for 1-port data")
    .hint("drop --method, or give the 2-port (.s2p) export of the through measurement")
    .into()
}

/// Series- or shunt-through conversion of S21 at port references `r`.
fn through(sweep: &Sweep, s21: &[C64], m: Method, r: [f64; 2]) -> Result<Vec<C64>, IngestError> {
    match m {
        Method::Series => convert_each(sweep, s21, |s| convert::s21_series_to_z(s, r[0], r[1])),
        _ => convert_each(sweep, s21, |s| s21_shunt_to_z(s, r[0], r[1])),
    }
}

/// Shunt element across a line between real references R1, R2. From the ABCD matrix of a shunt
/// admittance (A = D = 1, B = 0, C = Y) and S21 = 2√(R1R2)/(A·R2 + B + C·R1R2 + D·R1) [Frickey,
/// IEEE Trans. MTT 42(2), 1994]: Y = (2√(R1R2)/S21 − R1 − R2)/(R1R2). Equal references give
/// Z = Z0·S21/(2(1 − S21)) (Pozar; [`convert::s21_shunt_to_z`]), which is used then.
fn s21_shunt_to_z(s21: C64, r1: f64, r2: f64) -> C64 {
    if r1 == r2 {
        return convert::s21_shunt_to_z(s21, r1);
    }
    let y = (2.0 * (r1 * r2).sqrt() / s21 - (r1 + r2)) / (r1 * r2);
    1.0 / y
}

/// Apply `f` to every point; a point that has no finite impedance (S11 = 1, S21 = 0 in series,
/// S21 = 1 in shunt) is an error naming the point.
fn convert_each(
    sweep: &Sweep,
    values: &[C64],
    f: impl Fn(C64) -> C64,
) -> Result<Vec<C64>, IngestError> {
    values
        .iter()
        .enumerate()
        .map(|(i, &v)| {
            let z = f(v);
            if z.re.is_finite() && z.im.is_finite() {
                Ok(z)
            } else {
                Err(Diagnostic::new(format!(
                    "point {}: {} = {}{:+}j at {} Hz gives no finite impedance",
                    i + 1,
                    sweep.data.describe(),
                    v.re,
                    v.im,
                    sweep.freq_hz[i]
                ))
                .expected("a part whose impedance is finite and non-zero in the chosen set-up")
                .hint("check --method: an open in reflection, or a short/open in series/shunt, cannot be converted")
                .into())
            }
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::ingest::SourceInfo;
    use std::path::Path;

    const F: [f64; 3] = [1e6, 1e7, 1e8];

    fn sweep(data: SweepData) -> Sweep {
        Sweep {
            source: SourceInfo::from_bytes(Path::new("m.s2p"), b""),
            freq_hz: F.to_vec(),
            data,
            detected: vec!["test".into()],
            warnings: vec![],
        }
    }

    fn parts() -> Vec<C64> {
        // PHYSICS.md §2 worked values, N = 1 and N = 3 [D].
        vec![
            C64::new(43.552, 87.103),
            C64::new(174.207, 87.103),
            C64::new(1567.86, 783.93),
        ]
    }

    fn assert_close(got: &[C64], want: &[C64]) {
        for (g, w) in got.iter().zip(want) {
            assert!((g - w).norm() <= 1e-9 * w.norm(), "{} vs {}", g, w);
        }
    }

    // Pozar, Microwave Engineering §4.3: series element between equal ports, S21 = 2Z0/(2Z0 + Z).
    #[test]
    fn two_port_defaults_to_series_pozar() {
        let s: Vec<[C64; 4]> = parts()
            .iter()
            .map(|&z| {
                let s21 = 100.0 / (100.0 + z);
                [z / (z + 100.0), s21, s21, z / (z + 100.0)]
            })
            .collect();
        let out = to_impedance(
            &sweep(SweepData::TwoPort {
                s,
                z0: [50.0, 50.0],
            }),
            None,
            None,
        )
        .unwrap();
        assert_close(&out.z, &parts());
        assert_eq!(out.method, Some(Method::Series));
        assert_eq!(out.z0, Some(50.0));
        assert!(
            out.detected
                .iter()
                .any(|d| d == "method series (default for 2-port data)"),
            "{:?}",
            out.detected
        );
    }

    // Series element between unequal real references: S from the element's Y matrix by the
    // power-wave definition (Kurokawa 1965; Pozar §4.3), then back to Z. Hand check for 100 Ω
    // between 50 Ω and 75 Ω: S21 = 2√3750/225 = 0.544331.
    #[test]
    fn series_with_unequal_references_kurokawa() {
        let s: Vec<[C64; 4]> = parts()
            .iter()
            .map(|&z| {
                let y = [1.0 / z, -1.0 / z, -1.0 / z, 1.0 / z];
                let m = convert::y_matrix_to_s(&y, &[50.0, 75.0]).unwrap();
                [m[0], m[1], m[2], m[3]]
            })
            .collect();
        let out = to_impedance(
            &sweep(SweepData::TwoPort {
                s,
                z0: [50.0, 75.0],
            }),
            Some(Method::Series),
            None,
        )
        .unwrap();
        assert_close(&out.z, &parts());
        assert!(out
            .detected
            .iter()
            .any(|d| d.contains("unequal port references 50 Ω (port 1) and 75 Ω (port 2)")));
        let s21 = C64::new(2.0 * 3750f64.sqrt() / 225.0, 0.0);
        assert!((s21.re - 0.544331).abs() < 1e-6);
        let t = to_impedance(
            &sweep(SweepData::Transmission {
                s21: vec![s21; 3],
                z0: [50.0, 75.0],
            }),
            Some(Method::Series),
            None,
        )
        .unwrap();
        assert!((t.z[0] - C64::new(100.0, 0.0)).norm() < 1e-9);
    }

    // Shunt element: its Z matrix is Z in every entry (Pozar §4.2); S by Kurokawa's definition.
    #[test]
    fn shunt_equal_and_unequal_references_kurokawa() {
        for r in [[50.0, 50.0], [50.0, 75.0]] {
            let s21: Vec<C64> = parts()
                .iter()
                .map(|&z| convert::z_matrix_to_s(&[z, z, z, z], &r).unwrap()[2])
                .collect();
            let out = to_impedance(
                &sweep(SweepData::Transmission { s21, z0: r }),
                Some(Method::Shunt),
                None,
            )
            .unwrap();
            assert_close(&out.z, &parts());
            assert_eq!(out.method, Some(Method::Shunt));
        }
    }

    // Pozar §2.3: Γ = (Z − Z0)/(Z + Z0); --z0 replaces the file's reference.
    #[test]
    fn reflection_default_and_z0_override() {
        let s11: Vec<C64> = parts().iter().map(|&z| (z - 75.0) / (z + 75.0)).collect();
        let out = to_impedance(
            &sweep(SweepData::Reflection { s11, z0: 50.0 }),
            None,
            Some(75.0),
        )
        .unwrap();
        assert_close(&out.z, &parts());
        assert_eq!((out.method, out.z0), (Some(Method::Reflection), Some(75.0)));
        // Reflection on 2-port data reads S11 at port 1's reference.
        let s: Vec<[C64; 4]> = parts()
            .iter()
            .map(|&z| {
                [
                    (z - 50.0) / (z + 50.0),
                    C64::new(0.0, 0.0),
                    C64::new(0.0, 0.0),
                    C64::new(0.0, 0.0),
                ]
            })
            .collect();
        let out = to_impedance(
            &sweep(SweepData::TwoPort {
                s,
                z0: [50.0, 50.0],
            }),
            Some(Method::Reflection),
            None,
        )
        .unwrap();
        assert_close(&out.z, &parts());
    }

    #[test]
    fn impossible_combinations_are_errors() {
        let refl = sweep(SweepData::Reflection {
            s11: vec![C64::new(0.1, 0.0); 3],
            z0: 50.0,
        });
        let e = to_impedance(&refl, Some(Method::Series), None)
            .unwrap_err()
            .0
            .message;
        assert!(e.contains("--method series needs 2-port data"), "{}", e);
        let s21 = sweep(SweepData::Transmission {
            s21: vec![C64::new(0.5, 0.0); 3],
            z0: [50.0, 50.0],
        });
        assert!(to_impedance(&s21, None, None)
            .unwrap_err()
            .0
            .message
            .contains("only S21"));
        assert!(to_impedance(&s21, Some(Method::Reflection), None)
            .unwrap_err()
            .0
            .message
            .contains("needs S11"));
        // An open (S11 = 1) has no finite impedance.
        let open = sweep(SweepData::Reflection {
            s11: vec![C64::new(0.1, 0.0), C64::new(1.0, 0.0), C64::new(0.1, 0.0)],
            z0: 50.0,
        });
        let e = to_impedance(&open, None, None).unwrap_err().0.message;
        assert!(
            e.starts_with("point 2:") && e.contains("10000000 Hz"),
            "{}",
            e
        );
    }

    #[test]
    fn impedance_data_ignores_method_with_a_warning() {
        let out = to_impedance(
            &sweep(SweepData::Impedance(parts())),
            Some(Method::Series),
            Some(50.0),
        )
        .unwrap();
        assert_eq!(out.z, parts());
        assert_eq!((out.method, out.z0), (None, None));
        assert_eq!(out.warnings.len(), 2);
        assert!(out.warnings[0].contains("--method series ignored"));
    }
    /// Relative agreement with scikit-rf's vectors: both sides are double-precision closed forms,
    /// the worst case (12 kΩ in series, |S21| ≈ 0.008) loses about four digits.
    const SKRF_REL: f64 = 1e-9;

    // scikit-rf 2.2.0 (z2s/y2s, power waves): S of a part in each set-up, equal and unequal
    // references; tests/reference/skrf_impedance_methods.py writes the committed vectors.
    #[test]
    fn conversions_match_scikit_rf_vectors() {
        let doc: serde_json::Value = serde_json::from_str(include_str!(
            "../../tests/reference/skrf_impedance_methods.json"
        ))
        .unwrap();
        let c = |v: &serde_json::Value| C64::new(v[0].as_f64().unwrap(), v[1].as_f64().unwrap());
        let cases = doc["cases"].as_array().unwrap();
        assert!(cases.len() >= 30);
        for case in cases {
            let m = Method::parse(case["method"].as_str().unwrap()).unwrap();
            let r: Vec<f64> = case["z0"]
                .as_array()
                .unwrap()
                .iter()
                .map(|x| x.as_f64().unwrap())
                .collect();
            let s: Vec<C64> = case["s"].as_array().unwrap().iter().map(c).collect();
            let data = match m {
                Method::Reflection => SweepData::Reflection {
                    s11: vec![s[0]; 3],
                    z0: r[0],
                },
                _ => SweepData::TwoPort {
                    s: vec![[s[0], s[1], s[2], s[3]]; 3],
                    z0: [r[0], r[1]],
                },
            };
            let out = to_impedance(&sweep(data), Some(m), None).unwrap();
            let want = c(&case["z_ohm"]);
            assert!(
                (out.z[0] - want).norm() <= SKRF_REL * want.norm(),
                "{:?}: {} vs {}",
                case,
                out.z[0],
                want
            );
        }
    }
}
