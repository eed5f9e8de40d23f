//! Toroid / solid sleeve of rectangular section, optionally with its four edges chamfered (45°)
//! or rounded (PHYSICS.md §1, IEC 60205 effective parameters).

use super::profile::ring_effective;
use super::spec::{fmt_len, KeyValues};
use super::{Effective, GeometryError};

/// How the four edges of the section are finished.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Edge {
    Sharp,
    /// 45° chamfer with this leg length on every edge, m.
    Chamfer(f64),
    /// Rounded edge with this radius on every edge, m.
    Radius(f64),
}

impl Edge {
    /// Height lost on one face at distance `d` from the nearest cylindrical wall.
    fn cut(&self, d: f64) -> f64 {
        match *self {
            Edge::Sharp => 0.0,
            Edge::Chamfer(c) => (c - d).max(0.0),
            Edge::Radius(rho) if d < rho => {
                rho - (rho * rho - (rho - d) * (rho - d)).max(0.0).sqrt()
            }
            Edge::Radius(_) => 0.0,
        }
    }
    fn size(&self) -> f64 {
        match *self {
            Edge::Sharp => 0.0,
            Edge::Chamfer(c) | Edge::Radius(c) => c,
        }
    }
}

#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Toroid {
    /// Outer diameter, m.
    pub od: f64,
    /// Inner diameter, m.
    pub id: f64,
    /// Height (axial length), m.
    pub h: f64,
    pub edge: Edge,
}

impl Toroid {
    pub const KEYS: &'static str = "od=LEN,id=LEN,h=LEN[,chamfer=LEN | ,radius=LEN]";

    /// A sharp-edged toroid; checks the dimensions.
    pub fn new(od: f64, id: f64, h: f64) -> Result<Toroid, GeometryError> {
        Toroid {
            od,
            id,
            h,
            edge: Edge::Sharp,
        }
        .checked()
    }

    /// Sharp edges: C1 = 2π/(h·ln(r2/r1)), C2 = 2π(1/r1 − 1/r2)/(h²·ln³(r2/r1)),
    /// A_min = h(r2 − r1). Otherwise the general-profile integrals.
    pub fn effective(&self) -> Effective {
        let (r1, r2, h) = (self.id / 2.0, self.od / 2.0, self.h);
        if self.edge == Edge::Sharp {
            let ln = (r2 / r1).ln();
            let tau = std::f64::consts::TAU;
            return Effective {
                c1: tau / (h * ln),
                c2: tau * (1.0 / r1 - 1.0 / r2) / (h * h * ln.powi(3)),
                a_min: h * (r2 - r1),
            };
        }
        let e = self.edge;
        let s = e.size();
        let height = |r: f64| h - 2.0 * e.cut(r - r1) - 2.0 * e.cut(r2 - r);
        ring_effective(height, r1, r2, &[r1 + s, r2 - s])
    }

    pub fn spec_body(&self) -> String {
        let mut s = format!(
            "od={},id={},h={}",
            fmt_len(self.od),
            fmt_len(self.id),
            fmt_len(self.h)
        );
        match self.edge {
            Edge::Sharp => {}
            Edge::Chamfer(c) => s += &format!(",chamfer={}", fmt_len(c)),
            Edge::Radius(r) => s += &format!(",radius={}", fmt_len(r)),
        }
        s
    }

    pub fn spec(&self) -> String {
        format!("toroid:{}", self.spec_body())
    }

    /// Read `od`, `id`, `h` and an optional edge from a spec's keys.
    pub(crate) fn from_keys(kv: &mut KeyValues) -> Result<Toroid, GeometryError> {
        let (od, id, h) = (kv.length("od")?, kv.length("id")?, kv.length("h")?);
        let edge = match (kv.opt_length("chamfer")?, kv.opt_length("radius")?) {
            (Some(_), Some(_)) => return Err(kv.error("give either chamfer= or radius=, not both")),
            (Some(c), None) => Edge::Chamfer(c),
            (None, Some(r)) => Edge::Radius(r),
            (None, None) => Edge::Sharp,
        };
        Toroid { od, id, h, edge }
            .checked()
            .map_err(|e| kv.rewrap(e))
    }

