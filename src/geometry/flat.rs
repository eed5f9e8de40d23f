//! Flat core for ribbon cable: a rectangular block (outer width w × thickness t, length `len`
//! along the cable) with a centred rectangular slot (slot_w × slot_t). No IEC 60205 clause covers
//! it directly, so the path is split into legs and corners (cl. 2.6 rule as quoted in
//! PHYSICS.md §1: at a corner use the mean circular path between the centres of the adjacent
//! sections, with the mean of their areas).
//!
//! Interpretation [D from that rule]: a corner joins the top leg (thickness a = (t − slot_t)/2)
//! and a side leg (width b = (w − slot_w)/2); the arc is centred on the slot's corner, runs from
//! the centre of one leg's section (a/2 out) to the other's (b/2 out), so its mean radius is
//! (a + b)/4 and its length π(a + b)/8; its area is (a + b)/2 · len.

use super::spec::{fmt_len, KeyValues};
use super::{Effective, GeometryError};
use crate::error::Diagnostic;
use std::f64::consts::PI;

#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Flat {
    /// Outer width, m.
    pub w: f64,
    /// Outer thickness, m.
    pub t: f64,
    /// Slot width, m.
    pub slot_w: f64,
    /// Slot height, m.
    pub slot_t: f64,
    /// Length along the cable, m.
    pub len: f64,
}

/// One piece of a magnetic path: its length and cross-section.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Segment {
    pub l: f64,
    pub a: f64,
}

/// C1 = Σ l/A, C2 = Σ l/A², A_min = the smallest section (IEC 60205 definitions, PHYSICS.md §1).
pub fn from_segments(segments: &[Segment]) -> Effective {
    Effective {
        c1: segments.iter().map(|s| s.l / s.a).sum(),
        c2: segments.iter().map(|s| s.l / (s.a * s.a)).sum(),
        a_min: segments.iter().map(|s| s.a).fold(f64::INFINITY, f64::min),
    }
}

impl Flat {
    /// The two long legs, the two short legs and four corners.
    pub fn segments(&self) -> Vec<Segment> {
        let a = (self.t - self.slot_t) / 2.0;
        let b = (self.w - self.slot_w) / 2.0;
        let long = Segment {
            l: self.slot_w,
            a: a * self.len,
        };
        let short = Segment {
            l: self.slot_t,
            a: b * self.len,
        };
        let corner = Segment {
            l: PI * (a + b) / 8.0,
            a: (a + b) / 2.0 * self.len,
        };
        vec![long, long, short, short, corner, corner, corner, corner]
    }

    pub fn effective(&self) -> Effective {
        from_segments(&self.segments())
    }

    pub fn spec(&self) -> String {
        format!(
            "flat:w={},t={},slot_w={},slot_t={},len={}",
            fmt_len(self.w),
            fmt_len(self.t),
            fmt_len(self.slot_w),
            fmt_len(self.slot_t),
            fmt_len(self.len)
        )
    }

    pub(crate) fn from_keys(kv: &mut KeyValues) -> Result<Flat, GeometryError> {
        let f = Flat {
            w: kv.length("w")?,
            t: kv.length("t")?,
            slot_w: kv.length("slot_w")?,
            slot_t: kv.length("slot_t")?,
            len: kv.length("len")?,
        };
        if !(f.w > f.slot_w && f.slot_w > 0.0 && f.t > f.slot_t && f.slot_t > 0.0 && f.len > 0.0) {
            return Err(kv.rewrap(
                Diagnostic::new("the slot must lie inside the block")
                    .expected("w > slot_w > 0, t > slot_t > 0, len > 0")
                    .into(),
            ));
        }
        Ok(f)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // IEC 60205 definitions (PHYSICS.md §1 [S: IEV 221-04-31]): a path of uniform section A has
    // le equal to its length and Ae = A. A thin-walled square ring of wall a: the path is the
    // centre line with quarter-circle corners, 4·slot + π·a [D].
    #[test]
    fn iec60205_thin_uniform_ring_has_centre_line_path() {
        let (slot, wall, len) = (30e-3, 0.1e-3, 5e-3);
        let f = Flat {
            w: slot + 2.0 * wall,
            t: slot + 2.0 * wall,
            slot_w: slot,
            slot_t: slot,
            len,
        };
        let e = f.effective();
        let path = 4.0 * slot + PI * wall;
        assert!((e.le() / path - 1.0).abs() < 1e-12);
        assert!((e.ae() / (wall * len) - 1.0).abs() < 1e-12);
        assert!((e.a_min - wall * len).abs() < 1e-18);
    }

    // Legs of different sections: le < Σl whenever the sections differ (Cauchy–Schwarz gives
    // C1² ≤ Σl · C2), and Ae lies between the smallest and largest section — properties of the
    // IEC definitions, not of this code.
    #[test]
    fn iec60205_unequal_legs_shorten_ae() {
        let f = Flat {
            w: 40e-3,
            t: 8e-3,
            slot_w: 30e-3,
            slot_t: 2e-3,
            len: 20e-3,
        };
        let e = f.effective();
        let total: f64 = f.segments().iter().map(|s| s.l).sum();
        assert!(e.le() < total && e.le() > 0.9 * total);
        assert!(e.ae() < 5e-3 * 20e-3 && e.ae() > 3e-3 * 20e-3);
    }
}
