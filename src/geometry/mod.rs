//! Core shapes and their IEC 60205 effective parameters (C1, C2, le, Ae, Ve, A_min).
//! Pure math plus the `SHAPE:key=value,...` spec parser. OWNER: geometry/extract helper.

pub mod toroid;

use crate::MU0;

crate::stage_error!(
    /// A core spec or cores file that cannot be understood, or a shape that is not physical.
    GeometryError
);

/// IEC 60205 effective parameters, SI units (m⁻¹, m⁻³, m, m², m³).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Effective {
    /// Core constant C1 = Σ l/A, m⁻¹.
    pub c1: f64,
    /// Core constant C2 = Σ l/A², m⁻³.
    pub c2: f64,
    /// Minimum cross-section, m².
    pub a_min: f64,
}

impl Effective {
    /// Effective magnetic path length le = C1²/C2.
    pub fn le(&self) -> f64 {
        self.c1 * self.c1 / self.c2
    }
    /// Effective area Ae = C1/C2.
    pub fn ae(&self) -> f64 {
        self.c1 / self.c2
    }
    /// Effective volume Ve = le·Ae.
    pub fn ve(&self) -> f64 {
        self.le() * self.ae()
    }
}

/// A core as the user describes it.
#[derive(Debug, Clone, PartialEq)]
pub enum Core {
    /// Toroid or solid sleeve of rectangular section (metres), optional 45° chamfer.
    Toroid(toroid::Toroid),
}

impl Core {
    pub fn effective(&self) -> Effective {
        match self {
            Core::Toroid(t) => t.effective(),
        }
    }
    /// Air-core inductance of an N-turn winding, L0 = μ0·N²/C1 (PHYSICS.md §2).
    pub fn l0(&self, turns: f64) -> f64 {
        MU0 * turns * turns / self.effective().c1
    }
    /// Total residual gap length (sum over faces), metres; zero for closed cores.
    pub fn gap_m(&self) -> f64 {
        0.0
    }
    /// The spec that reproduces this core.
    pub fn spec(&self) -> String {
        match self {
            Core::Toroid(t) => t.spec(),
        }
    }
}
