//! Core shapes and their IEC 60205 effective parameters (C1, C2, le, Ae, Ve, A_min).
//! Pure math plus the `SHAPE:key=value,...` spec parser ([`spec`]) and the cores file of named
//! cores ([`cores_file`]).

pub mod cores_file;
pub mod flat;
pub mod given;
pub mod profile;
pub mod spec;
pub mod split;
pub mod stack;
pub mod toroid;

pub use cores_file::CoresFile;
pub use spec::parse_core;
pub use toroid::{Edge, Toroid};

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
    /// Toroid or solid sleeve of rectangular section, optionally chamfered or rounded edges.
    Toroid(toroid::Toroid),
    /// Two halves closed around a cable, with a residual gap at each face.
    Split(split::Split),
    /// Flat core with a slot for ribbon cable.
    Flat(flat::Flat),
    /// Constants stated by the user.
    Given(given::Given),
    /// `n` identical cores stacked on one winding.
    Stack { core: Box<Core>, n: u32 },
}

impl Core {
    /// Parse a spec that names no cores-file entry (see [`parse_core`] for names).
    pub fn parse(spec: &str) -> Result<Core, GeometryError> {
        parse_core(spec, &|_| None)
    }

    pub fn effective(&self) -> Effective {
        match self {
            Core::Toroid(t) => t.effective(),
            Core::Split(s) => s.effective(),
            Core::Flat(f) => f.effective(),
            Core::Given(g) => g.effective(),
            Core::Stack { core, n } => stack::stacked(core.effective(), *n),
        }
    }
    /// Air-core inductance of an N-turn winding, L0 = μ0·N²/C1 (PHYSICS.md §2).
    pub fn l0(&self, turns: f64) -> f64 {
        MU0 * turns * turns / self.effective().c1
    }
    /// Total residual gap length (sum over faces), metres; zero for closed cores and for split
    /// cores whose gap is not stated.
    pub fn gap_m(&self) -> f64 {
        match self {
            Core::Split(s) => s.gap_total(),
            Core::Stack { core, .. } => core.gap_m(),
            _ => 0.0,
        }
    }
    /// True for a split core whose gap was not stated: μ from it is the apparent μ_e.
    pub fn gap_unknown(&self) -> bool {
        match self {
            Core::Split(s) => s.gap_per_face.is_none(),
            Core::Stack { core, .. } => core.gap_unknown(),
            _ => false,
        }
    }
    /// The same core with its total residual gap set to `total` (split into the two faces of
    /// a split core; a closed core becomes a split one).
    pub fn with_gap(&self, total: f64) -> Result<Core, GeometryError> {
        match self {
            Core::Split(s) => {
                split::Split::new((*s.body).clone(), Some(total / split::FACES)).map(Core::Split)
            }
            Core::Stack { core, n } => Ok(Core::Stack {
                core: Box::new(core.with_gap(total)?),
                n: *n,
            }),
            other => split::Split::new(other.clone(), Some(total / split::FACES)).map(Core::Split),
        }
    }
    /// The spec that reproduces this core.
    pub fn spec(&self) -> String {
        match self {
            Core::Toroid(t) => t.spec(),
            Core::Split(s) => s.spec(),
            Core::Flat(f) => f.spec(),
            Core::Given(g) => g.spec(),
            Core::Stack { core, n } => format!("stack:{},n={}", core.spec(), n),
        }
    }
}

#[cfg(test)]
pub(crate) mod tests {
    use super::Effective;

    /// IEC 60205 cl. 2.1 rounding practice as used in PHYSICS.md §1: the table gives five
    /// significant figures, so a computed value must round to it (half a unit in the fifth
    /// figure, relative `rel` at least).
    pub(crate) fn assert_iec_row_within(e: &Effective, row: [f64; 5], rel: f64) {
        let mm = [
            e.c1 * 1e-3,
            e.c2 * 1e-9,
            e.le() * 1e3,
            e.ae() * 1e6,
            e.ve() * 1e9,
        ];
        let names = ["C1 /mm", "C2 /mm3", "le mm", "Ae mm2", "Ve mm3"];
        for i in 0..5 {
            let half_unit = 0.5 * 10f64.powf(row[i].abs().log10().floor() - 4.0);
            let tol = half_unit.max(rel * row[i].abs()) * (1.0 + 1e-9);
            assert!(
                (mm[i] - row[i]).abs() <= tol,
                "{}: computed {} vs table {}",
                names[i],
                mm[i],
                row[i]
            );
        }
    }

    pub(crate) fn assert_iec_row(e: &Effective, row: [f64; 5]) {
        assert_iec_row_within(e, row, 0.0)
    }
}
