//! Bounds through reparametrisation: the solver works on unbounded "internal" values, the model
//! on "external" ones. Δμ, f_r and the damping d are positive (internal = ln external); α and β
//! lie in (0, 1] (external = 1/(1 + e^(−internal)), the logistic function); μ∞ is unbounded
//! (identity). The transform depends only on the parameter's name, which is a contract
//! (`delta_mu`, `f_hz`, `damping`, `alpha`, `beta`, `mu_inf`).
//!
//! Covariances found in internal coordinates map back by the delta method,
//! C_ext = G·C_int·G with G = diag(d external/d internal) ([`d_external_d_internal`]).

/// How one parameter is mapped between the solver's and the model's coordinates.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Transform {
    /// internal = external (μ∞).
    Identity,
    /// internal = ln(external), external > 0 (Δμ, f_r, d).
    Log,
    /// external = 1/(1 + e^(−internal)), external in (0, 1) (α, β).
    Logistic,
}

/// A logistic parameter given as exactly 0 or 1 (e.g. α = 1, the Debye limit) has no finite
/// internal value; it is moved this far inside the interval. ln((1 − m)/m) ≈ 13.8 keeps the
/// logistic slope m(1 − m) ≈ 1e-6 large enough for the solver to move away from the edge.
pub const LOGISTIC_MARGIN: f64 = 1e-6;

impl Transform {
    /// The transform of a parameter by its contract name; unknown names are left untransformed.
    pub fn of(name: &str) -> Transform {
        match name {
            "delta_mu" | "f_hz" | "damping" => Transform::Log,
            "alpha" | "beta" => Transform::Logistic,
            _ => Transform::Identity,
        }
    }

    pub fn to_internal(self, external: f64) -> f64 {
        match self {
            Transform::Identity => external,
            // Non-positive starts are clamped to the smallest positive value rather than NaN.
            Transform::Log => external.max(f64::MIN_POSITIVE).ln(),
            Transform::Logistic => {
                let v = external.clamp(LOGISTIC_MARGIN, 1.0 - LOGISTIC_MARGIN);
                (v / (1.0 - v)).ln()
            }
        }
    }

    pub fn to_external(self, internal: f64) -> f64 {
        match self {
            Transform::Identity => internal,
            Transform::Log => internal.exp(),
            Transform::Logistic => logistic(internal),
        }
    }

    /// d external / d internal at `internal`.
    pub fn derivative(self, internal: f64) -> f64 {
        match self {
            Transform::Identity => 1.0,
            Transform::Log => internal.exp(),
            Transform::Logistic => {
                let s = logistic(internal);
                s * (1.0 - s)
            }
        }
    }
}

/// 1/(1 + e^(−u)), written so that neither branch overflows.
fn logistic(u: f64) -> f64 {
    if u >= 0.0 {
        1.0 / (1.0 + (-u).exp())
    } else {
        let e = u.exp();
        e / (1.0 + e)
    }
}

/// The solver's value of the parameter `name` whose model value is `value`.
pub fn to_internal(name: &str, value: f64) -> f64 {
    Transform::of(name).to_internal(value)
}

/// The model's value of the parameter `name` whose solver value is `internal`.
pub fn to_external(name: &str, internal: f64) -> f64 {
    Transform::of(name).to_external(internal)
}

/// d external / d internal for parameter `name` at `internal` (for mapping covariances).
pub fn d_external_d_internal(name: &str, internal: f64) -> f64 {
    Transform::of(name).derivative(internal)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn transforms_round_trip_and_keep_bounds() {
        for (name, v) in [
            ("delta_mu", 850.0),
            ("f_hz", 3.3e7),
            ("damping", 0.02),
            ("alpha", 0.7),
            ("beta", 0.31),
            ("mu_inf", -0.4),
        ] {
            let u = to_internal(name, v);
            assert!(
                (to_external(name, u) - v).abs() <= 1e-12 * v.abs(),
                "{name}"
            );
        }
        assert!(
            to_external("alpha", 800.0) <= 1.0 && to_external("alpha", -800.0) > 0.0 - f64::EPSILON
        );
        assert!(to_external("f_hz", -50.0) > 0.0);
        // α = 1 (the Debye limit) lands just inside the interval, not at infinity.
        assert!(
            (to_external("alpha", to_internal("alpha", 1.0)) - (1.0 - LOGISTIC_MARGIN)).abs()
                < 1e-15
        );
    }

    #[test]
    fn derivative_matches_central_difference() {
        for (name, u) in [
            ("delta_mu", 6.2),
            ("alpha", -0.8),
            ("beta", 2.5),
            ("mu_inf", 1.0),
        ] {
            let h = 1e-6;
            let fd = (to_external(name, u + h) - to_external(name, u - h)) / (2.0 * h);
            let d = d_external_d_internal(name, u);
            assert!((d - fd).abs() <= 1e-8 * d.abs(), "{name}: {d} vs {fd}");
        }
    }
}
