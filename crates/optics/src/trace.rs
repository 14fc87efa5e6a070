//! The exact meridional trace: real rays in the plane of the axis, by Snell's law in vector form and the
//! law of reflection.
//!
//! Intersection with spheres and conicoids uses the stable form of the quadratic (no loss of digits as the
//! curvature goes to zero or the ray grazes), and keeps the root on the sheet of the surface that holds the
//! vertex. A ray is a point and a unit direction in the rail frame (y up, z along the rail); the optical
//! path length from the ray's start is carried along.

use crate::system::{Kind, Sequence, Step};

/// A real meridional ray: a point, a unit direction and the optical path travelled so far.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Ray {
    /// Height above the axis, mm.
    pub y_mm: f64,
    /// Rail position, mm.
    pub z_mm: f64,
    /// Direction cosine along y.
    pub m: f64,
    /// Direction cosine along z (negative when travelling −z).
    pub l: f64,
    /// Optical path length from the ray's start, mm.
    pub opl_mm: f64,
}

impl Ray {
    /// A ray from `(y_mm, z_mm)` at angle `angle_rad` to the +z axis (positive upward), travelling +z.
    pub fn at_angle(y_mm: f64, z_mm: f64, angle_rad: f64) -> Ray {
        Ray { y_mm, z_mm, m: angle_rad.sin(), l: angle_rad.cos(), opl_mm: 0.0 }
    }

    /// A ray from `(y0, z0)` towards `(y1, z1)`.
    pub fn towards(y0_mm: f64, z0_mm: f64, y1_mm: f64, z1_mm: f64) -> Ray {
        let (dy, dz) = (y1_mm - y0_mm, z1_mm - z0_mm);
        let len = dy.hypot(dz);
        Ray { y_mm: y0_mm, z_mm: z0_mm, m: dy / len, l: dz / len, opl_mm: 0.0 }
    }

    /// Height where the ray (or its straight extension either way) crosses the plane `z_mm`.
    pub fn height_at(&self, z_mm: f64) -> f64 {
        self.y_mm + (z_mm - self.z_mm) * self.m / self.l
    }

    /// Rail position where the ray (or its extension) crosses the axis; `None` when parallel to it.
    pub fn axis_crossing_mm(&self) -> Option<f64> {
        (self.m != 0.0).then(|| self.z_mm - self.y_mm * self.l / self.m)
    }

    /// Slope dy/dz of the ray in the rail frame.
    pub fn slope(&self) -> f64 {
        self.m / self.l
    }

    fn is_finite(&self) -> bool {
        self.y_mm.is_finite() && self.z_mm.is_finite() && self.m.is_finite() && self.l.is_finite()
    }
}

/// Why a ray did not get through.
#[derive(Debug, Clone, Copy, PartialEq, thiserror::Error)]
pub enum RayError {
    /// The ray's line does not meet the surface at all.
    #[error("the ray misses surface {surface}")]
    Missed {
        /// Index of the surface.
        surface: usize,
    },
    /// The ray meets the surface outside its clear aperture.
    #[error("the ray is blocked at surface {surface} (height {height_mm:.4} mm)")]
    Blocked {
        /// Index of the surface.
        surface: usize,
        /// Height at which it met the surface's plane, mm.
        height_mm: f64,
    },
    /// Total internal reflection at a refracting surface.
    #[error("total internal reflection at surface {surface}")]
    TotalInternalReflection {
        /// Index of the surface.
        surface: usize,
    },
    /// The ray (or a number of the surface) is not finite.
    #[error("non-finite ray at surface {surface:?}")]
    NonFinite {
        /// The surface where it was found (`None`: the starting ray).
        surface: Option<usize>,
    },
}

/// One point of a ray's path: where it met a surface.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Intercept {
    /// Height, mm.
    pub y_mm: f64,
    /// Rail position, mm.
    pub z_mm: f64,
    /// Optical path length from the ray's start, mm.
    pub opl_mm: f64,
}

/// A ray's whole path, for drawing: every intercept up to the last surface or the one that stopped it.
#[derive(Debug, Clone, PartialEq)]
pub struct RayPath {
    /// The starting ray.
    pub start: Ray,
    /// Where the ray met each surface, in order (including the surface that blocked it).
    pub intercepts: Vec<Intercept>,
    /// The ray after the last surface, or why it stopped.
    pub outcome: Result<Ray, RayError>,
}

