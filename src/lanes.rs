//! Two `f64` lanes side by side, for evaluators that run the same
//! arithmetic on two columns at once (two seats through one weighting
//! filter, two sums of moments). Each lane gets exactly the IEEE 754
//! operation its scalar code would, in the same order (no fused
//! multiply–add), so the results are the scalar ones bit for bit; on
//! x86_64 one SSE2 instruction does both lanes.

#[cfg(target_arch = "x86_64")]
use std::arch::x86_64::{
    __m128d, _mm_add_pd, _mm_andnot_pd, _mm_max_pd, _mm_min_pd, _mm_mul_pd, _mm_set_pd,
    _mm_set1_pd, _mm_storeu_pd, _mm_sub_pd,
};

/// Whether the processor has AVX (never on other architectures): the
/// hot loops compiled a second time for AVX are chosen by it at run time.
pub(crate) fn has_avx() -> bool {
    #[cfg(target_arch = "x86_64")]
    return std::arch::is_x86_feature_detected!("avx");
    #[cfg(not(target_arch = "x86_64"))]
    false
}

/// Two lanes of `f64`.
#[cfg(target_arch = "x86_64")]
#[derive(Clone, Copy)]
pub(crate) struct F2(__m128d);

/// Two lanes of `f64`.
#[cfg(not(target_arch = "x86_64"))]
#[derive(Clone, Copy)]
pub(crate) struct F2([f64; 2]);

#[cfg(target_arch = "x86_64")]
impl F2 {
    /// Lanes `(a, b)`.
    #[inline(always)]
    pub fn new(a: f64, b: f64) -> F2 {
        // SAFETY (here and below): SSE2 is part of every x86_64 processor.
        F2(unsafe { _mm_set_pd(b, a) })
    }

    /// `x` in both lanes.
    #[inline(always)]
    pub fn splat(x: f64) -> F2 {
        F2(unsafe { _mm_set1_pd(x) })
    }

    /// The lanes as `[a, b]`.
    #[inline(always)]
    pub fn lanes(self) -> [f64; 2] {
        let mut out = [0.0; 2];
        // SAFETY: `out` has room for the two lanes (unaligned store), and
        // SSE2 is part of every x86_64 processor.
        unsafe { _mm_storeu_pd(out.as_mut_ptr(), self.0) };
        out
    }

    /// Per lane `if self > other { self } else { other }`: `maxpd` returns
    /// its second operand unless the first is greater (a NaN `self` keeps
    /// `other`), which is that branch exactly.
    #[inline(always)]
    pub fn greater_or(self, other: F2) -> F2 {
        F2(unsafe { _mm_max_pd(self.0, other.0) })
    }

    /// Per lane `if self < other { self } else { other }` (`minpd`, as
    /// [`F2::greater_or`]).
    #[inline(always)]
    pub fn less_or(self, other: F2) -> F2 {
        F2(unsafe { _mm_min_pd(self.0, other.0) })
    }

    /// Per lane `|x|` (the sign bit cleared, as `f64::abs`).
    #[inline(always)]
    pub fn abs(self) -> F2 {
        F2(unsafe { _mm_andnot_pd(_mm_set1_pd(-0.0), self.0) })
    }
}

#[cfg(not(target_arch = "x86_64"))]
impl F2 {
    /// Lanes `(a, b)`.
    #[inline(always)]
    pub fn new(a: f64, b: f64) -> F2 {
        F2([a, b])
    }

    /// `x` in both lanes.
    #[inline(always)]
    pub fn splat(x: f64) -> F2 {
        F2([x, x])
    }

    /// The lanes as `[a, b]`.
    #[inline(always)]
    pub fn lanes(self) -> [f64; 2] {
        self.0
    }

    /// Per lane `if self > other { self } else { other }`.
    #[inline(always)]
    pub fn greater_or(self, other: F2) -> F2 {
        let pick = |a: f64, b: f64| if a > b { a } else { b };
        F2([pick(self.0[0], other.0[0]), pick(self.0[1], other.0[1])])
    }

    /// Per lane `if self < other { self } else { other }`.
    #[inline(always)]
    pub fn less_or(self, other: F2) -> F2 {
        let pick = |a: f64, b: f64| if a < b { a } else { b };
        F2([pick(self.0[0], other.0[0]), pick(self.0[1], other.0[1])])
    }

    /// Per lane `|x|`.
    #[inline(always)]
    pub fn abs(self) -> F2 {
        F2([self.0[0].abs(), self.0[1].abs()])
    }
}

/// The lane-wise operator `$op` (`$intr` on x86_64).
macro_rules! lanewise {
    ($trait:ident, $method:ident, $op:tt, $intr:ident) => {
        impl std::ops::$trait for F2 {
            type Output = F2;
            #[inline(always)]
            fn $method(self, rhs: F2) -> F2 {
                #[cfg(target_arch = "x86_64")]
                // SAFETY: SSE2 is part of every x86_64 processor.
                return F2(unsafe { $intr(self.0, rhs.0) });
                #[cfg(not(target_arch = "x86_64"))]
                return F2([self.0[0] $op rhs.0[0], self.0[1] $op rhs.0[1]]);
            }
        }
    };
}
lanewise!(Add, add, +, _mm_add_pd);
lanewise!(Sub, sub, -, _mm_sub_pd);
lanewise!(Mul, mul, *, _mm_mul_pd);

#[cfg(test)]
mod tests {
    use super::F2;

    #[test]
    fn each_lane_is_the_scalar_operation_bit_for_bit() {
        // Reference: the scalar IEEE 754 operations themselves, on values
        // that round, overflow, underflow, carry signed zeros and NaN.
        let v = [
            0.1,
            -0.3,
            1e308,
            -1e-320,
            0.0,
            -0.0,
            3.0,
            f64::NAN,
            f64::INFINITY,
            7.5e-9,
        ];
        let bits = |x: [f64; 2]| x.map(f64::to_bits);
        for &a in &v {
            for &b in &v {
                let (x, y) = (F2::new(a, b), F2::new(b, a));
                assert_eq!(bits((x + y).lanes()), bits([a + b, b + a]));
                assert_eq!(bits((x - y).lanes()), bits([a - b, b - a]));
                assert_eq!(bits((x * y).lanes()), bits([a * b, b * a]));
                assert_eq!(bits(x.abs().lanes()), bits([a.abs(), b.abs()]));
                let pick = |p: f64, q: f64| if p > q { p } else { q };
                assert_eq!(
                    bits(x.greater_or(y).lanes()),
                    bits([pick(a, b), pick(b, a)])
                );
                assert_eq!(bits(F2::splat(a).lanes()), bits([a, a]));
            }
        }
    }
}
