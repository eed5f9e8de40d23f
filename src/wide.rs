//! Hot numerical loops compiled twice — for baseline x86-64 and for AVX2 — with the wider build
//! chosen at run time where the processor has it.
//!
//! The portable build targets baseline x86-64 (two doubles per vector instruction) so that one
//! binary runs on every bench PC; most machines can do four. [`wide`] runs a closure through a
//! function compiled with AVX2 enabled, into which the closure's loop is inlined and vectorised
//! four wide. The results are bit for bit those of the portable build: vectorising a loop of
//! independent element operations (or of a reduction into fixed partial sums) does not change
//! any rounding, and no multiply–add is fused (Rust does not contract `a * b + c`).

/// Run `work`, compiled for AVX2 where the processor supports it.
#[inline(always)]
pub fn wide<R>(work: impl FnOnce() -> R) -> R {
    #[cfg(target_arch = "x86_64")]
    {
        if std::arch::is_x86_feature_detected!("avx2") {
            // SAFETY: the processor was just found to support AVX2, the only feature `avx2`
            // is compiled for.
            return unsafe { avx2(work) };
        }
    }
    work()
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2")]
unsafe fn avx2<R>(work: impl FnOnce() -> R) -> R {
    work()
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The same element-wise division (the Debye basis of the Lin-KK check) gives the same bits
    /// through `wide` as plainly.
    #[test]
    fn wide_and_plain_give_the_same_bits() {
        let x: Vec<f64> = (0..1001).map(|k| (k as f64 * 0.37).sin() * 1e3).collect();
        let run = |x: &[f64]| x.iter().map(|v| 1.0 / (1.0 + v * v)).collect::<Vec<f64>>();
        let plain = run(&x);
        let through = wide(|| run(&x));
        assert!(plain
            .iter()
            .zip(&through)
            .all(|(a, b)| a.to_bits() == b.to_bits()));
    }
}
