//! The batched exact meridional trace: many rays through one sequence, structure of arrays, no allocation
//! per ray.
//!
//! The loop runs surface by surface over all rays, branch-free, so the compiler vectorises it. On x86-64
//! processors with AVX2 the same loop is compiled a second time for 4-wide vectors and chosen at run time;
//! what ships runs on any x86-64 or ARM64 computer.

use crate::block::Living;
use crate::simd::{Fused, Lane, Pair};
use crate::system::{Kind, Sequence, Step};
use crate::trace::{FATE_BLOCKED, IDEAL, Ray, RayError, StepLanes, fate_error, hit, ideal_lens_path, with_kernel_form};

/// Many meridional rays, one array per coordinate.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct RayBatch {
    /// Heights, mm.
    pub y_mm: Vec<f64>,
    /// Rail positions, mm.
    pub z_mm: Vec<f64>,
    /// Direction cosines along y.
    pub m: Vec<f64>,
    /// Direction cosines along z.
    pub l: Vec<f64>,
    /// Optical path lengths, mm.
    pub opl_mm: Vec<f64>,
    /// 0 while the ray is alive; otherwise `4 (surface + 1) + why`, stored as f64 so that the loop runs in
    /// one lane width.
    fate: Vec<f64>,
}

impl RayBatch {
    /// An empty batch with room for `n` rays.
    pub fn with_capacity(n: usize) -> RayBatch {
        RayBatch {
            y_mm: Vec::with_capacity(n),
            z_mm: Vec::with_capacity(n),
            m: Vec::with_capacity(n),
            l: Vec::with_capacity(n),
            opl_mm: Vec::with_capacity(n),
            fate: Vec::with_capacity(n),
        }
    }

    /// Adds a ray.
    pub fn push(&mut self, ray: Ray) {
        self.y_mm.push(ray.y_mm);
        self.z_mm.push(ray.z_mm);
        self.m.push(ray.m);
        self.l.push(ray.l);
        self.opl_mm.push(ray.opl_mm);
        self.fate.push(0.0);
    }

    /// Number of rays.
    pub fn len(&self) -> usize {
        self.y_mm.len()
    }

    /// Whether the batch holds no ray.
    pub fn is_empty(&self) -> bool {
        self.y_mm.is_empty()
    }

    /// Ray `i` as it stands (after a trace: after the last surface, or where it stopped).
    pub fn ray(&self, i: usize) -> Ray {
        Ray { y_mm: self.y_mm[i], z_mm: self.z_mm[i], m: self.m[i], l: self.l[i], opl_mm: self.opl_mm[i] }
    }

    /// Ray `i` after the trace, or why it did not get through.
    pub fn outcome(&self, i: usize) -> Result<Ray, RayError> {
        let fate = self.fate[i];
        if fate == 0.0 {
            let r = self.ray(i);
            let finite = r.y_mm.is_finite() && r.z_mm.is_finite() && r.m.is_finite() && r.l.is_finite();
            return if finite { Ok(r) } else { Err(RayError::NonFinite { surface: None }) };
        }
        let code = fate as usize;
        Err(fate_error((code % 4) as f64, code / 4 - 1, self.y_mm[i]))
    }

    /// How many rays got through every surface.
    pub fn survivors(&self) -> usize {
        (0..self.len()).filter(|&i| self.outcome(i).is_ok()).count()
    }
}

/// Traces every ray of `batch` through `seq`, in place. A ray that is stopped keeps its last good values
/// and records where and why; see [`RayBatch::outcome`].
///
/// The widest loop this processor runs is chosen at run time: on x86-64 with AVX-512 F the eight-lane
/// loop, else with AVX2 and FMA the four-lane one (the two agree bit for bit; both may round a fused
/// multiply-add differently from [`crate::trace::trace`], by about 1e-16 relative); elsewhere the portable
/// loop.
pub fn trace_batch(seq: &Sequence, batch: &mut RayBatch) {
    dispatched(seq, batch.arrays());
}