/// The result of one ray meeting one surface, computed without branching so that batches vectorise.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Hit {
    pub y: f64,
    pub z: f64,
    pub m: f64,
    pub l: f64,
    /// Geometrical path length from the old point to the intercept (signed).
    pub t: f64,
    /// 0 through, [`FATE_MISSED`], [`FATE_BLOCKED`] or [`FATE_TIR`] (as f64, so that batches stay in
    /// one lane width).
    pub fate: f64,
}

pub(crate) const FATE_MISSED: f64 = 1.0;
pub(crate) const FATE_BLOCKED: f64 = 2.0;
pub(crate) const FATE_TIR: f64 = 3.0;

/// Intersection of a ray with a conicoid about its vertex, by the stable form of the quadratic.
///
/// With s the distance from the vertex plane, the surface is c y² − 2s + c(1+k)s² = 0; along the ray
/// (y + t m, s + t l) this is a t² + 2b t + f = 0. The root continuous with the flat case is
/// t = f / (−b + sgn(−b)√(b² − af)), which keeps its digits as c → 0; if it lands on the far sheet
/// (1 − c(1+k)s ≤ 0) the other root D/a is taken. Returns `(t, ok)`.
#[inline(always)]
pub(crate) fn intersect(c: f64, ck: f64, z_vertex: f64, y: f64, z: f64, m: f64, l: f64) -> (f64, bool) {
    let s0 = z - z_vertex;
    let a = ck * l * l + c * m * m;
    let b = ck * s0 * l + c * y * m - l;
    let f = ck * s0 * s0 + c * y * y - 2.0 * s0;
    let disc = b * b - a * f;
    let q = (if disc > 0.0 { disc } else { 0.0 }).sqrt();
    let d = -b + q.copysign(-b);
    // Both roots from one division: t1 = f/d and t2 = d/a share the reciprocal of d·a.
    let r = 1.0 / (d * a);
    let (t1, t2) = if a == 0.0 { (f / d, f64::INFINITY) } else { (f * a * r, d * d * r) };
    let near_ok = 1.0 - ck * (s0 + t1 * l) > 0.0;
    let far_ok = 1.0 - ck * (s0 + t2 * l) > 0.0;
    let t = if near_ok { t1 } else { t2 };
    let ok = (disc >= 0.0) & (near_ok | far_ok) & (t.abs() < f64::INFINITY);
    (t, ok)
}

/// Surface actions as constants, so that each batch loop is compiled for one action without a branch.
pub(crate) const REFRACT: u8 = 0;
pub(crate) const REFLECT: u8 = 1;
pub(crate) const IDEAL: u8 = 2;

/// One ray meeting one surface: intersect, check the clear aperture, then refract, reflect or deflect.
/// `CONIC` selects normalising the surface normal (a sphere's (−cy, 1 − cs) is already a unit vector);
/// `ACTION` is [`REFRACT`], [`REFLECT`] or [`IDEAL`] (then `focal_mm` is the lens's focal length).
#[inline(always)]
pub(crate) fn hit<const CONIC: bool, const ACTION: u8>(step: &Step, focal_mm: f64, y: f64, z: f64, m: f64, l: f64) -> Hit {
    let c = step.c;
    let ck = c * (1.0 + step.k);
    let (t, met) = intersect(c, ck, step.z_mm, y, z, m, l);
    let y1 = y + t * m;
    let z1 = z + t * l;
    let s1 = z1 - step.z_mm;
    let inside = y1.abs() <= step.semi_aperture_mm;
    let mut ny = -c * y1;
    let mut nz = 1.0 - ck * s1;
    if CONIC {
        let inv = 1.0 / (ny * ny + nz * nz).sqrt();
        ny *= inv;
        nz *= inv;
    }
    let cos_i = m * ny + l * nz;
    let (m1, l1, tir) = match ACTION {
        REFRACT => {
            let mu = step.n_before / step.n_after;
            let sin_i = m * nz - l * ny;
            let cos2 = 1.0 - mu * mu * sin_i * sin_i;
            let cos_r = (if cos2 > 0.0 { cos2 } else { 0.0 }).sqrt().copysign(cos_i);
            let g = cos_r - mu * cos_i;
            (mu * m + g * ny, mu * l + g * nz, cos2 < 0.0)
        }
        REFLECT => (m - 2.0 * cos_i * ny, l - 2.0 * cos_i * nz, false),
        _ => {
            let tan1 = m / l.abs() - y1 / focal_mm;
            let inv = 1.0 / (1.0 + tan1 * tan1).sqrt();
            (tan1 * inv, inv.copysign(l), false)
        }
    };
    // Written as selects, not branches, so that the batch loop vectorises.
    let fate_tir = if tir { FATE_TIR } else { 0.0 };
    let fate_inside = if inside { fate_tir } else { FATE_BLOCKED };
    let fate = if met { fate_inside } else { FATE_MISSED };
    Hit { y: y1, z: z1, m: m1, l: l1, t, fate }
}

