//! A split (clip-on) core: two halves of any shape closed around a cable, with a residual gap
//! at each of its two mating faces. The effective parameters are the body's; the gap acts
//! through 1/μ_e = 1/μ + l_g/l_e (PHYSICS.md §2, [S] Finke via Encyclopedia Magnetica).

use super::spec::fmt_len;
use super::{Core, Effective, GeometryError};
use crate::error::Diagnostic;

/// A two-half core has two mating faces; the gap lengths add (PHYSICS.md §2).
pub const FACES: f64 = 2.0;

#[derive(Debug, Clone, PartialEq)]
pub struct Split {
    pub body: Box<Core>,
    /// Residual gap at each face, m; None when unknown (the extraction then gives μ_e).
    pub gap_per_face: Option<f64>,
}

impl Split {
    pub fn new(body: Core, gap_per_face: Option<f64>) -> Result<Split, GeometryError> {
        if matches!(body, Core::Split(_)) {
            return Err(Diagnostic::new("a split core inside a split core")
                .hint("write one split: with its gap")
                .into());
        }
        if let Some(g) = gap_per_face {
            let le = body.effective().le();
            if !(g >= 0.0 && g.is_finite()) || FACES * g >= le {
                return Err(Diagnostic::new(format!(
                    "gap of {} per face does not fit a path of {}",
                    fmt_len(g),
                    fmt_len(le)
                ))
                .expected("0 ≤ gap, total gap much shorter than the magnetic path")
                .into());
            }
        }
        Ok(Split {
            body: Box::new(body),
            gap_per_face,
        })
    }

    pub fn effective(&self) -> Effective {
        self.body.effective()
    }

    /// Total gap length l_g over both faces, m (0 when unknown).
    pub fn gap_total(&self) -> f64 {
        self.gap_per_face.map(|g| FACES * g).unwrap_or(0.0)
    }

    pub fn spec(&self) -> String {
        let body = match &*self.body {
            Core::Toroid(t) => t.spec_body(),
            other => other.spec(),
        };
        match self.gap_per_face {
            Some(g) => format!("split:{},gap={}", body, fmt_len(g)),
            None => format!("split:{}", body),
        }
    }
}
