//! S ↔ Z conversions (Pozar, *Microwave Engineering*; PHYSICS.md §3). Pure math, no I/O.
//!
//! Two-terminal parts: reflection, series-through and shunt-through set-ups. N-port matrices:
//! power-wave S at real per-port references R_i, S = F(Z − G)(Z + G)⁻¹F⁻¹ with G = diag(R_i),
//! F = diag(1/(2√R_i)) (Kurokawa 1965); for equal references this is the familiar (Z−Z0)(Z+Z0)⁻¹.

use crate::C64;

/// 1-port reflection: S11 = (Z − Z0)/(Z + Z0).
pub fn z_to_s11(z: C64, z0: f64) -> C64 {
    (z - z0) / (z + z0)
}

/// 1-port reflection: Z = Z0(1 + S11)/(1 − S11).
pub fn s11_to_z(s11: C64, z0: f64) -> C64 {
    z0 * (1.0 + s11) / (1.0 - s11)
}

/// Part in series between port 1 (Z01) and port 2 (Z02): S21 = 2√(Z01·Z02)/(Z01 + Z02 + Z).
/// Equal ports reduce to 2Z0/(2Z0 + Z).
pub fn z_to_s21_series(z: C64, z01: f64, z02: f64) -> C64 {
    2.0 * (z01 * z02).sqrt() / (z01 + z02 + z)
}

/// Inverse of [`z_to_s21_series`]: Z = 2√(Z01·Z02)/S21 − (Z01 + Z02); equal ports give
/// 2Z0(1 − S21)/S21.
pub fn s21_series_to_z(s21: C64, z01: f64, z02: f64) -> C64 {
    2.0 * (z01 * z02).sqrt() / s21 - (z01 + z02)
}

/// Part shunting a Z0 line to ground: S21 = 2Z/(2Z + Z0).
pub fn z_to_s21_shunt(z: C64, z0: f64) -> C64 {
    2.0 * z / (2.0 * z + z0)
}

/// Inverse of [`z_to_s21_shunt`]: Z = Z0·S21/(2(1 − S21)).
pub fn s21_shunt_to_z(s21: C64, z0: f64) -> C64 {
    z0 * s21 / (2.0 * (1.0 - s21))
}

/// A square complex matrix in row-major order.
pub type Matrix = Vec<C64>;

/// Solve A·X = B for X (A n×n, B n×m, row-major) by Gaussian elimination with partial pivoting.
/// Returns None when A is singular to working precision.
pub fn solve(a: &[C64], b: &[C64], n: usize, m: usize) -> Option<Matrix> {
    let mut a = a.to_vec();
    let mut x = b.to_vec();
    for col in 0..n {
        let pivot = (col..n).max_by(|&i, &j| a[i * n + col].norm().total_cmp(&a[j * n + col].norm()))?;
        if a[pivot * n + col].norm() == 0.0 || !a[pivot * n + col].norm().is_finite() {
            return None;
        }
        if pivot != col {
            for k in 0..n {
                a.swap(col * n + k, pivot * n + k);
            }
            for k in 0..m {
                x.swap(col * m + k, pivot * m + k);
            }
        }
        let d = a[col * n + col];
        for row in 0..n {
            if row == col {
                continue;
            }
            let f = a[row * n + col] / d;
            if f == C64::new(0.0, 0.0) {
                continue;
            }
            for k in col..n {
                let v = a[col * n + k];
                a[row * n + k] -= f * v;
            }
            for k in 0..m {
                let v = x[col * m + k];
                x[row * m + k] -= f * v;
            }
        }
    }
    for row in 0..n {
        let d = a[row * n + row];
        for k in 0..m {
            x[row * m + k] /= d;
        }
    }
    Some(x)
}

