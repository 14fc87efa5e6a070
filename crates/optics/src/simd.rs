//! Lanes of f64: the one arithmetic vocabulary the ray kernel is written in, implemented for a plain f64
//! (single rays), for the portable pair `wide::f64x2` (SSE2 on x86-64, NEON on 64-bit ARM: the code the
//! x86 tests run is the code ARM compiles), and for AVX2+FMA quadruples and AVX-512 octets (chosen at run
//! time). The kernel is written once, generic over [`Lane`], so every build traces with the same formulas.

use std::ops::{Add, BitAnd, BitOr, Div, Mul, Neg, Not, Sub};

/// Whether this processor runs the four-lane AVX2 + FMA loops (checked once, then cached by std).
#[cfg(target_arch = "x86_64")]
pub(crate) fn has_avx2_fma() -> bool {
    std::arch::is_x86_feature_detected!("avx2") && std::arch::is_x86_feature_detected!("fma")
}

/// Whether this processor runs the eight-lane AVX-512 loops (AVX-512 F, with AVX2 and FMA for their
/// four-lane tails).
#[cfg(target_arch = "x86_64")]
pub(crate) fn has_avx512f() -> bool {
    std::arch::is_x86_feature_detected!("avx512f") && has_avx2_fma()
}

/// A vector of f64 lanes with lane-wise arithmetic, comparisons and selection.
pub(crate) trait Lane:
    Copy + Add<Output = Self> + Sub<Output = Self> + Mul<Output = Self> + Div<Output = Self> + Neg<Output = Self>
{
    /// Lane-wise truth values.
    type Mask: Copy + BitAnd<Output = Self::Mask> + BitOr<Output = Self::Mask> + Not<Output = Self::Mask>;
    /// How many f64 values one lane vector holds.
    const WIDTH: usize;
    /// Whether [`Lane::store_where`] is one masked store (AVX-512) rather than a reload and a blend.
    const MASKED_STORE: bool = false;
    /// Every lane set to `v`.
    fn splat(v: f64) -> Self;
    /// Loads `WIDTH` values from the front of `s`.
    fn load(s: &[f64]) -> Self;
    /// Stores `WIDTH` values to the front of `s`.
    fn store(self, s: &mut [f64]);
    /// Square root.
    fn sqrt(self) -> Self;
    /// Absolute value.
    fn abs(self) -> Self;
    /// The magnitude of `self` with the sign of `sign`.
    fn copysign(self, sign: Self) -> Self;
    /// `self`, which must be non-negative with its sign bit clear (a square root of a non-negative
    /// number), with the sign of `sign`: one bitwise OR of the sign bit, cheaper than [`Lane::copysign`].
    fn signed_like(self, sign: Self) -> Self;
    /// `self · b + c`, fused where the lane type has fused multiply-add.
    fn mul_add(self, b: Self, c: Self) -> Self;
    /// `self < o`.
    fn lt(self, o: Self) -> Self::Mask;
    /// `self <= o`.
    fn le(self, o: Self) -> Self::Mask;
    /// `self > o`.
    fn gt(self, o: Self) -> Self::Mask;
    /// `self >= o`.
    fn ge(self, o: Self) -> Self::Mask;
    /// `self == o`.
    fn eq(self, o: Self) -> Self::Mask;
    /// `a` where `m`, else `b`.
    fn select(m: Self::Mask, a: Self, b: Self) -> Self;
    /// `self` where it is above zero, else +0 (also for NaN).
    fn max0(self) -> Self;
    /// `v` where `m`, else +0 (one bitwise AND, cheaper than a select).
    fn only(m: Self::Mask, v: Self) -> Self;
    /// The sum of two lane vectors of which at least one is zero in every lane (a bitwise OR).
    fn either(self, o: Self) -> Self;
    /// Whether every lane of `m` is true.
    fn all(m: Self::Mask) -> bool;
    /// Stores the lanes of `self` where `m` is true to the front of `s`, leaving the others as they are:
    /// a masked store with AVX-512, else a blend with the values there.
    #[inline(always)]
    fn store_where(self, m: Self::Mask, s: &mut [f64]) {
        Self::select(m, self, Self::load(s)).store(s);
    }
}

