//! The batched exact meridional trace: many rays through one sequence, structure of arrays, no allocation
//! per ray.
//!
//! The loop runs surface by surface over all rays, branch-free, so the compiler vectorises it. On x86-64
//! processors with AVX2 the same loop is compiled a second time for 4-wide vectors and chosen at run time;
//! what ships runs on any x86-64 or ARM64 computer.

use crate::system::{Kind, Sequence, Step};
use crate::trace::{FATE_BLOCKED, FATE_MISSED, FATE_TIR, Ray, RayError, hit};

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
    /// 0 while the ray is alive; otherwise `(surface + 1) << 2 | why`.
    fate: Vec<u64>,
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
        self.fate.push(0);
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
        if fate == 0 {
            let r = self.ray(i);
            let finite = r.y_mm.is_finite() && r.z_mm.is_finite() && r.m.is_finite() && r.l.is_finite();
            return if finite { Ok(r) } else { Err(RayError::NonFinite { surface: None }) };
        }
        let surface = (fate >> 2) as usize - 1;
        Err(match fate & 3 {
            FATE_MISSED => RayError::Missed { surface },
            FATE_BLOCKED => RayError::Blocked { surface, height_mm: self.y_mm[i] },
            FATE_TIR => RayError::TotalInternalReflection { surface },
            _ => unreachable!("fate codes are 1 to 3"),
        })
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

#[inline(always)]
fn trace_batch_body(seq: &Sequence, batch: &mut RayBatch) {
    for (index, step) in seq.steps.iter().enumerate() {
        let code = ((index as u64) + 1) << 2;
        if step.is_spherical() {
            surface_loop::<false>(step, code, batch);
        } else {
            surface_loop::<true>(step, code, batch);
        }
    }
}

#[inline(always)]
fn surface_loop<const CONIC: bool>(step: &Step, code: u64, b: &mut RayBatch) {
    let n = b.y_mm.len();
    let (y, z, m, l, opl, fate) = (
        &mut b.y_mm[..n],
        &mut b.z_mm[..n],
        &mut b.m[..n],
        &mut b.l[..n],
        &mut b.opl_mm[..n],
        &mut b.fate[..n],
    );
    let n_before = step.n_before;
    let ideal = match step.kind {
        Kind::Ideal(f) => Some(f),
        _ => None,
    };
    for i in 0..n {
        let h = hit::<CONIC>(step, y[i], z[i], m[i], l[i]);
        let alive = fate[i] == 0;
        let ok = alive & (h.fate == 0);
        let mut extra = 0.0;
        if let Some(f) = ideal {
            extra = -n_before * ((h.y * h.y + f * f).sqrt() - f.abs()) * f.signum();
        }
        // Blocked rays move to the surface that blocked them (for drawing); others keep their place.
        let moved = ok | (alive & (h.fate == FATE_BLOCKED));
        y[i] = if moved { h.y } else { y[i] };
        z[i] = if moved { h.z } else { z[i] };
        m[i] = if ok { h.m } else { m[i] };
        l[i] = if ok { h.l } else { l[i] };
        opl[i] = if ok { opl[i] + n_before * h.t + extra } else { opl[i] };
        fate[i] = if alive & (h.fate != 0) { code | h.fate } else { fate[i] };
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
