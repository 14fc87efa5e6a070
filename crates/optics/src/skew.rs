//! The exact skew-ray trace: full 3-D rays through the same rotationally symmetric systems as the
//! meridional trace, by the same stable intersection and vector Snell's law.
//!
//! Coordinates: x horizontal (out of the rail's drawing plane), y up, z along the rail. A meridional ray
//! (x = 0, no x direction) traced here agrees with [`crate::trace`] to rounding.

use crate::pose::Pose;
use crate::skew_batch::{hit3_any, hit3_error};
use crate::system::{Sequence, Step};
use crate::trace::RayError;
use glam::DVec3;

/// A real ray in 3-D: a point, a unit direction and the optical path travelled so far.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SkewRay {
    /// Horizontal offset from the axis, mm.
    pub x_mm: f64,
    /// Height above the axis, mm.
    pub y_mm: f64,
    /// Rail position, mm.
    pub z_mm: f64,
    /// Direction cosine along x.
    pub k: f64,
    /// Direction cosine along y.
    pub m: f64,
    /// Direction cosine along z.
    pub l: f64,
    /// Optical path length from the ray's start, mm.
    pub opl_mm: f64,
}

impl SkewRay {
    /// A ray from `from` (x, y, z) towards `to` (x, y, z).
    pub fn towards(from: [f64; 3], to: [f64; 3]) -> SkewRay {
        let d = [to[0] - from[0], to[1] - from[1], to[2] - from[2]];
        let n = (d[0] * d[0] + d[1] * d[1] + d[2] * d[2]).sqrt();
        SkewRay { x_mm: from[0], y_mm: from[1], z_mm: from[2], k: d[0] / n, m: d[1] / n, l: d[2] / n, opl_mm: 0.0 }
    }

    /// Where the ray (or its straight extension) crosses the plane `z_mm`: (x, y).
    pub fn at_plane(&self, z_mm: f64) -> (f64, f64) {
        let t = (z_mm - self.z_mm) / self.l;
        (self.x_mm + t * self.k, self.y_mm + t * self.m)
    }

    fn is_finite(&self) -> bool {
        [self.x_mm, self.y_mm, self.z_mm, self.k, self.m, self.l].iter().all(|v| v.is_finite())
    }
}

/// One skew ray through one surface, by the kernel the batched skew trace runs
/// ([`crate::skew_batch`]): the root choice, aperture check and refraction follow the meridional kernel
/// ([`crate::trace`]), with t = f / (−b + sgn(−b)√(b² − af)) for the conicoid
/// c(x² + y²) − 2s + c(1+k)s² = 0 and the other root d/a when the first lands on the far sheet.
pub fn through_step(step: &Step, index: usize, ray: &SkewRay, check_aperture: bool) -> Result<SkewRay, RayError> {
    let mut s = *step;
    if !check_aperture {
        s.semi_aperture_mm = f64::INFINITY;
    }
    let h = hit3_any(&s, [ray.x_mm, ray.y_mm, ray.z_mm, ray.k, ray.m, ray.l]);
    if !h.through() {
        return Err(hit3_error(&h, index));
    }
    let out = SkewRay { x_mm: h.x, y_mm: h.y, z_mm: h.z, k: h.k, m: h.m, l: h.l, opl_mm: ray.opl_mm + h.path };
    if !out.is_finite() {
        return Err(RayError::NonFinite { surface: Some(index) });
    }
    Ok(out)
}

/// Traces a skew ray through every surface; returns the ray after the last one.
pub fn trace(seq: &Sequence, ray: SkewRay) -> Result<SkewRay, RayError> {
    trace_with(seq, ray, true)
}

/// Traces a skew ray through every surface, checking the clear apertures only when `check_apertures`
/// (without, a vignetted chief ray can still serve as a reference).
pub fn trace_with(seq: &Sequence, mut ray: SkewRay, check_apertures: bool) -> Result<SkewRay, RayError> {
    if !ray.is_finite() {
        return Err(RayError::NonFinite { surface: None });
    }
    for (i, step) in seq.steps.iter().enumerate() {
        ray = through_step(step, i, &ray, check_apertures)?;
    }
    Ok(ray)
}