impl Lane for f64 {
    type Mask = bool;
    const WIDTH: usize = 1;
    #[inline(always)]
    fn splat(v: f64) -> f64 {
        v
    }
    #[inline(always)]
    fn load(s: &[f64]) -> f64 {
        s[0]
    }
    #[inline(always)]
    fn store(self, s: &mut [f64]) {
        s[0] = self;
    }
    #[inline(always)]
    fn sqrt(self) -> f64 {
        f64::sqrt(self)
    }
    #[inline(always)]
    fn abs(self) -> f64 {
        f64::abs(self)
    }
    #[inline(always)]
    fn copysign(self, sign: f64) -> f64 {
        f64::copysign(self, sign)
    }
    #[inline(always)]
    fn signed_like(self, sign: f64) -> f64 {
        f64::copysign(self, sign)
    }
    #[inline(always)]
    fn mul_add(self, b: f64, c: f64) -> f64 {
        // Not fused: single rays must agree bit for bit with the portable batch.
        self * b + c
    }
    #[inline(always)]
    fn lt(self, o: f64) -> bool {
        self < o
    }
    #[inline(always)]
    fn le(self, o: f64) -> bool {
        self <= o
    }
    #[inline(always)]
    fn gt(self, o: f64) -> bool {
        self > o
    }
    #[inline(always)]
    fn ge(self, o: f64) -> bool {
        self >= o
    }
    #[inline(always)]
    fn eq(self, o: f64) -> bool {
        #[allow(clippy::float_cmp)] // Lane-wise equality is what is asked for.
        let e = self == o;
        e
    }
    #[inline(always)]
    fn select(m: bool, a: f64, b: f64) -> f64 {
        if m { a } else { b }
    }
    #[inline(always)]
    fn max0(self) -> f64 {
        if self > 0.0 { self } else { 0.0 }
    }
    #[inline(always)]
    fn only(m: bool, v: f64) -> f64 {
        if m { v } else { 0.0 }
    }
    #[inline(always)]
    fn either(self, o: f64) -> f64 {
        f64::from_bits(self.to_bits() | o.to_bits())
    }
    #[inline(always)]
    fn all(m: bool) -> bool {
        m
    }
}

/// One f64 with fused multiply-add: the single-ray tail of the fused vector loops. Its every operation
/// rounds as one lane of [`F64x4`] or [`F64x8`] does (IEEE division and square root, the same fused
/// multiply-add, the same sign and maximum rules), so a fused batch gives each ray the same bits whichever
/// slot of a block, and so which lane width, traces it.
#[derive(Clone, Copy)]
pub(crate) struct Fused(f64);

macro_rules! fused_binary {
    ($($tr:ident, $f:ident);*) => {
        $(
            impl $tr for Fused {
                type Output = Fused;
                #[inline(always)]
                fn $f(self, o: Fused) -> Fused {
                    Fused($tr::$f(self.0, o.0))
                }
            }
        )*
    };
}
fused_binary!(Add, add; Sub, sub; Mul, mul; Div, div);

impl Neg for Fused {
    type Output = Fused;
    #[inline(always)]
    fn neg(self) -> Fused {
        Fused(-self.0)
    }
}