/// [`trace_batch`] on every core: the batch is cut into pieces of a fixed number of whole blocks, which
/// rayon traces in any order on any number of threads. Each ray is traced by the same loop over the same
/// block as in [`trace_batch`], so the result is the same bit for bit whatever the thread count.
pub fn trace_batch_par(seq: &Sequence, batch: &mut RayBatch) {
    use rayon::prelude::*;
    let [y, z, m, l, opl, fate] = batch.arrays();
    let pieces: Vec<[&mut [f64]; 6]> = y
        .chunks_mut(PIECE)
        .zip(z.chunks_mut(PIECE))
        .zip(m.chunks_mut(PIECE))
        .zip(l.chunks_mut(PIECE))
        .zip(opl.chunks_mut(PIECE))
        .zip(fate.chunks_mut(PIECE))
        .map(|(((((y, z), m), l), opl), fate)| [y, z, m, l, opl, fate])
        .collect();
    pieces.into_par_iter().for_each(|a| dispatched(seq, a));
}

/// Rays per piece of a parallel trace: whole blocks, so that every block is the one of the serial trace.
const PIECE: usize = 32 * BLOCK;

/// The widest loop the processor runs, over one batch's arrays.
fn dispatched(seq: &Sequence, a: [&mut [f64]; 6]) {
    #[cfg(target_arch = "x86_64")]
    {
        if crate::simd::has_avx512f() {
            // SAFETY: the processor has just been checked for AVX-512 F, AVX2 and FMA.
            unsafe { avx512_arrays(seq, a) };
            return;
        }
        if crate::simd::has_avx2_fma() {
            // SAFETY: the processor has just been checked for AVX2 and FMA.
            unsafe { avx2_arrays(seq, a) };
            return;
        }
    }
    portable_arrays(seq, a);
}

impl RayBatch {
    /// The six arrays the loops read and write: y, z, m, l, optical path, fate.
    fn arrays(&mut self) -> [&mut [f64]; 6] {
        [&mut self.y_mm, &mut self.z_mm, &mut self.m, &mut self.l, &mut self.opl_mm, &mut self.fate]
    }
}

/// The portable batch loop: pairs of `wide::f64x2` lanes (SSE2 on x86-64, NEON on 64-bit ARM). Its arithmetic is that of the single-ray trace, so the two agree bit for bit.
pub fn trace_batch_portable(seq: &Sequence, batch: &mut RayBatch) {
    portable_arrays(seq, batch.arrays());
}

fn portable_arrays(seq: &Sequence, a: [&mut [f64]; 6]) {
    trace_blocks::<Pair<wide::f64x2>, wide::f64x2, f64>(seq, a);
}

