//! A wound core as Touchstone v1.1 S-parameters (IBIS Open Forum, an open standard):
//! `# Hz S RI R <Z0>`, one line per frequency, `!` comments for the provenance.
//! * 1 port, reflection: S11 = (Z − Z0)/(Z + Z0);
//! * 2 ports, the core's winding in series between the ports: S11 = S22 = Z/(Z + 2Z0),
//!   S21 = S12 = 2Z0/(Z + 2Z0), written in version 1 order S11 S21 S12 S22
//!   [Pozar, *Microwave Engineering*; PHYSICS.md §3].

use super::provenance::block;
use crate::ingest::convert::{z_to_s11, z_to_s21_series};
use crate::C64;

/// The S-parameters of impedance `z` in version 1 order (S11, or S11 S21 S12 S22).
pub fn s_parameters(z: C64, z0: f64, ports: usize) -> Vec<C64> {
    if ports == 1 {
        return vec![z_to_s11(z, z0)];
    }
    // Written directly rather than as 1 − S21, which would cancel for small Z.
    let s11 = z / (z + 2.0 * z0);
    let s21 = z_to_s21_series(z, z0, z0);
    vec![s11, s21, s21, s11]
}

/// The whole file: provenance, option line, data. `z` pairs with `freq_hz`.
pub fn render(
    meta: &[(String, String)],
    freq_hz: &[f64],
    z: &[C64],
    ports: usize,
    z0: f64,
) -> String {
    let mut out = block("!", meta);
    out += &if ports == 1 {
        "! quantity: 1-port reflection of the wound core, S11 = (Z - Z0)/(Z + Z0)\n".to_string()
    } else {
        "! quantity: 2-port series-through, the wound core in series between port 1 and port 2: S11 = S22 = Z/(Z + 2 Z0), S21 = S12 = 2 Z0/(Z + 2 Z0)\n".to_string()
    };
    out += &format!("# Hz S RI R {}\n", z0);
    for (&f, &zf) in freq_hz.iter().zip(z) {
        out += &f.to_string();
        for s in s_parameters(zf, z0, ports) {
            out += &format!(" {:e} {:e}", s.re, s.im);
        }
        out.push('\n');
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::ingest::convert::{s11_to_z, s21_series_to_z};
    use crate::ingest::touchstone::parse;

    fn zs() -> (Vec<f64>, Vec<C64>) {
        let f = vec![1e6, 1e7, 1e8, 1e9];
        let z = vec![
            C64::new(0.01, 3.0),
            C64::new(43.552, 87.103),
            C64::new(1567.86, 783.93),
            C64::new(2e4, -9e3),
        ];
        (f, z)
    }

    // PHYSICS.md §6 [D]: a 100 Ω series part between 50 Ω ports gives S21 = 0.5 (6.02 dB) and
    // S11 = 0.5, and S11 + S21 = 1 for any series part (Pozar).
    #[test]
    fn series_through_worked_values() {
        let s = s_parameters(C64::new(100.0, 0.0), 50.0, 2);
        assert!((s[0] - 0.5).norm() < 1e-15 && (s[1] - 0.5).norm() < 1e-15);
        assert!((-20.0 * s[1].norm().log10() - 6.0206).abs() < 1e-4);
        let s = s_parameters(C64::new(300.0, 200.0), 50.0, 2);
        assert!((s[0] + s[1] - 1.0).norm() < 1e-15 && s[1] == s[2] && s[0] == s[3]);
    }

    // Read back by the project's own Touchstone reader and converted back with the inverse
    // formulas of PHYSICS.md §3: the same Z within 1e-9 relative, 1-port and 2-port.
    #[test]
    fn files_read_back_through_the_touchstone_reader() {
        let (f, z) = zs();
        for (ports, z0) in [(1, 50.0), (2, 50.0), (1, 75.0)] {
            let text = render(&[("material".into(), "x@1".into())], &f, &z, ports, z0);
            let net = parse(text.as_bytes()).unwrap();
            assert_eq!(
                (net.ports, net.freq_hz.clone(), net.z0[0]),
                (ports, f.clone(), z0)
            );
            for (k, want) in z.iter().enumerate() {
                let s = &net.s[k];
                let got = if ports == 1 {
                    s11_to_z(s[0], z0)
                } else {
                    s21_series_to_z(s[2], z0, z0)
                };
                assert!(
                    (got - want).norm() < 1e-9 * want.norm(),
                    "{ports} ports: {got} vs {want}"
                );
            }
        }
    }
}