impl Lane for Fused {
    type Mask = bool;
    const WIDTH: usize = 1;
    #[inline(always)]
    fn splat(v: f64) -> Fused {
        Fused(v)
    }
    #[inline(always)]
    fn load(s: &[f64]) -> Fused {
        Fused(s[0])
    }
    #[inline(always)]
    fn store(self, s: &mut [f64]) {
        s[0] = self.0;
    }
    #[inline(always)]
    fn sqrt(self) -> Fused {
        Fused(self.0.sqrt())
    }
    #[inline(always)]
    fn abs(self) -> Fused {
        Fused(self.0.abs())
    }
    #[inline(always)]
    fn copysign(self, sign: Fused) -> Fused {
        Fused(self.0.copysign(sign.0))
    }
    #[inline(always)]
    fn signed_like(self, sign: Fused) -> Fused {
        Fused(Lane::signed_like(self.0, sign.0))
    }
    #[inline(always)]
    fn mul_add(self, b: Fused, c: Fused) -> Fused {
        // One rounding, as `vfmadd` (the instruction itself inside functions compiled for FMA).
        Fused(f64::mul_add(self.0, b.0, c.0))
    }
    #[inline(always)]
    fn lt(self, o: Fused) -> bool {
        self.0 < o.0
    }
    #[inline(always)]
    fn le(self, o: Fused) -> bool {
        self.0 <= o.0
    }
    #[inline(always)]
    fn gt(self, o: Fused) -> bool {
        self.0 > o.0
    }
    #[inline(always)]
    fn ge(self, o: Fused) -> bool {
        self.0 >= o.0
    }
    #[inline(always)]
    fn eq(self, o: Fused) -> bool {
        Lane::eq(self.0, o.0)
    }
    #[inline(always)]
    fn select(m: bool, a: Fused, b: Fused) -> Fused {
        if m { a } else { b }
    }
    #[inline(always)]
    fn max0(self) -> Fused {
        Fused(Lane::max0(self.0))
    }
    #[inline(always)]
    fn only(m: bool, v: Fused) -> Fused {
        Fused(Lane::only(m, v.0))
    }
    #[inline(always)]
    fn either(self, o: Fused) -> Fused {
        Fused(Lane::either(self.0, o.0))
    }
    #[inline(always)]
    fn all(m: bool) -> bool {
        m
    }
}

/// Two lane vectors traced side by side as one: each formula runs on both halves in one straight stretch of
/// code, so the processor overlaps the two dependency chains (the square roots and divisions of one half
/// wait while the other half computes). The arithmetic of each half is that of `V`, so `Pair<V>` agrees
/// with `V` bit for bit.
#[derive(Clone, Copy)]
pub(crate) struct Pair<V>(V, V);

/// The mask of a [`Pair`].
#[derive(Clone, Copy)]
pub(crate) struct PairMask<M>(M, M);

macro_rules! pair_binary {
    ($ty:ident, $tr:ident, $f:ident, $bound:ident) => {
        impl<V: $bound> $tr for $ty<V> {
            type Output = $ty<V>;
            #[inline(always)]
            fn $f(self, o: $ty<V>) -> $ty<V> {
                $ty($tr::$f(self.0, o.0), $tr::$f(self.1, o.1))
            }
        }
    };
}

/// The operations a mask of a [`Pair`] needs from the mask of its halves.
pub(crate) trait MaskOps: Copy + BitAnd<Output = Self> + BitOr<Output = Self> + Not<Output = Self> {}
impl<M: Copy + BitAnd<Output = M> + BitOr<Output = M> + Not<Output = M>> MaskOps for M {}

pair_binary!(Pair, Add, add, Lane);
pair_binary!(Pair, Sub, sub, Lane);
pair_binary!(Pair, Mul, mul, Lane);
pair_binary!(Pair, Div, div, Lane);
pair_binary!(PairMask, BitAnd, bitand, MaskOps);
pair_binary!(PairMask, BitOr, bitor, MaskOps);

impl<V: Lane> Neg for Pair<V> {
    type Output = Pair<V>;
    #[inline(always)]
    fn neg(self) -> Pair<V> {
        Pair(-self.0, -self.1)
    }
}

impl<M: MaskOps> Not for PairMask<M> {
    type Output = PairMask<M>;
    #[inline(always)]
    fn not(self) -> PairMask<M> {
        PairMask(!self.0, !self.1)
    }
}