/// The batch loop in four AVX lanes with fused multiply-add, two vectors side by side.
///
/// # Safety
/// The processor must support AVX2 and FMA.
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2,fma")]
pub unsafe fn trace_batch_avx2(seq: &Sequence, batch: &mut RayBatch) {
    // SAFETY: the caller vouches for the processor.
    unsafe { avx2_arrays(seq, batch.arrays()) }
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2,fma")]
unsafe fn avx2_arrays(seq: &Sequence, a: [&mut [f64]; 6]) {
    use crate::simd::F64x4;
    trace_blocks::<Pair<F64x4>, F64x4, Fused>(seq, a);
}

/// The batch loop in eight AVX-512 lanes with fused multiply-add (four AVX lanes for the tail of a
/// block): the same fused operations as [`trace_batch_avx2`], so the two agree bit for bit.
///
/// # Safety
/// The processor must support AVX-512 F, AVX2 and FMA.
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx512f,avx2,fma")]
pub unsafe fn trace_batch_avx512(seq: &Sequence, batch: &mut RayBatch) {
    // SAFETY: the caller vouches for the processor.
    unsafe { avx512_arrays(seq, batch.arrays()) }
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx512f,avx2,fma")]
unsafe fn avx512_arrays(seq: &Sequence, a: [&mut [f64]; 6]) {
    use crate::simd::{F64x4, F64x8};
    trace_blocks::<Pair<F64x8>, F64x4, Fused>(seq, a);
}

/// Rays per block: a block's six arrays (24 KiB) stay in the first-level cache while it crosses every
/// surface, so the loop is bound by arithmetic rather than memory.
const BLOCK: usize = 512;

/// Block by block, surface by surface over each block's living rays: the rays a surface stops are moved
/// behind the living after it (see [`crate::block`]), and a block whose rays have all stopped is done.
#[inline(always)]
fn trace_blocks<W: Lane, H: Lane, S: Lane>(seq: &Sequence, mut a: [&mut [f64]; 6]) {
    let n = a[0].len();
    let mut living = Living::<BLOCK>::new();
    let mut start = 0;
    while start < n {
        let end = (start + BLOCK).min(n);
        let mut block = a.each_mut().map(|v| &mut v[start..end]);
        living.start(&mut block);
        for (index, step) in seq.steps.iter().enumerate() {
            if living.live() == 0 {
                break;
            }
            let code = 4.0 * (index as f64 + 1.0);
            let [y, z, m, l, opl, fate] = living.living(&mut block);
            let mut lanes = Block { y, z, m, l, opl, fate };
            if with_kernel_form!(step, surface_loop::<W, H, S>(step, code, &mut lanes)) {
                living.compact(&mut block);
            }
        }
        living.finish(&mut block);
        start = end;
    }
}

/// The living rays of a block, column by column.
struct Block<'a> {
    y: &'a mut [f64],
    z: &'a mut [f64],
    m: &'a mut [f64],
    l: &'a mut [f64],
    opl: &'a mut [f64],
    fate: &'a mut [f64],
}

/// One surface for every living ray of a block: wide lane vectors `W` first (a [`Pair`] where two
/// dependency chains side by side keep the processor busy), then narrow ones `H`, then the rest one ray
/// at a time in `S`, which rounds as one lane of `H` does. Returns whether the surface stopped a ray.
#[inline(always)]
fn surface_loop<W: Lane, H: Lane, S: Lane, const SHAPE: u8, const ACTION: u8>(
    step: &Step,
    code: f64,
    b: &mut Block<'_>,
) -> bool {
    let n = b.y.len();
    // Every array cut to the same length n, so that the loop bound proves each lane index in bounds.
    let b = &mut Block {
        y: &mut b.y[..n],
        z: &mut b.z[..n],
        m: &mut b.m[..n],
        l: &mut b.l[..n],
        opl: &mut b.opl[..n],
        fate: &mut b.fate[..n],
    };
    let mut stopped = false;
    let mut i = 0;
    let kw = StepLanes::<W>::new(step);
    while i + W::WIDTH <= n {
        stopped |= lanes_at::<W, SHAPE, ACTION>(&kw, step, code, b, i);
        i += W::WIDTH;
    }
    let kh = StepLanes::<H>::new(step);
    while i + H::WIDTH <= n {
        stopped |= lanes_at::<H, SHAPE, ACTION>(&kh, step, code, b, i);
        i += H::WIDTH;
    }
    let k1 = StepLanes::<S>::new(step);
    while i < n {
        stopped |= lanes_at::<S, SHAPE, ACTION>(&k1, step, code, b, i);
        i += 1;
    }
    stopped
}

/// One lane vector of living rays through one surface; returns whether it stopped one of them.
#[inline(always)]
fn lanes_at<V: Lane, const SHAPE: u8, const ACTION: u8>(
    k: &StepLanes<V>,
    step: &Step,
    code: f64,
    b: &mut Block<'_>,
    i: usize,
) -> bool {
    let w = V::WIDTH;
    let (y, z, m, l) =
        (V::load(&b.y[i..i + w]), V::load(&b.z[i..i + w]), V::load(&b.m[i..i + w]), V::load(&b.l[i..i + w]));
    let h = hit::<V, SHAPE, ACTION>(k, y, z, m, l);
    let opl = V::load(&b.opl[i..i + w]);
    let through = h.through();
    let n_before = V::splat(step.n_before);
    let mut path = n_before * h.t;
    if ACTION == IDEAL {
        path = path + ideal_lens_path(n_before, k_focal(step), h.y);
    }
    if V::all(through) {
        // The usual case: every ray of the vector gets through.
        h.y.store(&mut b.y[i..i + w]);
        h.z.store(&mut b.z[i..i + w]);
        h.m.store(&mut b.m[i..i + w]);
        h.l.store(&mut b.l[i..i + w]);
        (opl + path).store(&mut b.opl[i..i + w]);
        return false;
    }
    // The old values are read again here rather than kept in registers through the whole surface: an
    // index the compiler cannot follow makes it load them anew instead of spilling them on the usual path.
    let i = std::hint::black_box(i);
    let (y, z, m, l) =
        (V::load(&b.y[i..i + w]), V::load(&b.z[i..i + w]), V::load(&b.m[i..i + w]), V::load(&b.l[i..i + w]));
    let why = h.fate();
    // Blocked rays move to the surface that blocked them (for drawing); others keep their place.
    let moved = through | why.eq(V::splat(FATE_BLOCKED));
    V::select(moved, h.y, y).store(&mut b.y[i..i + w]);
    V::select(moved, h.z, z).store(&mut b.z[i..i + w]);
    V::select(through, h.m, m).store(&mut b.m[i..i + w]);
    V::select(through, h.l, l).store(&mut b.l[i..i + w]);
    V::select(through, opl + path, opl).store(&mut b.opl[i..i + w]);
    V::only(!through, V::splat(code) + why).store(&mut b.fate[i..i + w]);
    true
}

#[inline(always)]
fn k_focal<V: Lane>(step: &Step) -> V {
    match step.kind {
        Kind::Ideal(f) => V::splat(f),
        _ => V::splat(1.0),
    }
}

#[cfg(test)]
mod tests {
    /// A ball lens: inside the ball the first root of the back surface lies on its far sheet, so the loop's
    /// second-root path runs, and must agree with the single-ray trace.
    #[test]
    fn ball_lens_takes_the_second_root_in_the_batch_too() {
        use super::*;
        use crate::material::Material;
        use crate::system::{Shape, Surface, System};
        let seq = System {
            object_medium: Material::AIR,
            surfaces: vec![
                Surface::refracting(10.0, Shape::sphere(5.0), Material::Constant(1.5)),
                Surface::refracting(20.0, Shape::sphere(-5.0), Material::AIR),
            ],
        }
        .at(550.0)
        .unwrap();
        let rays: Vec<Ray> = (0..37).map(|i| Ray::at_angle(-3.6 + 0.2 * i as f64, 0.0, 0.0)).collect();
        let mut batch = RayBatch::with_capacity(rays.len());
        rays.iter().for_each(|r| batch.push(*r));
        trace_batch_portable(&seq, &mut batch);
        for (i, r) in rays.iter().enumerate() {
            let single = crate::trace::trace(&seq, *r);
            assert!(single.is_ok(), "ray {i}");
            assert_eq!(batch.outcome(i), single, "ray {i}");
        }
        // Ray 17 (0.2 mm high) focuses near the paraxial back focus: EFL = nD/(4(n − 1)) = 7.5 mm from the
        // centre at 15 mm, i.e. 22.5 mm (Hecht); its spherical aberration is below 0.01 mm.
        let z = batch.outcome(17).unwrap().axis_crossing_mm().unwrap();
        assert!((z - 22.5).abs() < 0.01, "{z}");
    }

    use super::*;
    use crate::material::Material;
    use crate::system::{Shape, Surface, System};
    use crate::trace::trace;

    /// The parallel trace gives the serial trace's bits on 1, 2 and 3 threads (70 001 rays: several
    /// pieces, the last one ragged), through a sphere, a conicoid and an aperture that blocks some rays.
    #[test]
    fn parallel_trace_is_the_same_on_any_thread_count() {
        let seq = System {
            object_medium: Material::AIR,
            surfaces: vec![
                Surface::refracting(10.0, Shape::sphere(40.0), Material::Constant(1.6)).with_semi_aperture(8.0),
                Surface::refracting(15.0, Shape::conic(-60.0, -0.7), Material::AIR).with_semi_aperture(8.0),
                Surface::aperture(40.0, 3.0),
            ],
        }
        .at(550.0)
        .unwrap();
        let n = 70_001;
        let mut start = RayBatch::with_capacity(n);
        (0..n).for_each(|i| start.push(Ray::at_angle(-9.0 + 18.0 * i as f64 / n as f64, 0.0, 0.01)));
        let mut serial = start.clone();
        trace_batch(&seq, &mut serial);
        assert!(serial.survivors() > 0 && serial.survivors() < n);
        for threads in 1..=3 {
            let pool = rayon::ThreadPoolBuilder::new().num_threads(threads).build().unwrap();
            let mut par = start.clone();
            pool.install(|| trace_batch_par(&seq, &mut par));
            assert_eq!(par, serial, "{threads} threads");
        }
    }

    /// 1,301 rays: three blocks, the last ragged, in each of which the rims stop rays at several surfaces,
    /// so that the living rays are moved about and must all come back to their places.
    #[test]
    fn batch_equals_the_single_ray_trace() {
        let system = System {
            object_medium: Material::AIR,
            surfaces: vec![
                Surface::refracting(10.0, Shape::sphere(40.0), Material::Constant(1.6)).with_semi_aperture(8.0),
                Surface::refracting(15.0, Shape::conic(-60.0, -0.7), Material::AIR).with_semi_aperture(8.0),
                Surface::ideal_lens(30.0, 80.0),
                Surface::aperture(40.0, 1.0),
            ],
        };
        let seq = system.at(550.0).unwrap();
        let n = 1301;
        let mut batch = RayBatch::with_capacity(n);
        let rays: Vec<Ray> =
            (0..n).map(|i| Ray::at_angle(9.0 * ((i as f64 * 0.618_034).fract() * 2.0 - 1.0), 0.0, 0.01)).collect();
        for r in &rays {
            batch.push(*r);
        }
        trace_batch(&seq, &mut batch);
        let mut portable = RayBatch::with_capacity(n);
        for r in &rays {
            portable.push(*r);
        }
        trace_batch_portable(&seq, &mut portable);
        for (i, r) in rays.iter().enumerate() {
            let single = trace(&seq, *r);
            // The portable loop runs the single-ray arithmetic, so it agrees bit for bit.
            assert_eq!(portable.outcome(i), single, "ray {i}");
            // The dispatched loop may fuse multiply-adds: the same fates, intercepts within 1e-12 mm.
            match (batch.outcome(i), single) {
                (Ok(a), Ok(b)) => {
                    assert!((a.y_mm - b.y_mm).abs() < 1e-12 && (a.z_mm - b.z_mm).abs() < 1e-12, "ray {i}");
                    assert!((a.m - b.m).abs() < 1e-14 && (a.opl_mm - b.opl_mm).abs() < 1e-12, "ray {i}");
                }
                (Err(a), Err(b)) => assert_eq!(std::mem::discriminant(&a), std::mem::discriminant(&b), "ray {i}"),
                (a, b) => panic!("ray {i}: {a:?} vs {b:?}"),
            }
        }
        let stopped_at = |b: &RayBatch, surface: usize| {
            (0..n)
                .filter(|&i| matches!(b.outcome(i), Err(RayError::Blocked { surface: s, .. }) if s == surface))
                .count()
        };
        // 146 rays stop at the first rim and 597 at the last surface, mixed with the living in every block.
        assert!(stopped_at(&batch, 0) > 100 && stopped_at(&batch, 3) > 500);
        assert!(batch.survivors() > 500);
    }

    /// The AVX-512 loop runs the same fused multiply-adds as the AVX2 loop, and its one-ray tail rounds as a
    /// lane does, so the two agree bit for bit whichever rays the rims leave alive in each block to fill the
    /// eight-lane pairs, four-lane tails and single rays (1,301 rays in three blocks).
    #[cfg(target_arch = "x86_64")]
    #[test]
    fn avx512_equals_avx2_bit_for_bit() {
        if !crate::simd::has_avx512f() {
            return;
        }
        let system = System {
            object_medium: Material::AIR,
            surfaces: vec![
                Surface::refracting(10.0, Shape::sphere(40.0), Material::Constant(1.6)).with_semi_aperture(8.0),
                Surface::refracting(15.0, Shape::conic(-60.0, -0.7), Material::AIR).with_semi_aperture(8.0),
                Surface::ideal_lens(30.0, 80.0),
                Surface::mirror(60.0, Shape::sphere(-200.0)),
                Surface::aperture(40.0, 3.0),
            ],
        };
        let seq = system.at(550.0).unwrap();
        let n = 1301;
        let mut wide = RayBatch::with_capacity(n);
        (0..n).for_each(|i| wide.push(Ray::at_angle(9.0 * ((i as f64 * 0.618_034).fract() * 2.0 - 1.0), 0.0, 0.01)));
        let mut narrow = wide.clone();
        // SAFETY: the processor has just been checked for AVX-512 F, AVX2 and FMA.
        unsafe {
            trace_batch_avx512(&seq, &mut wide);
            trace_batch_avx2(&seq, &mut narrow);
        }
        assert!(wide.survivors() > 100 && wide.survivors() < n - 100);
        assert_eq!(wide, narrow);
    }
}