/// [`hit`] for any surface, choosing the compiled form at run time (for single rays).
#[inline]
pub(crate) fn hit_any(step: &Step, y: f64, z: f64, m: f64, l: f64) -> Hit {
    match (step.is_spherical(), step.kind) {
        (true, Kind::Refract) => hit::<false, REFRACT>(step, 0.0, y, z, m, l),
        (false, Kind::Refract) => hit::<true, REFRACT>(step, 0.0, y, z, m, l),
        (true, Kind::Reflect) => hit::<false, REFLECT>(step, 0.0, y, z, m, l),
        (false, Kind::Reflect) => hit::<true, REFLECT>(step, 0.0, y, z, m, l),
        (_, Kind::Ideal(f)) => hit::<false, IDEAL>(step, f, y, z, m, l),
    }
}

/// The typed error for a fate code.
pub(crate) fn fate_error(fate: f64, surface: usize, height_mm: f64) -> RayError {
    if fate == FATE_MISSED {
        RayError::Missed { surface }
    } else if fate == FATE_BLOCKED {
        RayError::Blocked { surface, height_mm }
    } else {
        RayError::TotalInternalReflection { surface }
    }
}

/// Optical path added by an ideal thin lens at height `rho_mm`: −n(√(ρ² + f²) − |f|) sgn f, which makes
/// the path from a plane wave to the focus the same for every ray (exact for the infinite conjugate).
#[inline(always)]
pub(crate) fn ideal_lens_path(n: f64, f: f64, rho_mm: f64) -> f64 {
    -n * ((rho_mm * rho_mm + f * f).sqrt() - f.abs()) * f.signum()
}

/// Traces one ray through one surface, scalar, with typed errors.
pub fn through_step(step: &Step, index: usize, ray: &Ray, check_aperture: bool) -> Result<Ray, RayError> {
    let mut s = *step;
    if !check_aperture {
        s.semi_aperture_mm = f64::INFINITY;
    }
    let h = hit_any(&s, ray.y_mm, ray.z_mm, ray.m, ray.l);
    if h.fate != 0.0 {
        return Err(fate_error(h.fate, index, h.y));
    }
    let mut opl = ray.opl_mm + s.n_before * h.t;
    if let Kind::Ideal(f) = s.kind {
        opl += ideal_lens_path(s.n_before, f, h.y);
    }
    let out = Ray { y_mm: h.y, z_mm: h.z, m: h.m, l: h.l, opl_mm: opl };
    if !out.is_finite() {
        return Err(RayError::NonFinite { surface: Some(index) });
    }
    Ok(out)
}

/// Traces a ray through surfaces `range` of `seq` (apertures checked when `check_apertures`).
pub fn trace_range(
    seq: &Sequence,
    mut ray: Ray,
    range: std::ops::Range<usize>,
    check_apertures: bool,
) -> Result<Ray, RayError> {
    if !ray.is_finite() {
        return Err(RayError::NonFinite { surface: None });
    }
    for i in range {
        ray = through_step(&seq.steps[i], i, &ray, check_apertures)?;
    }
    Ok(ray)
}

/// Traces a ray through every surface; returns the ray after the last one.
pub fn trace(seq: &Sequence, ray: Ray) -> Result<Ray, RayError> {
    trace_range(seq, ray, 0..seq.steps.len(), true)
}