macro_rules! pair_unary {
    ($($f:ident),*) => {
        $(
            #[inline(always)]
            fn $f(self) -> Pair<V> {
                Pair(self.0.$f(), self.1.$f())
            }
        )*
    };
}

macro_rules! pair_cmp {
    ($($f:ident),*) => {
        $(
            #[inline(always)]
            fn $f(self, o: Pair<V>) -> PairMask<V::Mask> {
                PairMask(self.0.$f(o.0), self.1.$f(o.1))
            }
        )*
    };
}

impl<V: Lane> Lane for Pair<V> {
    type Mask = PairMask<V::Mask>;
    const WIDTH: usize = 2 * V::WIDTH;
    const MASKED_STORE: bool = V::MASKED_STORE;
    #[inline(always)]
    fn splat(v: f64) -> Pair<V> {
        Pair(V::splat(v), V::splat(v))
    }
    #[inline(always)]
    fn load(s: &[f64]) -> Pair<V> {
        let (a, b) = s.split_at(V::WIDTH);
        Pair(V::load(a), V::load(b))
    }
    #[inline(always)]
    fn store(self, s: &mut [f64]) {
        let (a, b) = s.split_at_mut(V::WIDTH);
        self.0.store(a);
        self.1.store(b);
    }
    pair_unary!(sqrt, abs, max0);
    #[inline(always)]
    fn copysign(self, sign: Pair<V>) -> Pair<V> {
        Pair(self.0.copysign(sign.0), self.1.copysign(sign.1))
    }
    #[inline(always)]
    fn signed_like(self, sign: Pair<V>) -> Pair<V> {
        Pair(self.0.signed_like(sign.0), self.1.signed_like(sign.1))
    }
    #[inline(always)]
    fn mul_add(self, b: Pair<V>, c: Pair<V>) -> Pair<V> {
        Pair(self.0.mul_add(b.0, c.0), self.1.mul_add(b.1, c.1))
    }
    pair_cmp!(lt, le, gt, ge, eq);
    #[inline(always)]
    fn select(m: PairMask<V::Mask>, a: Pair<V>, b: Pair<V>) -> Pair<V> {
        Pair(V::select(m.0, a.0, b.0), V::select(m.1, a.1, b.1))
    }
    #[inline(always)]
    fn only(m: PairMask<V::Mask>, v: Pair<V>) -> Pair<V> {
        Pair(V::only(m.0, v.0), V::only(m.1, v.1))
    }
    #[inline(always)]
    fn either(self, o: Pair<V>) -> Pair<V> {
        Pair(self.0.either(o.0), self.1.either(o.1))
    }
    #[inline(always)]
    fn all(m: PairMask<V::Mask>) -> bool {
        // One test of both halves at once: no branch between them.
        V::all(m.0 & m.1)
    }
    #[inline(always)]
    fn store_where(self, m: PairMask<V::Mask>, s: &mut [f64]) {
        self.0.store_where(m.0, s);
        self.1.store_where(m.1, &mut s[V::WIDTH..]);
    }
}