/// How far inside every clear aperture a skew ray passes: the least (a² − ρ²)/a² over the surfaces with
/// an aperture a, with ρ the ray's distance from the axis there, traced with the apertures not checked. It
/// is at least 0 exactly when [`trace`] lets the ray through (the same ρ² by the same kernel, and
/// a² − ρ² ≥ 0 exactly when ρ² ≤ a² in floating point); negative by how far it is blocked; −1 when the
/// ray misses a surface, is totally reflected or stops being finite. A continuous margin where rays pass
/// or are clipped, so edge searches can interpolate on it.
pub fn clearance(seq: &Sequence, mut ray: SkewRay) -> f64 {
    if !ray.is_finite() {
        return -1.0;
    }
    let mut least = f64::INFINITY;
    for step in &seq.steps {
        let mut open = *step;
        open.semi_aperture_mm = f64::INFINITY;
        let h = hit3_any(&open, [ray.x_mm, ray.y_mm, ray.z_mm, ray.k, ray.m, ray.l]);
        if !h.through() {
            return -1.0;
        }
        let a2 = step.semi_aperture_mm * step.semi_aperture_mm;
        if a2.is_finite() {
            least = least.min((a2 - h.rho2) / a2);
        }
        ray = SkewRay { x_mm: h.x, y_mm: h.y, z_mm: h.z, k: h.k, m: h.m, l: h.l, opl_mm: ray.opl_mm + h.path };
        if !ray.is_finite() {
            return -1.0;
        }
    }
    if least.is_nan() { -1.0 } else { least.min(1.0) }
}

/// Traces a skew ray through every surface, each surface `i` placed by `poses[i]` (a surface beyond the
/// end of `poses` sits where the centred trace puts it). The ray is carried into a posed surface's local
/// frame, meets the surface there and is carried back; an identity pose is skipped, so with no decentre
/// or tilt this is [`trace_with`] bit for bit.
pub fn trace_posed(
    seq: &Sequence,
    poses: &[Pose],
    mut ray: SkewRay,
    check_apertures: bool,
) -> Result<SkewRay, RayError> {
    if !ray.is_finite() {
        return Err(RayError::NonFinite { surface: None });
    }
    for (i, step) in seq.steps.iter().enumerate() {
        ray = match poses.get(i).filter(|p| !p.is_identity()) {
            None => through_step(step, i, &ray, check_apertures)?,
            Some(pose) => pose.ray_to_world(&through_step(step, i, &pose.ray_to_local(&ray), check_apertures)?),
        };
    }
    Ok(ray)
}

impl Pose {
    /// A rail-frame ray in this pose's local frame (the optical path is kept: the motion is rigid).
    pub fn ray_to_local(&self, ray: &SkewRay) -> SkewRay {
        let p = self.to_local_point(DVec3::new(ray.x_mm, ray.y_mm, ray.z_mm));
        let d = self.to_local_direction(DVec3::new(ray.k, ray.m, ray.l));
        SkewRay { x_mm: p.x, y_mm: p.y, z_mm: p.z, k: d.x, m: d.y, l: d.z, opl_mm: ray.opl_mm }
    }

