//! The batched exact skew-ray trace: many 3-D rays through one sequence, structure of arrays, written once
//! over SIMD lanes like the meridional batch ([`crate::batch`]).
//!
//! The kernel here is also the single-ray skew trace ([`crate::skew::through_step`] runs it with one
//! lane), so the batch and the single ray agree bit for bit in the portable build.

use crate::pose::Pose;
use crate::simd::{Lane, Pair};
use crate::skew::SkewRay;
use crate::system::{Sequence, Step};
use crate::trace::{
    FATE_BLOCKED, FLAT, REFLECT, REFRACT, RayError, SPHERE, StepLanes, fate_code, fate_error, with_kernel_form,
};

/// One 3-D ray (or lane vector of rays) meeting one surface, computed without branching.
#[derive(Clone, Copy)]
pub(crate) struct Hit3<V: Lane> {
    pub x: V,
    pub y: V,
    pub z: V,
    pub k: V,
    pub m: V,
    pub l: V,
    /// Optical path added from the old point through the surface.
    pub path: V,
    /// Distance of the intercept from the axis.
    pub rho2: V,
    pub met: <V as Lane>::Mask,
    pub inside: <V as Lane>::Mask,
    pub tir: <V as Lane>::Mask,
}

impl<V: Lane> Hit3<V> {
    /// Whether the ray gets through the surface.
    #[inline(always)]
    pub fn through(&self) -> V::Mask {
        self.met & self.inside & !self.tir
    }

    /// The fate code, as for the meridional kernel: missed before blocked before total reflection.
    #[inline(always)]
    pub fn fate(&self) -> V {
        fate_code(self.met, self.inside, self.tir)
    }
}