/// The portable pair of lanes, from the `wide` crate: SSE2 on x86-64, NEON on 64-bit ARM, plain arrays
/// elsewhere. Its multiply-add is not fused, so it agrees with the single-ray trace (`f64`) bit for bit.
impl Lane for wide::f64x2 {
    type Mask = wide::f64x2;
    const WIDTH: usize = 2;
    #[inline(always)]
    fn splat(v: f64) -> wide::f64x2 {
        wide::f64x2::splat(v)
    }
    #[inline(always)]
    fn load(s: &[f64]) -> wide::f64x2 {
        wide::f64x2::new([s[0], s[1]])
    }
    #[inline(always)]
    fn store(self, s: &mut [f64]) {
        s[..2].copy_from_slice(&self.to_array());
    }
    #[inline(always)]
    fn sqrt(self) -> wide::f64x2 {
        wide::f64x2::sqrt(self)
    }
    #[inline(always)]
    fn abs(self) -> wide::f64x2 {
        wide::f64x2::abs(self)
    }
    #[inline(always)]
    fn copysign(self, sign: wide::f64x2) -> wide::f64x2 {
        wide::f64x2::abs(self) | (wide::f64x2::splat(-0.0) & sign)
    }
    #[inline(always)]
    fn signed_like(self, sign: wide::f64x2) -> wide::f64x2 {
        self | (wide::f64x2::splat(-0.0) & sign)
    }
    #[inline(always)]
    fn mul_add(self, b: wide::f64x2, c: wide::f64x2) -> wide::f64x2 {
        // Not fused: the portable batch must agree bit for bit with single rays.
        self * b + c
    }
    #[inline(always)]
    fn lt(self, o: wide::f64x2) -> wide::f64x2 {
        self.simd_lt(o)
    }
    #[inline(always)]
    fn le(self, o: wide::f64x2) -> wide::f64x2 {
        self.simd_le(o)
    }
    #[inline(always)]
    fn gt(self, o: wide::f64x2) -> wide::f64x2 {
        self.simd_gt(o)
    }
    #[inline(always)]
    fn ge(self, o: wide::f64x2) -> wide::f64x2 {
        self.simd_ge(o)
    }
    #[inline(always)]
    fn eq(self, o: wide::f64x2) -> wide::f64x2 {
        self.simd_eq(o)
    }
    #[inline(always)]
    fn select(m: wide::f64x2, a: wide::f64x2, b: wide::f64x2) -> wide::f64x2 {
        m.select(a, b)
    }
    #[inline(always)]
    fn max0(self) -> wide::f64x2 {
        // Where above zero, else +0 (also for NaN and -0), as the scalar form.
        self.simd_gt(wide::f64x2::ZERO) & self
    }
    #[inline(always)]
    fn only(m: wide::f64x2, v: wide::f64x2) -> wide::f64x2 {
        m & v
    }
    #[inline(always)]
    fn either(self, o: wide::f64x2) -> wide::f64x2 {
        self | o
    }
    #[inline(always)]
    fn all(m: wide::f64x2) -> bool {
        m.all()
    }
}

#[cfg(target_arch = "x86_64")]
pub(crate) use x86::{F64x4, F64x8};

#[cfg(target_arch = "x86_64")]
mod x86 {
    use super::Lane;
    use std::arch::x86_64::*;
    use std::ops::{Add, BitAnd, BitOr, Div, Mul, Neg, Not, Sub};

    macro_rules! binary {
        ($ty:ident, $tr:ident, $f:ident, $intr:ident) => {
            impl $tr for $ty {
                type Output = $ty;
                #[inline(always)]
                fn $f(self, o: $ty) -> $ty {
                    // SAFETY: the intrinsic's target feature is enabled wherever this lane type is used
                    // (AVX2 and FMA, or AVX-512 F, only inside functions compiled for them).
                    #[allow(unused_unsafe)]
                    unsafe {
                        $ty($intr(self.0, o.0))
                    }
                }
            }
        };
    }

    /// Four f64 lanes in an AVX register, with fused multiply-add. Use only inside functions compiled with
    /// `#[target_feature(enable = "avx2,fma")]`, after checking the processor.
    #[derive(Clone, Copy)]
    pub(crate) struct F64x4(__m256d);

    /// A mask of four lanes: all bits set where true.
    #[derive(Clone, Copy)]
    pub(crate) struct M64x4(__m256d);

    binary!(F64x4, Add, add, _mm256_add_pd);
    binary!(F64x4, Sub, sub, _mm256_sub_pd);
    binary!(F64x4, Mul, mul, _mm256_mul_pd);
    binary!(F64x4, Div, div, _mm256_div_pd);
    binary!(M64x4, BitAnd, bitand, _mm256_and_pd);
    binary!(M64x4, BitOr, bitor, _mm256_or_pd);