    /// A local ray in the rail frame.
    pub fn ray_to_world(&self, ray: &SkewRay) -> SkewRay {
        let p = self.to_world_point(DVec3::new(ray.x_mm, ray.y_mm, ray.z_mm));
        let d = self.to_world_direction(DVec3::new(ray.k, ray.m, ray.l));
        SkewRay { x_mm: p.x, y_mm: p.y, z_mm: p.z, k: d.x, m: d.y, l: d.z, opl_mm: ray.opl_mm }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::material::Material;
    use crate::system::{Shape, Surface, System};
    use crate::trace::{Ray, trace as trace_meridional};

    fn lens() -> Sequence {
        System {
            object_medium: Material::AIR,
            surfaces: vec![
                Surface::refracting(20.0, Shape::sphere(30.0), Material::Constant(1.62)).with_semi_aperture(10.0),
                Surface::refracting(26.0, Shape::conic(-45.0, -2.3), Material::Constant(1.5)).with_semi_aperture(10.0),
                Surface::refracting(30.0, Shape::sphere(-80.0), Material::AIR).with_semi_aperture(10.0),
                Surface::ideal_lens(60.0, 50.0),
                Surface::mirror(120.0, Shape::conic(-300.0, -1.0)),
            ],
        }
        .at(587.5618)
        .unwrap()
    }

    /// A ray's clearance is at least 0 exactly when the trace with apertures lets it through, and it
    /// varies continuously across the rim: over a fan of skew rays sweeping past the 10 mm apertures.
    #[test]
    fn clearance_agrees_with_the_trace_and_is_a_margin() {
        let seq = lens();
        let mut last: Option<f64> = None;
        for j in 0..=400 {
            let y = -14.0 + 28.0 * f64::from(j) / 400.0;
            let ray = SkewRay::towards([3.0, 0.0, 0.0], [1.0, y, 20.0]);
            let c = clearance(&seq, ray);
            assert_eq!(c >= 0.0, trace(&seq, ray).is_ok(), "y {y}: clearance {c}");
            if let (Some(prev), true) = (last, c > -0.9) {
                // Neighbouring rays 0.07 mm apart change (a² − ρ²)/a² by well under 0.1.
                assert!((c - prev).abs() < 0.1, "y {y}: {prev} → {c}");
            }
            last = (c > -0.9).then_some(c);
        }
    }

    /// The 3-D trace of a meridional ray equals the meridional trace (issue 5: to 1e-12 mm).
    #[test]
    fn meridional_rays_agree_with_the_meridional_trace() {
        let seq = lens();
        for (y, angle) in [(0.5, 0.0), (-3.0, 0.05), (6.0, -0.08), (0.0, 0.1)] {
            let r2 = Ray::at_angle(y, 0.0, angle);
            let r3 = SkewRay { x_mm: 0.0, y_mm: y, z_mm: 0.0, k: 0.0, m: angle.sin(), l: angle.cos(), opl_mm: 0.0 };
            let a = trace_meridional(&seq, r2).unwrap();
            let b = trace(&seq, r3).unwrap();
            assert!((a.y_mm - b.y_mm).abs() < 1e-12 && (a.z_mm - b.z_mm).abs() < 1e-12, "{y} {angle}");
            assert!((a.m - b.m).abs() < 1e-12 && (a.l - b.l).abs() < 1e-12 && b.x_mm == 0.0);
            assert!((a.opl_mm - b.opl_mm).abs() < 1e-12);
        }
    }

    /// Rotational symmetry: a ray and the same ray turned about the axis by any angle stay turned.
    #[test]
    fn turning_a_ray_about_the_axis_turns_its_path() {
        let seq = lens();
        let base = trace(&seq, SkewRay::towards([0.0, 4.0, 0.0], [0.0, 2.0, 20.0])).unwrap();
        for phi in [0.3_f64, 1.2, 2.9] {
            let (s, c) = phi.sin_cos();
            let from = [4.0 * s, 4.0 * c, 0.0];
            let to = [2.0 * s, 2.0 * c, 20.0];
            let out = trace(&seq, SkewRay::towards(from, to)).unwrap();
            assert!((out.x_mm - base.y_mm * s).abs() < 1e-11 && (out.y_mm - base.y_mm * c).abs() < 1e-11);
            assert!((out.z_mm - base.z_mm).abs() < 1e-11 && (out.opl_mm - base.opl_mm).abs() < 1e-11);
        }
    }

    /// An ideal thin lens images an off-axis point to a single point: every skew ray from it meets the
    /// Gaussian image to 1e-9 mm (issue 5's check; tan u' = tan u − y/f images every conjugate perfectly).
    #[test]
    fn ideal_lens_images_an_off_axis_point_to_a_point() {
        let seq = System { object_medium: Material::AIR, surfaces: vec![Surface::ideal_lens(200.0, 80.0)] }
            .at(550.0)
            .unwrap();
        let s_img = 1.0 / (1.0 / 80.0 - 1.0 / 200.0);
        let (x0, y0) = (3.0, -5.0);
        let (xi, yi) = (x0 * (-s_img / 200.0), y0 * (-s_img / 200.0));
        for (px, py) in [(0.0, 0.0), (10.0, 0.0), (-7.0, 7.0), (0.0, -12.0), (9.0, 9.0)] {
            let out = trace(&seq, SkewRay::towards([x0, y0, 0.0], [px, py, 200.0])).unwrap();
            let (x, y) = out.at_plane(200.0 + s_img);
            assert!((x - xi).abs() < 1e-9 && (y - yi).abs() < 1e-9, "pupil point {px},{py}: {x},{y}");
        }
    }
}