/// Z matrix (ohms) → S matrix at real per-port references `r` (ohms).
pub fn z_matrix_to_s(z: &[C64], r: &[f64]) -> Option<Matrix> {
    let n = r.len();
    // S = F (Z − G)(Z + G)⁻¹ F⁻¹; compute via transpose trick: X = (Z+G)⁻ᵀ... simpler to solve
    // (Z + G)ᵀ Yᵀ = (Z − G)ᵀ for Y = (Z − G)(Z + G)⁻¹.
    let mut zp_t = vec![C64::new(0.0, 0.0); n * n];
    let mut zm_t = vec![C64::new(0.0, 0.0); n * n];
    for i in 0..n {
        for j in 0..n {
            let g = if i == j { r[i] } else { 0.0 };
            zp_t[j * n + i] = z[i * n + j] + g;
            zm_t[j * n + i] = z[i * n + j] - g;
        }
    }
    let y_t = solve(&zp_t, &zm_t, n, n)?;
    let mut s = vec![C64::new(0.0, 0.0); n * n];
    for i in 0..n {
        for j in 0..n {
            // F Y F⁻¹: element scales by √R_j/√R_i.
            s[i * n + j] = y_t[j * n + i] * (r[j] / r[i]).sqrt();
        }
    }
    Some(s)
}

/// Y matrix (siemens) → S matrix at real per-port references `r`: Z = Y⁻¹, then [`z_matrix_to_s`].
/// Uses S = F(I − GY)(I + GY)⁻¹F⁻¹ so a singular Y (e.g. a series element) still converts.
pub fn y_matrix_to_s(y: &[C64], r: &[f64]) -> Option<Matrix> {
    let n = r.len();
    let mut ip_t = vec![C64::new(0.0, 0.0); n * n];
    let mut im_t = vec![C64::new(0.0, 0.0); n * n];
    for i in 0..n {
        for j in 0..n {
            let id = if i == j { 1.0 } else { 0.0 };
            let gy = y[i * n + j] * r[i];
            ip_t[j * n + i] = gy + id;
            im_t[j * n + i] = -gy + id;
        }
    }
    let w_t = solve(&ip_t, &im_t, n, n)?;
    let mut s = vec![C64::new(0.0, 0.0); n * n];
    for i in 0..n {
        for j in 0..n {
            s[i * n + j] = w_t[j * n + i] * (r[j] / r[i]).sqrt();
        }
    }
    Some(s)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn close(a: C64, b: C64, rel: f64) -> bool {
        (a - b).norm() <= rel * b.norm().max(1e-12)
    }

    // Pozar, Microwave Engineering (4th ed.), §4.3 [D round trips of PHYSICS.md §3].
    #[test]
    fn pozar_two_terminal_round_trips() {
        for &z in &[C64::new(43.552, 87.103), C64::new(1567.86, 783.93), C64::new(0.5, -3.0)] {
            assert!(close(s11_to_z(z_to_s11(z, 50.0), 50.0), z, 1e-12));
            assert!(close(s21_series_to_z(z_to_s21_series(z, 50.0, 50.0), 50.0, 50.0), z, 1e-12));
            assert!(close(s21_series_to_z(z_to_s21_series(z, 50.0, 75.0), 50.0, 75.0), z, 1e-12));
            assert!(close(s21_shunt_to_z(z_to_s21_shunt(z, 50.0), 50.0), z, 1e-12));
        }
        // A matched load reflects nothing; 100 Ω in series between 50 Ω ports passes S21 = 0.5.
        assert!(z_to_s11(C64::new(50.0, 0.0), 50.0).norm() < 1e-15);
        assert!(close(z_to_s21_series(C64::new(100.0, 0.0), 50.0, 50.0), C64::new(0.5, 0.0), 1e-15));
    }

    // Pozar §4.3: a series impedance Z between equal ports has S11 = Z/(Z + 2Z0), S21 = 2Z0/(Z + 2Z0).
    #[test]
    fn pozar_series_element_matrix() {
        let z = C64::new(30.0, 40.0);
        let y = vec![1.0 / z, -1.0 / z, -1.0 / z, 1.0 / z];
        let s = y_matrix_to_s(&y, &[50.0, 50.0]).unwrap();
        assert!(close(s[0], z / (z + 100.0), 1e-12));
        assert!(close(s[2], 100.0 / (z + 100.0), 1e-12));
        // Shunt element: Z matrix all Z; S21 = 2Z/(2Z + Z0).
        let zm = vec![z, z, z, z];
        let s = z_matrix_to_s(&zm, &[50.0, 50.0]).unwrap();
        assert!(close(s[2], z_to_s21_shunt(z, 50.0), 1e-12));
    }
}
