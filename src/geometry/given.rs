//! A core whose constants the user states from a drawing or data sheet: any two of C1, C2, le,
//! Ae (IEC 60205: Ae = C1/C2, le = C1²/C2, so C1 = le/Ae and C2 = le/Ae²), optionally A_min.

use super::spec::{fmt_power, KeyValues};
use super::{Effective, GeometryError};
use crate::error::Diagnostic;

#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Given {
    /// C1, m⁻¹.
    pub c1: f64,
    /// C2, m⁻³.
    pub c2: f64,
    /// Smallest section, m², when stated.
    pub a_min: Option<f64>,
}

impl Given {
    pub fn effective(&self) -> Effective {
        Effective {
            c1: self.c1,
            c2: self.c2,
            a_min: self.a_min.unwrap_or(self.c1 / self.c2),
        }
    }

    pub fn spec(&self) -> String {
        let mut s = format!(
            "given:c1={},c2={}",
            fmt_power(self.c1, -1),
            fmt_power(self.c2, -3)
        );
        if let Some(a) = self.a_min {
            s += &format!(",amin={}", fmt_power(a, 2));
        }
        s
    }

    pub(crate) fn from_keys(kv: &mut KeyValues) -> Result<Given, GeometryError> {
        let c1 = kv.opt_power("c1", -1)?;
        let c2 = kv.opt_power("c2", -3)?;
        let le = kv.opt_power("le", 1)?;
        let ae = kv.opt_power("ae", 2)?;
        let a_min = kv.opt_power("amin", 2)?;
        let (c1, c2) = match (c1, c2, le, ae) {
            (Some(c1), Some(c2), None, None) => (c1, c2),
            (Some(c1), None, Some(le), None) => (c1, c1 * c1 / le),
            (Some(c1), None, None, Some(ae)) => (c1, c1 / ae),
            (None, Some(c2), Some(le), None) => ((c2 * le).sqrt(), c2),
            (None, Some(c2), None, Some(ae)) => (c2 * ae, c2),
            (None, None, Some(le), Some(ae)) => (le / ae, le / (ae * ae)),
            _ => return Err(kv.error("give exactly two of c1, c2, le, ae")),
        };
        if !(c1 > 0.0 && c2 > 0.0 && c1.is_finite() && c2.is_finite()) {
            return Err(kv.rewrap(Diagnostic::new("core constants must be positive").into()));
        }
        Ok(Given { c1, c2, a_min })
    }
}

#[cfg(test)]
mod tests {
    use crate::geometry::{parse_core, tests::assert_iec_row_within};

    // PHYSICS.md §1 check table [D] 20/10/10: the same core stated four ways gives one set of
    // IEC 60205 parameters.
    #[test]
    fn iec60205_given_constants_any_two() {
        let none = |_: &str| None;
        for spec in [
            "given:c1=0.90647/mm,c2=1.8867e-2/mm3",
            "given:c1=0.90647/mm,le=43.5519mm",
            "given:le=43.5519mm,ae=48.0454mm2",
            "given:c2=1.8867e-2/mm3,ae=48.0454mm2",
        ] {
            let core = parse_core(spec, &none).unwrap();
            assert_iec_row_within(
                &core.effective(),
                [0.90647, 1.8867e-2, 43.552, 48.045, 2092.5],
                1e-4,
            );
        }
    }
}