    fn checked(self) -> Result<Toroid, GeometryError> {
        let bad = |m: String| {
            GeometryError(crate::error::Diagnostic::new(m).expected(
                "0 < id < od, h > 0, and an edge smaller than half the wall and half the height",
            ))
        };
        if !(self.id > 0.0 && self.od > self.id && self.h > 0.0) {
            return Err(bad(format!(
                "not a toroid: od={} id={} h={}",
                fmt_len(self.od),
                fmt_len(self.id),
                fmt_len(self.h)
            )));
        }
        let s = self.edge.size();
        if s < 0.0 || 2.0 * s >= (self.od - self.id) / 2.0 || 2.0 * s >= self.h {
            return Err(bad(format!(
                "edge of {} does not fit the section",
                fmt_len(s)
            )));
        }
        Ok(self)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geometry::tests::assert_iec_row;

    fn mm(od: f64, id: f64, h: f64, edge: Edge) -> Toroid {
        Toroid {
            od: od * 1e-3,
            id: id * 1e-3,
            h: h * 1e-3,
            edge,
        }
    }

    // PHYSICS.md §1 check table [D], IEC 60205 effective parameters of a rectangular toroid.
    #[test]
    fn iec60205_check_values_rectangular_toroids() {
        assert_iec_row(
            &mm(20.0, 10.0, 10.0, Edge::Sharp).effective(),
            [0.90647, 1.8867e-2, 43.552, 48.045, 2092.5],
        );
        assert_iec_row(
            &mm(25.0, 15.0, 10.0, Edge::Sharp).effective(),
            [1.2300, 2.5140e-2, 60.180, 48.927, 2944.4],
        );
        assert_iec_row(
            &mm(10.0, 5.0, 5.0, Edge::Sharp).effective(),
            [1.8129, 1.5094e-1, 21.776, 12.011, 261.56],
        );
    }

    // PHYSICS.md §1 check table [D]: 20/10/10 with a 45° chamfer of 0.5 mm on all four edges.
    #[test]
    fn iec60205_check_values_chamfered_toroid() {
        assert_iec_row(
            &mm(20.0, 10.0, 10.0, Edge::Chamfer(0.5e-3)).effective(),
            [0.91623, 1.9250e-2, 43.610, 47.597, 2075.7],
        );
    }

    // The general-profile integrals (PHYSICS.md §1) must reduce to the closed form for a flat
    // profile; a vanishing edge radius must tend to the sharp toroid.
    #[test]
    fn profile_integrals_reduce_to_closed_form() {
        let sharp = mm(20.0, 10.0, 10.0, Edge::Sharp).effective();
        let tiny = mm(20.0, 10.0, 10.0, Edge::Radius(1e-6)).effective();
        assert!((tiny.c1 / sharp.c1 - 1.0).abs() < 1e-6 && (tiny.c2 / sharp.c2 - 1.0).abs() < 1e-6);
        // A radius removes (1 − π/4)ρ² per edge from the section, more than nothing and less than
        // a chamfer of the same leg (c²/2 per edge): geometry of the quarter circle.
        let rho = 0.5e-3;
        let r = mm(20.0, 10.0, 10.0, Edge::Radius(rho)).effective();
        let expected_area = sharp.a_min - 4.0 * (1.0 - std::f64::consts::FRAC_PI_4) * rho * rho;
        assert!((r.a_min - expected_area).abs() < 1e-6 * expected_area);
        let c = mm(20.0, 10.0, 10.0, Edge::Chamfer(rho)).effective();
        assert!(sharp.c1 < r.c1 && r.c1 < c.c1);
    }

    // Textbook inductance of a rectangular-section toroid, L = μ0·N²·h·ln(OD/ID)/(2π), equals
    // μ0·N²/C1 (PHYSICS.md §2 [D]).
    #[test]
    fn textbook_toroid_inductance() {
        let t = mm(20.0, 10.0, 10.0, Edge::Sharp);
        let n = 7.0;
        let textbook = crate::MU0 * n * n * t.h * (t.od / t.id).ln() / std::f64::consts::TAU;
        let from_c1 = crate::MU0 * n * n / t.effective().c1;
        assert!((from_c1 / textbook - 1.0).abs() < 1e-14);
    }
}