/// One 3-D ray meeting one surface. The conicoid c(x² + y²) − 2s + c(1+k)s² = 0 along the ray gives
/// a t² + 2b t + f = 0, solved by the stable root t = f/(−b + sgn(−b)√(b² − af)) with the far-sheet
/// fallback d/a, exactly as in the meridional kernel; then vector Snell's law with sin²I = 1 − cos²I,
/// reflection, or the ideal lens's
/// tan u' = tan u − ρ/f in x and y.
#[inline(always)]
pub(crate) fn hit3<V: Lane, const SHAPE: u8, const ACTION: u8>(s: &StepLanes<V>, n_before: V, ray: [V; 6]) -> Hit3<V> {
    let [x, y, z, k, m, l] = ray;
    let zero = V::splat(0.0);
    let one = V::splat(1.0);
    let s0 = z - s.z_vertex;
    // w = 1 − c(1+k)s at the intercept: positive on the sheet that holds the vertex, and the z component of
    // the (unnormalised) normal there.
    let (t, met, w) = if SHAPE == FLAT {
        (-s0 / l, !l.eq(zero), one)
    } else {
        let (a, b, f) = if SHAPE == SPHERE {
            // c(1+k) = c, and a = c|d|² = c for the unit direction every ray carries: fewer operations, the
            // same intercept to the last bits (|d|² differs from 1 by a rounding or two).
            let b = s.c.mul_add(s0.mul_add(l, x.mul_add(k, y * m)), -l);
            let f = s.c.mul_add(s0.mul_add(s0, x.mul_add(x, y * y)), -(s0 + s0));
            (s.c, b, f)
        } else {
            let a = (s.ck * l).mul_add(l, s.c * k.mul_add(k, m * m));
            let b = (s.ck * s0).mul_add(l, s.c * x.mul_add(k, y * m) - l);
            let f = (s.ck * s0).mul_add(s0, s.c * x.mul_add(x, y * y) - V::splat(2.0) * s0);
            (a, b, f)
        };
        let disc = b.mul_add(b, -(a * f));
        let d = -b + disc.max0().sqrt().signed_like(-b);
        // The far root d/a is needed only when some lane's first root lands on the far sheet.
        let t1 = f / d;
        let w1 = one - s.ck * t1.mul_add(l, s0);
        let near_ok = w1.gt(zero);
        let finite = |t: V| t.abs().lt(V::splat(f64::INFINITY));
        if V::all(near_ok) {
            (t1, disc.ge(zero) & finite(t1), w1)
        } else {
            let t2 = V::select(a.eq(zero), V::splat(f64::INFINITY), d / a);
            let w2 = one - s.ck * t2.mul_add(l, s0);
            let far_ok = w2.gt(zero);
            let t = V::select(near_ok, t1, t2);
            (t, disc.ge(zero) & (near_ok | far_ok) & finite(t), V::select(near_ok, w1, w2))
        }
    };
    let (x1, y1, z1) = (t.mul_add(k, x), t.mul_add(m, y), t.mul_add(l, z));
    let rho2 = x1.mul_add(x1, y1 * y1);
    let inside = rho2.le(s.semi * s.semi);
    let (nx, ny, nz) = match SHAPE {
        FLAT => (zero, zero, one),
        SPHERE => (-s.c * x1, -s.c * y1, w),
        _ => {
            let (nx, ny, nz) = (-s.c * x1, -s.c * y1, w);
            let inv = one / nx.mul_add(nx, ny.mul_add(ny, nz * nz)).sqrt();
            (nx * inv, ny * inv, nz * inv)
        }
    };
    let cos_i = k.mul_add(nx, m.mul_add(ny, l * nz));
    let mut path = n_before * t;
    let (k1, m1, l1, tir) = match ACTION {
        REFRACT => {
            let mu = s.mu;
            // sin²I = 1 − cos²I: near normal incidence it loses its relative digits, but cos²R = 1 − μ² sin²I
            // needs it only to its absolute rounding, which 1 − cos²I keeps (as the cross product would, in
            // seven more operations).
            let sin2 = (-cos_i).mul_add(cos_i, one);
            let cos2 = (-(mu * mu)).mul_add(sin2, one);
            let g = cos2.max0().sqrt().signed_like(cos_i) - mu * cos_i;
            (mu.mul_add(k, g * nx), mu.mul_add(m, g * ny), mu.mul_add(l, g * nz), cos2.lt(zero))
        }
        REFLECT => {
            let two_cos = V::splat(2.0) * cos_i;
            (k - two_cos * nx, m - two_cos * ny, l - two_cos * nz, zero.lt(zero))
        }
        _ => {
            let f = s.focal;
            let (tx, ty) = (k / l.abs() - x1 / f, m / l.abs() - y1 / f);
            let inv = one / tx.mul_add(tx, ty.mul_add(ty, one)).sqrt();
            // −n(√(ρ² + f²) − |f|) sgn f keeps the path from a plane wave to the focus equal for every ray.
            path = path - n_before * ((rho2 + f * f).sqrt() - f.abs()) * one.copysign(f);
            (tx * inv, ty * inv, inv.signed_like(l), zero.lt(zero))
        }
    };
    Hit3 { x: x1, y: y1, z: z1, k: k1, m: m1, l: l1, path, rho2, met, inside, tir }
}

/// [`hit3`] for one ray through any surface, choosing the compiled form at run time.
pub(crate) fn hit3_any(step: &Step, ray: [f64; 6]) -> Hit3<f64> {
    let s = StepLanes::<f64>::new(step);
    with_kernel_form!(step, hit3::<f64>(&s, step.n_before, ray))
}

/// Many skew rays, one array per coordinate.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct SkewBatch {
    /// x, mm.
    pub x_mm: Vec<f64>,
    /// y, mm.
    pub y_mm: Vec<f64>,
    /// z, mm.
    pub z_mm: Vec<f64>,
    /// Direction cosines along x.
    pub k: Vec<f64>,
    /// Direction cosines along y.
    pub m: Vec<f64>,
    /// Direction cosines along z.
    pub l: Vec<f64>,
    /// Optical path lengths, mm.
    pub opl_mm: Vec<f64>,
    /// 0 while alive; otherwise `4 (surface + 1) + why`.
    fate: Vec<f64>,
}