/// Traces a ray and keeps every intercept, for drawing; a blocked ray ends at the surface that blocked it.
pub fn trace_path(seq: &Sequence, start: Ray) -> RayPath {
    let mut intercepts = Vec::with_capacity(seq.steps.len());
    let mut ray = start;
    if !ray.is_finite() {
        return RayPath { start, intercepts, outcome: Err(RayError::NonFinite { surface: None }) };
    }
    for (i, step) in seq.steps.iter().enumerate() {
        match through_step(step, i, &ray, true) {
            Ok(next) => {
                intercepts.push(Intercept { y_mm: next.y_mm, z_mm: next.z_mm, opl_mm: next.opl_mm });
                ray = next;
            }
            Err(e) => {
                // Show where the ray died: its intercept with the surface, when it has one.
                if let RayError::Blocked { .. } | RayError::TotalInternalReflection { .. } = e {
                    let free = through_step(step, i, &ray, false);
                    let h = match free {
                        Ok(r) => (r.y_mm, r.z_mm),
                        Err(_) => {
                            let mut s = *step;
                            s.semi_aperture_mm = f64::INFINITY;
                            let h = hit_any(&s, ray.y_mm, ray.z_mm, ray.m, ray.l);
                            (h.y, h.z)
                        }
                    };
                    if h.0.is_finite() && h.1.is_finite() {
                        intercepts.push(Intercept { y_mm: h.0, z_mm: h.1, opl_mm: f64::NAN });
                    }
                }
                return RayPath { start, intercepts, outcome: Err(e) };
            }
        }
    }
    RayPath { start, intercepts, outcome: Ok(ray) }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::material::Material;
    use crate::system::{Shape, Surface, System};

    fn seq(surfaces: Vec<Surface>) -> Sequence {
        System { object_medium: Material::AIR, surfaces }.at(587.5618).unwrap()
    }

    #[test]
    fn flat_intersection_is_exact() {
        let s = seq(vec![Surface::refracting(10.0, Shape::Flat, Material::Constant(1.5))]);
        let r = trace(&s, Ray::at_angle(1.0, 0.0, 0.1)).unwrap();
        assert!((r.z_mm - 10.0).abs() < 1e-15);
        assert!((r.y_mm - (1.0 + 10.0 * 0.1f64.tan())).abs() < 1e-14);
        // Snell: sin θ' = sin θ / n.
        assert!((r.m - 0.1f64.sin() / 1.5).abs() < 1e-15);
    }

    #[test]
    fn nearly_flat_sphere_keeps_its_digits() {
        // R = 1e9 mm: the sag at 10 mm is ρ²/(2R) = 5e-8 mm; the intercept must show it.
        let s = seq(vec![Surface::refracting(0.0, Shape::sphere(1e9), Material::Constant(1.5))]);
        let r = trace(&s, Ray::at_angle(10.0, -5.0, 0.0)).unwrap();
        // The intercept is z = −5 + t, so its absolute rounding is a few 1e-16 mm; a naive root loses the sag.
        assert!((r.z_mm - 5e-8).abs() < 1e-15, "{}", r.z_mm);
    }

    #[test]
    fn blocked_and_missed_are_typed() {
        let s = seq(vec![Surface::aperture(10.0, 2.0)]);
        assert!(matches!(trace(&s, Ray::at_angle(3.0, 0.0, 0.0)), Err(RayError::Blocked { surface: 0, .. })));
        let s = seq(vec![Surface::refracting(10.0, Shape::sphere(5.0), Material::Constant(1.5))]);
        assert_eq!(trace(&s, Ray::at_angle(6.0, 0.0, 0.0)), Err(RayError::Missed { surface: 0 }));
        let nan = Ray { y_mm: f64::NAN, ..Ray::at_angle(0.0, 0.0, 0.0) };
        assert_eq!(trace(&s, nan), Err(RayError::NonFinite { surface: None }));
    }

    #[test]
    fn path_ends_where_the_ray_is_blocked() {
        let s = seq(vec![Surface::ideal_lens(10.0, 50.0), Surface::aperture(30.0, 0.5), Surface::aperture(60.0, 10.0)]);
        let p = trace_path(&s, Ray::at_angle(2.0, 0.0, 0.0));
        assert_eq!(p.intercepts.len(), 2);
        assert!((p.intercepts[1].z_mm - 30.0).abs() < 1e-12);
        assert!(matches!(p.outcome, Err(RayError::Blocked { surface: 1, .. })));
    }
}