    impl Neg for F64x4 {
        type Output = F64x4;
        #[inline(always)]
        fn neg(self) -> F64x4 {
            // SAFETY: see `binary!`.
            unsafe { F64x4(_mm256_xor_pd(self.0, _mm256_set1_pd(-0.0))) }
        }
    }

    impl Not for M64x4 {
        type Output = M64x4;
        #[inline(always)]
        fn not(self) -> M64x4 {
            // SAFETY: see `binary!`.
            unsafe { M64x4(_mm256_xor_pd(self.0, _mm256_castsi256_pd(_mm256_set1_epi64x(-1)))) }
        }
    }

    macro_rules! cmp4 {
        ($f:ident, $pred:ident) => {
            #[inline(always)]
            fn $f(self, o: F64x4) -> M64x4 {
                // SAFETY: see `binary!`.
                unsafe { M64x4(_mm256_cmp_pd::<$pred>(self.0, o.0)) }
            }
        };
    }

    impl Lane for F64x4 {
        type Mask = M64x4;
        const WIDTH: usize = 4;
        #[inline(always)]
        fn splat(v: f64) -> F64x4 {
            // SAFETY: see `binary!`.
            unsafe { F64x4(_mm256_set1_pd(v)) }
        }
        #[inline(always)]
        fn load(s: &[f64]) -> F64x4 {
            assert!(s.len() >= 4);
            // SAFETY: four values are in bounds (checked above); see `binary!` for the feature.
            unsafe { F64x4(_mm256_loadu_pd(s.as_ptr())) }
        }
        #[inline(always)]
        fn store(self, s: &mut [f64]) {
            assert!(s.len() >= 4);
            // SAFETY: four values are in bounds (checked above); see `binary!` for the feature.
            unsafe { _mm256_storeu_pd(s.as_mut_ptr(), self.0) }
        }
        #[inline(always)]
        fn sqrt(self) -> F64x4 {
            // SAFETY: see `binary!`.
            unsafe { F64x4(_mm256_sqrt_pd(self.0)) }
        }
        #[inline(always)]
        fn abs(self) -> F64x4 {
            // SAFETY: see `binary!`.
            unsafe { F64x4(_mm256_andnot_pd(_mm256_set1_pd(-0.0), self.0)) }
        }
        #[inline(always)]
        fn copysign(self, sign: F64x4) -> F64x4 {
            // SAFETY: see `binary!`.
            unsafe {
                let s = _mm256_set1_pd(-0.0);
                F64x4(_mm256_or_pd(_mm256_andnot_pd(s, self.0), _mm256_and_pd(s, sign.0)))
            }
        }
        #[inline(always)]
        fn signed_like(self, sign: F64x4) -> F64x4 {
            // SAFETY: see `binary!`.
            unsafe { F64x4(_mm256_or_pd(self.0, _mm256_and_pd(_mm256_set1_pd(-0.0), sign.0))) }
        }
        #[inline(always)]
        fn mul_add(self, b: F64x4, c: F64x4) -> F64x4 {
            // SAFETY: see `binary!`.
            unsafe { F64x4(_mm256_fmadd_pd(self.0, b.0, c.0)) }
        }
        cmp4!(lt, _CMP_LT_OQ);
        cmp4!(le, _CMP_LE_OQ);
        cmp4!(gt, _CMP_GT_OQ);
        cmp4!(ge, _CMP_GE_OQ);
        cmp4!(eq, _CMP_EQ_OQ);
        #[inline(always)]
        fn max0(self) -> F64x4 {
            // SAFETY: see `binary!`. maxpd returns its second operand (+0) when the first is NaN or ±0.
            unsafe { F64x4(_mm256_max_pd(self.0, _mm256_setzero_pd())) }
        }
        #[inline(always)]
        fn only(m: M64x4, v: F64x4) -> F64x4 {
            // SAFETY: see `binary!`.
            unsafe { F64x4(_mm256_and_pd(m.0, v.0)) }
        }
        #[inline(always)]
        fn either(self, o: F64x4) -> F64x4 {
            // SAFETY: see `binary!`.
            unsafe { F64x4(_mm256_or_pd(self.0, o.0)) }
        }
        #[inline(always)]
        fn all(m: M64x4) -> bool {
            // SAFETY: see `binary!`.
            unsafe { _mm256_movemask_pd(m.0) == 0b1111 }
        }
        #[inline(always)]
        fn select(m: M64x4, a: F64x4, b: F64x4) -> F64x4 {
            // SAFETY: see `binary!`.
            unsafe { F64x4(_mm256_blendv_pd(b.0, a.0, m.0)) }
        }
    }