impl SkewBatch {
    /// An empty batch with room for `n` rays.
    pub fn with_capacity(n: usize) -> SkewBatch {
        let v = || Vec::with_capacity(n);
        SkewBatch { x_mm: v(), y_mm: v(), z_mm: v(), k: v(), m: v(), l: v(), opl_mm: v(), fate: v() }
    }

    /// Adds a ray.
    pub fn push(&mut self, r: SkewRay) {
        self.x_mm.push(r.x_mm);
        self.y_mm.push(r.y_mm);
        self.z_mm.push(r.z_mm);
        self.k.push(r.k);
        self.m.push(r.m);
        self.l.push(r.l);
        self.opl_mm.push(r.opl_mm);
        self.fate.push(0.0);
    }

    /// Number of rays.
    pub fn len(&self) -> usize {
        self.x_mm.len()
    }

    /// Whether the batch holds no ray.
    pub fn is_empty(&self) -> bool {
        self.x_mm.is_empty()
    }

    /// Ray `i` as it stands.
    pub fn ray(&self, i: usize) -> SkewRay {
        SkewRay {
            x_mm: self.x_mm[i],
            y_mm: self.y_mm[i],
            z_mm: self.z_mm[i],
            k: self.k[i],
            m: self.m[i],
            l: self.l[i],
            opl_mm: self.opl_mm[i],
        }
    }

    /// Ray `i` after the trace, or why it did not get through.
    pub fn outcome(&self, i: usize) -> Result<SkewRay, RayError> {
        let fate = self.fate[i];
        if fate == 0.0 {
            let r = self.ray(i);
            let finite = [r.x_mm, r.y_mm, r.z_mm, r.k, r.m, r.l].iter().all(|v| v.is_finite());
            return if finite { Ok(r) } else { Err(RayError::NonFinite { surface: None }) };
        }
        let code = fate as usize;
        let (x, y) = (self.x_mm[i], self.y_mm[i]);
        Err(fate_error((code % 4) as f64, code / 4 - 1, (x * x + y * y).sqrt()))
    }
}

impl SkewBatch {
    /// The RMS radius, mm, of the rays that got through, about their centroid, where each stands (after
    /// a trace to a screen: the spot's RMS radius); `None` when no ray got through. Summed on every core
    /// in blocks of a fixed size whose partial sums are added in block order, so the figure is the same
    /// bit for bit whatever the thread count.
    pub fn rms_radius_mm(&self) -> Option<f64> {
        use rayon::prelude::*;
        let n = self.len();
        let blocks = n.div_ceil(SUM_BLOCK);
        let through = |i: usize| self.fate[i] == 0.0 && self.x_mm[i].is_finite() && self.y_mm[i].is_finite();
        let range = |b: usize| b * SUM_BLOCK..((b + 1) * SUM_BLOCK).min(n);
        let sums: Vec<[f64; 3]> = (0..blocks)
            .into_par_iter()
            .map(|b| {
                range(b)
                    .filter(|&i| through(i))
                    .fold([0.0; 3], |s, i| [s[0] + 1.0, s[1] + self.x_mm[i], s[2] + self.y_mm[i]])
            })
            .collect();
        let [count, sx, sy] = sums.iter().fold([0.0; 3], |s, b| [s[0] + b[0], s[1] + b[1], s[2] + b[2]]);
        if count == 0.0 {
            return None;
        }
        let (cx, cy) = (sx / count, sy / count);
        let squares: Vec<f64> = (0..blocks)
            .into_par_iter()
            .map(|b| {
                range(b)
                    .filter(|&i| through(i))
                    .map(|i| (self.x_mm[i] - cx).powi(2) + (self.y_mm[i] - cy).powi(2))
                    .sum()
            })
            .collect();
        Some((squares.iter().sum::<f64>() / count).sqrt())
    }
}

/// Rays per block of the spot's sums (fixed, so that the sums do not depend on the thread count).
const SUM_BLOCK: usize = 16_384;

/// Traces every ray of `batch` through `seq`, in place: four AVX lanes with fused multiply-add where the
/// processor has them (intercepts then differ from the single-ray trace by rounding, ~1e-16 relative),
/// else the portable loop.
pub fn trace_skew_batch(seq: &Sequence, batch: &mut SkewBatch) {
    trace_skew_batch_posed(seq, &[], batch);
}

