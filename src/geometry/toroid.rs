//! Toroid / solid sleeve of rectangular section (PHYSICS.md §1, IEC 60205 effective parameters).

use super::Effective;

#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Toroid {
    /// Outer diameter, m.
    pub od: f64,
    /// Inner diameter, m.
    pub id: f64,
    /// Height (axial length), m.
    pub h: f64,
}

impl Toroid {
    /// C1 = 2π/(h·ln(r2/r1)), C2 = 2π(1/r1 − 1/r2)/(h²·ln³(r2/r1)), A_min = h(r2 − r1).
    pub fn effective(&self) -> Effective {
        let (r1, r2, h) = (self.id / 2.0, self.od / 2.0, self.h);
        let ln = (r2 / r1).ln();
        let tau = std::f64::consts::TAU;
        Effective {
            c1: tau / (h * ln),
            c2: tau * (1.0 / r1 - 1.0 / r2) / (h * h * ln.powi(3)),
            a_min: h * (r2 - r1),
        }
    }
    pub fn spec(&self) -> String {
        format!("toroid:od={}mm,id={}mm,h={}mm", self.od * 1e3, self.id * 1e3, self.h * 1e3)
    }
}
