//! Identical cores stacked on one winding: their paths are in parallel, so every section
//! multiplies by n — C1/n, C2/n², A_min·n; le is unchanged and Ae, Ve scale by n
//! (PHYSICS.md §1: "stacked identical cores: heights add").

use super::Effective;

pub fn stacked(single: Effective, n: u32) -> Effective {
    let n = n as f64;
    Effective {
        c1: single.c1 / n,
        c2: single.c2 / (n * n),
        a_min: single.a_min * n,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::geometry::toroid::Toroid;

    // PHYSICS.md §1: heights add — two 25/15/10 cores equal one 25/15/20 core (closed form).
    #[test]
    fn iec60205_stack_equals_taller_toroid() {
        let one = Toroid::new(25e-3, 15e-3, 10e-3).unwrap().effective();
        let tall = Toroid::new(25e-3, 15e-3, 20e-3).unwrap().effective();
        let two = stacked(one, 2);
        assert!((two.c1 / tall.c1 - 1.0).abs() < 1e-14);
        assert!((two.c2 / tall.c2 - 1.0).abs() < 1e-14);
        assert!((two.a_min / tall.a_min - 1.0).abs() < 1e-14);
    }
}
