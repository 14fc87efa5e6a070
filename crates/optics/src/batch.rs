//! The batched exact meridional trace: many rays through one sequence, structure of arrays, no allocation
//! per ray.
//!
//! The loop runs surface by surface over all rays, branch-free, so the compiler vectorises it. On x86-64
//! processors with AVX2 the same loop is compiled a second time for 4-wide vectors and chosen at run time;
//! what ships runs on any x86-64 or ARM64 computer.

use crate::system::{Kind, Sequence, Step};
use crate::trace::{FATE_BLOCKED, IDEAL, REFLECT, REFRACT, Ray, RayError, fate_error, hit, ideal_lens_path};

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
pub fn trace_batch(seq: &Sequence, batch: &mut RayBatch) {
    #[cfg(target_arch = "x86_64")]
    {
        if std::arch::is_x86_feature_detected!("avx512f") {
            // SAFETY: the processor has just been checked for AVX-512F.
            unsafe { trace_batch_avx512(seq, batch) };
            return;
        }
        if std::arch::is_x86_feature_detected!("avx2") {
            // SAFETY: the processor has just been checked for AVX2.
            unsafe { trace_batch_avx2(seq, batch) };
            return;
        }
    }
    trace_batch_portable(seq, batch);
}

/// The portable build of the batch loop (SSE2 on x86-64, NEON on ARM64).
pub fn trace_batch_portable(seq: &Sequence, batch: &mut RayBatch) {
    trace_batch_body(seq, batch);
}

/// The batch loop compiled for AVX2.
///
/// # Safety
/// The processor must support AVX2.
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2")]
pub unsafe fn trace_batch_avx2(seq: &Sequence, batch: &mut RayBatch) {
    trace_batch_body(seq, batch);
}

/// The batch loop compiled for AVX-512F (8 lanes).
///
/// # Safety
/// The processor must support AVX-512F.
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx512f")]
pub unsafe fn trace_batch_avx512(seq: &Sequence, batch: &mut RayBatch) {
    trace_batch_body(seq, batch);
}

/// Rays per block: a block's six arrays (24 KiB) stay in the first-level cache while it crosses every
/// surface, so the loop is bound by arithmetic rather than memory.
const BLOCK: usize = 512;

#[inline(always)]
fn trace_batch_body(seq: &Sequence, batch: &mut RayBatch) {
    let n = batch.len();
    let mut start = 0;
    while start < n {
        let end = (start + BLOCK).min(n);
        let mut lanes = Lanes {
            y: &mut batch.y_mm[start..end],
            z: &mut batch.z_mm[start..end],
            m: &mut batch.m[start..end],
            l: &mut batch.l[start..end],
            opl: &mut batch.opl_mm[start..end],
            fate: &mut batch.fate[start..end],
        };
        for (index, step) in seq.steps.iter().enumerate() {
            let code = 4.0 * (index as f64 + 1.0);
            match (step.is_spherical(), step.kind) {
                (true, Kind::Refract) => surface_loop::<false, REFRACT>(step, 0.0, code, &mut lanes),
                (false, Kind::Refract) => surface_loop::<true, REFRACT>(step, 0.0, code, &mut lanes),
                (true, Kind::Reflect) => surface_loop::<false, REFLECT>(step, 0.0, code, &mut lanes),
                (false, Kind::Reflect) => surface_loop::<true, REFLECT>(step, 0.0, code, &mut lanes),
                (_, Kind::Ideal(f)) => surface_loop::<false, IDEAL>(step, f, code, &mut lanes),
            }
        }
        start = end;
    }
}

/// One block of a batch, borrowed array by array.
struct Lanes<'a> {
    y: &'a mut [f64],
    z: &'a mut [f64],
    m: &'a mut [f64],
    l: &'a mut [f64],
    opl: &'a mut [f64],
    fate: &'a mut [f64],
}

#[inline(always)]
fn surface_loop<const CONIC: bool, const ACTION: u8>(step: &Step, focal_mm: f64, code: f64, b: &mut Lanes<'_>) {
    let n = b.y.len();
    let (y, z, m, l, opl, fate) = (&mut b.y[..n], &mut b.z[..n], &mut b.m[..n], &mut b.l[..n], &mut b.opl[..n], &mut b.fate[..n]);
    let n_before = step.n_before;
    for i in 0..n {
        let h = hit::<CONIC, ACTION>(step, focal_mm, y[i], z[i], m[i], l[i]);
        let alive = fate[i] == 0.0;
        let ok = alive & (h.fate == 0.0);
        let extra = if ACTION == IDEAL { ideal_lens_path(n_before, focal_mm, h.y) } else { 0.0 };
        // Blocked rays move to the surface that blocked them (for drawing); others keep their place.
        let moved = ok | (alive & (h.fate == FATE_BLOCKED));
        y[i] = if moved { h.y } else { y[i] };
        z[i] = if moved { h.z } else { z[i] };
        m[i] = if ok { h.m } else { m[i] };
        l[i] = if ok { h.l } else { l[i] };
        opl[i] = if ok { opl[i] + n_before * h.t + extra } else { opl[i] };
        fate[i] = if alive & (h.fate != 0.0) { code + h.fate } else { fate[i] };
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::material::Material;
    use crate::system::{Shape, Surface, System};
    use crate::trace::trace;

    #[test]
    fn batch_equals_the_single_ray_trace_bit_for_bit() {
        let system = System {
            object_medium: Material::AIR,
            surfaces: vec![
                Surface::refracting(10.0, Shape::sphere(40.0), Material::Constant(1.6)).with_semi_aperture(8.0),
                Surface::refracting(15.0, Shape::conic(-60.0, -0.7), Material::AIR).with_semi_aperture(8.0),
                Surface::ideal_lens(30.0, 80.0),
                Surface::aperture(40.0, 3.0),
            ],
        };
        let seq = system.at(550.0).unwrap();
        let mut batch = RayBatch::with_capacity(64);
        let rays: Vec<Ray> = (0..64).map(|i| Ray::at_angle(-9.0 + 18.0 * i as f64 / 63.0, 0.0, 0.01)).collect();
        for r in &rays {
            batch.push(*r);
        }
        trace_batch(&seq, &mut batch);
        let mut portable = RayBatch::with_capacity(64);
        for r in &rays {
            portable.push(*r);
        }
        trace_batch_portable(&seq, &mut portable);
        for (i, r) in rays.iter().enumerate() {
            let single = trace(&seq, *r);
            assert_eq!(batch.outcome(i), single, "ray {i}");
            assert_eq!(portable.outcome(i), single, "ray {i}");
        }
        assert!(batch.survivors() > 0 && batch.survivors() < 64);
    }
}
