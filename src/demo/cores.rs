//! The demo's cores, written the way the manifest and the command line write them
//! (`toroid:od=..,id=..,h=..`, `split:od=..,id=..,h=..,gap=..` with the gap per face). The
//! numbers (C1, l_e, the gap) come from the geometry stage reading that spec, so the generator,
//! the manifest and the command line cannot disagree about a core.

use super::DemoError;
use crate::geometry::Core;

/// A demo core: a rectangular-section ring, closed or split in two halves.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DemoCore {
    /// Outer diameter, inner diameter, height (axial length), mm.
    pub od_mm: f64,
    pub id_mm: f64,
    pub h_mm: f64,
    /// Residual gap at each of a split core's two faces, µm (None: a closed toroid).
    pub gap_um_per_face: Option<f64>,
}

impl DemoCore {
    pub const fn toroid(od_mm: f64, id_mm: f64, h_mm: f64) -> Self {
        DemoCore { od_mm, id_mm, h_mm, gap_um_per_face: None }
    }
    pub const fn split(od_mm: f64, id_mm: f64, h_mm: f64, gap_um: f64) -> Self {
        DemoCore { od_mm, id_mm, h_mm, gap_um_per_face: Some(gap_um) }
    }

    /// The core spec as the command line and the manifest write it.
    pub fn spec(&self) -> String {
        let body = format!("od={}mm,id={}mm,h={}mm", self.od_mm, self.id_mm, self.h_mm);
        match self.gap_um_per_face {
            Some(g) => format!("split:{},gap={}um", body, g),
            None => format!("toroid:{}", body),
        }
    }

    /// Words for file comments and reports, e.g. "toroid 25 x 15 x 10 mm".
    pub fn describe(&self) -> String {
        let kind = if self.gap_um_per_face.is_some() { "clip-on split sleeve" } else { "toroid" };
        format!("{} {} x {} x {} mm", kind, self.od_mm, self.id_mm, self.h_mm)
    }

    /// The core as the geometry stage reads the spec.
    pub fn core(&self) -> Result<Core, DemoError> {
        Core::parse(&self.spec()).map_err(|e| DemoError(e.0))
    }
}