    /// Eight f64 lanes in an AVX-512 register, with fused multiply-add and mask registers for truth
    /// values. Use only inside functions compiled with `#[target_feature(enable = "avx512f,avx2,fma")]`,
    /// after checking the processor. Each formula runs the same fused operations as [`F64x4`], so the
    /// two agree bit for bit.
    #[derive(Clone, Copy)]
    pub(crate) struct F64x8(__m512d);

    /// A mask of eight lanes: one bit per lane.
    #[derive(Clone, Copy)]
    pub(crate) struct M64x8(__mmask8);

    binary!(F64x8, Add, add, _mm512_add_pd);
    binary!(F64x8, Sub, sub, _mm512_sub_pd);
    binary!(F64x8, Mul, mul, _mm512_mul_pd);
    binary!(F64x8, Div, div, _mm512_div_pd);

    impl BitAnd for M64x8 {
        type Output = M64x8;
        #[inline(always)]
        fn bitand(self, o: M64x8) -> M64x8 {
            M64x8(self.0 & o.0)
        }
    }

    impl BitOr for M64x8 {
        type Output = M64x8;
        #[inline(always)]
        fn bitor(self, o: M64x8) -> M64x8 {
            M64x8(self.0 | o.0)
        }
    }

    impl Not for M64x8 {
        type Output = M64x8;
        #[inline(always)]
        fn not(self) -> M64x8 {
            M64x8(!self.0)
        }
    }

    /// The bits of eight lanes, for the sign-bit operations (AVX-512 F has them for integers only).
    #[inline(always)]
    fn bits8(v: __m512d) -> __m512i {
        // SAFETY: see `binary!`.
        unsafe { _mm512_castpd_si512(v) }
    }

    /// Eight lanes from their bits.
    #[inline(always)]
    fn lanes8(v: __m512i) -> __m512d {
        // SAFETY: see `binary!`.
        unsafe { _mm512_castsi512_pd(v) }
    }

    /// The sign bit in every lane.
    #[inline(always)]
    fn sign8() -> __m512i {
        // SAFETY: see `binary!`.
        unsafe { _mm512_set1_epi64(i64::MIN) }
    }

    impl Neg for F64x8 {
        type Output = F64x8;
        #[inline(always)]
        fn neg(self) -> F64x8 {
            // SAFETY: see `binary!`.
            unsafe { F64x8(lanes8(_mm512_xor_epi64(bits8(self.0), sign8()))) }
        }
    }

    macro_rules! cmp8 {
        ($f:ident, $pred:ident) => {
            #[inline(always)]
            fn $f(self, o: F64x8) -> M64x8 {
                // SAFETY: see `binary!`.
                unsafe { M64x8(_mm512_cmp_pd_mask::<$pred>(self.0, o.0)) }
            }
        };
    }