/// Traces every ray of `batch` through `seq` with surface `i` placed by `poses[i]` (surfaces beyond the
/// end of `poses` sit where the centred trace puts them): before a posed surface every ray of a block is
/// carried into its local frame, and back after it; identity poses are skipped, so with no decentre or
/// tilt this is [`trace_skew_batch`] bit for bit. The lane width is chosen as there.
pub fn trace_skew_batch_posed(seq: &Sequence, poses: &[Pose], batch: &mut SkewBatch) {
    dispatched(seq, poses, batch.arrays());
}

/// [`trace_skew_batch`] on every core: the batch is cut into pieces of a fixed number of whole blocks,
/// which rayon traces in any order on any number of threads. Each ray is traced by the same loop over the
/// same block as in [`trace_skew_batch`], so the result is the same bit for bit whatever the thread count.
pub fn trace_skew_batch_par(seq: &Sequence, batch: &mut SkewBatch) {
    use rayon::prelude::*;
    let [x, y, z, k, m, l, opl, fate] = batch.arrays();
    let pieces: Vec<[&mut [f64]; 8]> = x
        .chunks_mut(PIECE)
        .zip(y.chunks_mut(PIECE))
        .zip(z.chunks_mut(PIECE))
        .zip(k.chunks_mut(PIECE))
        .zip(m.chunks_mut(PIECE))
        .zip(l.chunks_mut(PIECE))
        .zip(opl.chunks_mut(PIECE))
        .zip(fate.chunks_mut(PIECE))
        .map(|(((((((x, y), z), k), m), l), opl), fate)| [x, y, z, k, m, l, opl, fate])
        .collect();
    pieces.into_par_iter().for_each(|a| dispatched(seq, &[], a));
}

/// Rays per piece of a parallel trace: whole blocks, so that every block is the one of the serial trace.
const PIECE: usize = 32 * BLOCK;

/// The widest loop the processor runs, over one batch's arrays.
fn dispatched(seq: &Sequence, poses: &[Pose], a: [&mut [f64]; 8]) {
    #[cfg(target_arch = "x86_64")]
    {
        if crate::simd::has_avx512f() {
            // SAFETY: the processor has just been checked for AVX-512 F, AVX2 and FMA.
            unsafe { avx512_arrays(seq, poses, a) };
            return;
        }
        if crate::simd::has_avx2_fma() {
            // SAFETY: the processor has just been checked for AVX2 and FMA.
            unsafe { avx2_arrays(seq, poses, a) };
            return;
        }
    }
    portable_arrays(seq, poses, a);
}

impl SkewBatch {
    /// The eight arrays the loops read and write: x, y, z, k, m, l, optical path, fate.
    fn arrays(&mut self) -> [&mut [f64]; 8] {
        [
            &mut self.x_mm,
            &mut self.y_mm,
            &mut self.z_mm,
            &mut self.k,
            &mut self.m,
            &mut self.l,
            &mut self.opl_mm,
            &mut self.fate,
        ]
    }
}

/// The portable loop (pairs of `wide::f64x2`: SSE2 on x86-64, NEON on 64-bit ARM), bit for bit the
/// single-ray arithmetic.
pub fn trace_skew_batch_portable(seq: &Sequence, batch: &mut SkewBatch) {
    trace_skew_batch_portable_posed(seq, &[], batch);
}

/// The portable loop with posed surfaces (see [`trace_skew_batch_posed`]).
pub fn trace_skew_batch_portable_posed(seq: &Sequence, poses: &[Pose], batch: &mut SkewBatch) {
    portable_arrays(seq, poses, batch.arrays());
}

fn portable_arrays(seq: &Sequence, poses: &[Pose], a: [&mut [f64]; 8]) {
    trace_blocks::<Pair<wide::f64x2>, wide::f64x2>(seq, poses, a);
}