    impl Lane for F64x8 {
        type Mask = M64x8;
        const WIDTH: usize = 8;
        const MASKED_STORE: bool = true;
        #[inline(always)]
        fn splat(v: f64) -> F64x8 {
            // SAFETY: see `binary!`.
            unsafe { F64x8(_mm512_set1_pd(v)) }
        }
        #[inline(always)]
        fn load(s: &[f64]) -> F64x8 {
            assert!(s.len() >= 8);
            // SAFETY: eight values are in bounds (checked above); see `binary!` for the feature.
            unsafe { F64x8(_mm512_loadu_pd(s.as_ptr())) }
        }
        #[inline(always)]
        fn store(self, s: &mut [f64]) {
            assert!(s.len() >= 8);
            // SAFETY: eight values are in bounds (checked above); see `binary!` for the feature.
            unsafe { _mm512_storeu_pd(s.as_mut_ptr(), self.0) }
        }
        #[inline(always)]
        fn sqrt(self) -> F64x8 {
            // SAFETY: see `binary!`.
            unsafe { F64x8(_mm512_sqrt_pd(self.0)) }
        }
        #[inline(always)]
        fn abs(self) -> F64x8 {
            // SAFETY: see `binary!`.
            unsafe { F64x8(_mm512_abs_pd(self.0)) }
        }
        #[inline(always)]
        fn copysign(self, sign: F64x8) -> F64x8 {
            // SAFETY: see `binary!`.
            unsafe {
                let s = sign8();
                let magnitude = _mm512_andnot_epi64(s, bits8(self.0));
                F64x8(lanes8(_mm512_or_epi64(magnitude, _mm512_and_epi64(s, bits8(sign.0)))))
            }
        }
        #[inline(always)]
        fn signed_like(self, sign: F64x8) -> F64x8 {
            // SAFETY: see `binary!`.
            unsafe { F64x8(lanes8(_mm512_or_epi64(bits8(self.0), _mm512_and_epi64(sign8(), bits8(sign.0))))) }
        }
        #[inline(always)]
        fn mul_add(self, b: F64x8, c: F64x8) -> F64x8 {
            // SAFETY: see `binary!`.
            unsafe { F64x8(_mm512_fmadd_pd(self.0, b.0, c.0)) }
        }
        cmp8!(lt, _CMP_LT_OQ);
        cmp8!(le, _CMP_LE_OQ);
        cmp8!(gt, _CMP_GT_OQ);
        cmp8!(ge, _CMP_GE_OQ);
        cmp8!(eq, _CMP_EQ_OQ);
        #[inline(always)]
        fn max0(self) -> F64x8 {
            // SAFETY: see `binary!`. vmaxpd returns its second operand (+0) when the first is NaN or ±0.
            unsafe { F64x8(_mm512_max_pd(self.0, _mm512_setzero_pd())) }
        }
        #[inline(always)]
        fn only(m: M64x8, v: F64x8) -> F64x8 {
            // SAFETY: see `binary!`.
            unsafe { F64x8(_mm512_maskz_mov_pd(m.0, v.0)) }
        }
        #[inline(always)]
        fn either(self, o: F64x8) -> F64x8 {
            // SAFETY: see `binary!`.
            unsafe { F64x8(lanes8(_mm512_or_epi64(bits8(self.0), bits8(o.0)))) }
        }
        #[inline(always)]
        fn all(m: M64x8) -> bool {
            m.0 == 0xff
        }
        #[inline(always)]
        fn store_where(self, m: M64x8, s: &mut [f64]) {
            assert!(s.len() >= 8);
            // SAFETY: eight values are in bounds (checked above); see `binary!` for the feature.
            unsafe { _mm512_mask_storeu_pd(s.as_mut_ptr(), m.0, self.0) }
        }
        #[inline(always)]
        fn select(m: M64x8, a: F64x8, b: F64x8) -> F64x8 {
            // SAFETY: see `binary!`. The blend takes its second operand where the mask bit is set.
            unsafe { F64x8(_mm512_mask_blend_pd(m.0, b.0, a.0)) }
        }
    }
}