/// The loop in four AVX lanes with fused multiply-add, two vectors side by side.
///
/// # Safety
/// The processor must support AVX2 and FMA.
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2,fma")]
pub unsafe fn trace_skew_batch_avx2(seq: &Sequence, batch: &mut SkewBatch) {
    // SAFETY: the caller vouches for the processor.
    unsafe { avx2_arrays(seq, &[], batch.arrays()) }
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2,fma")]
unsafe fn avx2_arrays(seq: &Sequence, poses: &[Pose], a: [&mut [f64]; 8]) {
    use crate::simd::F64x4;
    trace_blocks::<Pair<F64x4>, F64x4>(seq, poses, a);
}

/// The loop in eight AVX-512 lanes with fused multiply-add (four AVX lanes for the tail of a block): the
/// same fused operations as [`trace_skew_batch_avx2`], so the two agree bit for bit.
///
/// # Safety
/// The processor must support AVX-512 F, AVX2 and FMA.
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx512f,avx2,fma")]
pub unsafe fn trace_skew_batch_avx512(seq: &Sequence, batch: &mut SkewBatch) {
    // SAFETY: the caller vouches for the processor.
    unsafe { avx512_arrays(seq, &[], batch.arrays()) }
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx512f,avx2,fma")]
unsafe fn avx512_arrays(seq: &Sequence, poses: &[Pose], a: [&mut [f64]; 8]) {
    use crate::simd::{F64x4, F64x8};
    trace_blocks::<Pair<F64x8>, F64x4>(seq, poses, a);
}

/// Rays per block: eight arrays of 384 rays (24 KiB) stay in the first-level cache.
const BLOCK: usize = 384;

#[inline(always)]
fn trace_blocks<W: Lane, H: Lane>(seq: &Sequence, poses: &[Pose], mut a: [&mut [f64]; 8]) {
    let n = a[0].len();
    let mut start = 0;
    while start < n {
        let end = (start + BLOCK).min(n);
        let mut b = a.each_mut().map(|v| &mut v[start..end]);
        for (index, step) in seq.steps.iter().enumerate() {
            let code = 4.0 * (index as f64 + 1.0);
            let pose = poses.get(index).filter(|p| !p.is_identity());
            if let Some(pose) = pose {
                carry(&mut b, |p| pose.to_local_point(p), |d| pose.to_local_direction(d));
            }
            with_kernel_form!(step, surface_loop::<W, H>(step, code, &mut b));
            if let Some(pose) = pose {
                carry(&mut b, |p| pose.to_world_point(p), |d| pose.to_world_direction(d));
            }
        }
        start = end;
    }
}

/// Carries every ray of a block into another frame: points by `point`, directions by `direction`.
fn carry(
    b: &mut [&mut [f64]; 8],
    point: impl Fn(glam::DVec3) -> glam::DVec3,
    direction: impl Fn(glam::DVec3) -> glam::DVec3,
) {
    for i in 0..b[0].len() {
        let p = point(glam::DVec3::new(b[0][i], b[1][i], b[2][i]));
        let d = direction(glam::DVec3::new(b[3][i], b[4][i], b[5][i]));
        [b[0][i], b[1][i], b[2][i], b[3][i], b[4][i], b[5][i]] = [p.x, p.y, p.z, d.x, d.y, d.z];
    }
}

/// One surface for every ray of a block: wide lane vectors `W` first (a [`Pair`] where two dependency
/// chains side by side keep the processor busy), then narrow ones `H`, then the rest one ray at a time.
/// Every build covers the same rays with vectors (all but the last `len % H::WIDTH`), so the fused builds
/// agree with each other bit for bit.
#[inline(always)]
fn surface_loop<W: Lane, H: Lane, const SHAPE: u8, const ACTION: u8>(step: &Step, code: f64, b: &mut [&mut [f64]; 8]) {
    let n = b[0].len();
    // Every array cut to the same length n, so that the loop bound proves each lane index in bounds.
    let b = &mut b.each_mut().map(|a| &mut a[..n]);
    let mut i = 0;
    let kw = StepLanes::<W>::new(step);
    while i + W::WIDTH <= n {
        lanes_at::<W, SHAPE, ACTION>(&kw, step, code, b, i);
        i += W::WIDTH;
    }
    let kh = StepLanes::<H>::new(step);
    while i + H::WIDTH <= n {
        lanes_at::<H, SHAPE, ACTION>(&kh, step, code, b, i);
        i += H::WIDTH;
    }
    let k1 = StepLanes::<f64>::new(step);
    while i < n {
        lanes_at::<f64, SHAPE, ACTION>(&k1, step, code, b, i);
        i += 1;
    }
}

#[inline(always)]
fn lanes_at<V: Lane, const SHAPE: u8, const ACTION: u8>(
    s: &StepLanes<V>,
    step: &Step,
    code: f64,
    b: &mut [&mut [f64]; 8],
    i: usize,
) {
    let w = V::WIDTH;
    let load = |a: &[f64], i: usize| V::load(&a[i..i + w]);
    let ray = [load(b[0], i), load(b[1], i), load(b[2], i), load(b[3], i), load(b[4], i), load(b[5], i)];
    let h = hit3::<V, SHAPE, ACTION>(s, V::splat(step.n_before), ray);
    let (opl, fate) = (load(b[6], i), load(b[7], i));
    let new = [h.x, h.y, h.z, h.k, h.m, h.l];
    let alive = fate.eq(V::splat(0.0));
    let through = h.through();
    let ok = alive & through;
    if V::all(ok) {
        for (a, v) in b.iter_mut().zip(new) {
            v.store(&mut a[i..i + w]);
        }
        (opl + h.path).store(&mut b[6][i..i + w]);
        return;
    }
    let stopped_here = alive & !through;
    if V::MASKED_STORE && V::all(!stopped_here) {
        // Some rays were stopped before, none here (after a rim has cut a bundle, most vectors): the
        // living rays move on, and no fate changes. Only where masked stores are one instruction: with
        // AVX2 the blends of this branch ran slower than the whole fate (skew 164 against 178 million
        // ray-surfaces per second).
        for (a, v) in b.iter_mut().zip(new) {
            v.store_where(ok, &mut a[i..i + w]);
        }
        (opl + h.path).store_where(ok, &mut b[6][i..i + w]);
        return;
    }
    // The old values are read again here rather than kept in registers through the whole surface: an
    // index the compiler cannot follow makes it load them anew instead of spilling them on the usual path.
    let i = std::hint::black_box(i);
    let ray = [load(b[0], i), load(b[1], i), load(b[2], i), load(b[3], i), load(b[4], i), load(b[5], i)];
    let why = h.fate();
    // Blocked rays move to the surface that blocked them (for drawing); others keep their place.
    let moved = ok | (alive & why.eq(V::splat(FATE_BLOCKED)));
    for (j, (a, (v, old))) in b.iter_mut().zip(new.into_iter().zip(ray)).enumerate() {
        let keep = if j < 3 { moved } else { ok };
        V::select(keep, v, old).store(&mut a[i..i + w]);
    }
    V::select(ok, opl + h.path, opl).store(&mut b[6][i..i + w]);
    V::select(stopped_here, V::splat(code) + why, fate).store(&mut b[7][i..i + w]);
}

/// The typed error of a single ray that did not get through.
pub(crate) fn hit3_error(h: &Hit3<f64>, index: usize) -> RayError {
    fate_error(h.fate(), index, h.rho2.sqrt())
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A parallel trace and its spot sums give the same bits on 1, 2 and 3 threads, equal to the serial
    /// trace; rays parallel to the axis on a circle of radius 2 mm through a flat window to a flat screen
    /// keep their circle, whose RMS radius about its centre is its radius (2 mm, analytic).
    #[test]
    fn parallel_trace_is_the_same_on_any_thread_count() {
        let seq = System {
            object_medium: Material::AIR,
            surfaces: vec![
                Surface::refracting(10.0, Shape::Flat, Material::Constant(1.5)).with_semi_aperture(5.0),
                Surface::refracting(14.0, Shape::Flat, Material::AIR).with_semi_aperture(5.0),
                Surface::aperture(30.0, 50.0),
            ],
        }
        .at(550.0)
        .unwrap();
        let n = 70_001;
        let mut start = SkewBatch::with_capacity(n);
        for i in 0..n {
            let phi = std::f64::consts::TAU * i as f64 / n as f64;
            start.push(SkewRay::towards(
                [2.0 * phi.cos(), 2.0 * phi.sin(), 0.0],
                [2.0 * phi.cos(), 2.0 * phi.sin(), 1.0],
            ));
        }
        let mut serial = start.clone();
        trace_skew_batch(&seq, &mut serial);
        let rms = serial.rms_radius_mm().unwrap();
        assert!((rms - 2.0).abs() < 1e-12, "{rms}");
        for threads in 1..=3 {
            let pool = rayon::ThreadPoolBuilder::new().num_threads(threads).build().unwrap();
            let mut par = start.clone();
            pool.install(|| trace_skew_batch_par(&seq, &mut par));
            assert_eq!(par, serial, "{threads} threads");
            assert_eq!(pool.install(|| par.rms_radius_mm()).unwrap().to_bits(), rms.to_bits(), "{threads} threads");
        }
    }
    use crate::material::Material;
    use crate::skew::trace;
    use crate::system::{Shape, Surface, System};

    #[test]
    fn batch_equals_the_single_skew_ray() {
        let seq = System {
            object_medium: Material::AIR,
            surfaces: vec![
                Surface::refracting(10.0, Shape::sphere(40.0), Material::Constant(1.6)).with_semi_aperture(8.0),
                Surface::refracting(15.0, Shape::conic(-60.0, -0.7), Material::AIR).with_semi_aperture(8.0),
                Surface::ideal_lens(30.0, 80.0),
                Surface::mirror(60.0, Shape::sphere(-200.0)),
                Surface::aperture(40.0, 14.0),
            ],
        }
        .at(550.0)
        .unwrap();
        let rays: Vec<SkewRay> = (0..101)
            .map(|i| {
                let a = i as f64 * 0.37;
                SkewRay::towards([0.0, 2.0, 0.0], [9.0 * a.sin() * (i as f64 / 100.0), 9.0 * a.cos(), 10.0])
            })
            .collect();
        let (mut fast, mut portable) = (SkewBatch::with_capacity(101), SkewBatch::with_capacity(101));
        rays.iter().for_each(|r| {
            fast.push(*r);
            portable.push(*r);
        });
        trace_skew_batch(&seq, &mut fast);
        trace_skew_batch_portable(&seq, &mut portable);
        let mut through = 0;
        for (i, r) in rays.iter().enumerate() {
            let single = trace(&seq, *r);
            assert_eq!(portable.outcome(i), single, "ray {i}");
            match (fast.outcome(i), single) {
                (Ok(a), Ok(b)) => {
                    through += 1;
                    for (p, q) in [(a.x_mm, b.x_mm), (a.y_mm, b.y_mm), (a.z_mm, b.z_mm), (a.opl_mm, b.opl_mm)] {
                        assert!((p - q).abs() < 1e-12, "ray {i}");
                    }
                }
                (Err(a), Err(b)) => assert_eq!(std::mem::discriminant(&a), std::mem::discriminant(&b), "ray {i}"),
                (a, b) => panic!("ray {i}: {a:?} vs {b:?}"),
            }
        }
        assert!(through > 5 && through < 101, "{through}");
        // The AVX-512 loop runs the same fused multiply-adds as the AVX2 loop over the same rays in
        // vectors (101 rays: eight-lane pairs, four-lane tails, one single ray): equal bit for bit.
        #[cfg(target_arch = "x86_64")]
        if crate::simd::has_avx512f() {
            let mut wide = SkewBatch::with_capacity(101);
            rays.iter().for_each(|r| wide.push(*r));
            let mut narrow = wide.clone();
            // SAFETY: the processor has just been checked for AVX-512 F, AVX2 and FMA.
            unsafe {
                trace_skew_batch_avx512(&seq, &mut wide);
                trace_skew_batch_avx2(&seq, &mut narrow);
            }
            assert_eq!(wide, narrow);
            assert_eq!(wide, fast);
        }
    }
}
