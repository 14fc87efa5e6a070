//! The exact meridional trace: real rays in the plane of the axis, by Snell's law in vector form and the
//! law of reflection.
//!
//! Intersection with spheres and conicoids uses the stable form of the quadratic (no loss of digits as the
//! curvature goes to zero or the ray grazes), and keeps the root on the sheet of the surface that holds the
//! vertex. A ray is a point and a unit direction in the rail frame (y up, z along the rail); the optical
//! path length from the ray's start is carried along.

use crate::simd::Lane;
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

/// The result of one ray (or one lane vector of rays) meeting one surface, computed without branching so
/// that batches vectorise.
#[derive(Clone, Copy)]
pub(crate) struct Hit<V: Lane> {
    pub y: V,
    pub z: V,
    pub m: V,
    pub l: V,
    /// Geometrical path length from the old point to the intercept (signed).
    pub t: V,
    /// Whether the ray meets the surface at all.
    pub met: <V as Lane>::Mask,
    /// Whether it meets it inside the clear aperture.
    pub inside: <V as Lane>::Mask,
    /// Whether it is totally reflected.
    pub tir: <V as Lane>::Mask,
}

impl<V: Lane> Hit<V> {
    /// Whether the ray gets through the surface.
    #[inline(always)]
    pub fn through(&self) -> V::Mask {
        self.met & self.inside & !self.tir
    }

    /// 0 through, [`FATE_MISSED`], [`FATE_BLOCKED`] or [`FATE_TIR`] (as f64, so that batches stay in one
    /// lane width): missed before blocked before total internal reflection.
    #[inline(always)]
    pub fn fate(&self) -> V {
        fate_code(self.met, self.inside, self.tir)
    }
}

/// The fate code from the three masks of a hit: missed before blocked before total internal reflection.
#[inline(always)]
pub(crate) fn fate_code<V: Lane>(met: V::Mask, inside: V::Mask, tir: V::Mask) -> V {
    V::only(!met, V::splat(FATE_MISSED))
        .either(V::only(met & !inside, V::splat(FATE_BLOCKED)))
        .either(V::only(met & inside & tir, V::splat(FATE_TIR)))
}

pub(crate) const FATE_MISSED: f64 = 1.0;
pub(crate) const FATE_BLOCKED: f64 = 2.0;
pub(crate) const FATE_TIR: f64 = 3.0;

/// Surface shapes as constants, so that each batch loop is compiled for one shape.
pub(crate) const FLAT: u8 = 0;
pub(crate) const SPHERE: u8 = 1;
pub(crate) const CONIC: u8 = 2;

/// Surface actions as constants, so that each batch loop is compiled for one action without a branch.
pub(crate) const REFRACT: u8 = 0;
pub(crate) const REFLECT: u8 = 1;
pub(crate) const IDEAL: u8 = 2;

/// The numbers of a step that the kernel reads, splatted into lanes once per surface.
#[derive(Clone, Copy)]
pub(crate) struct StepLanes<V> {
    pub(crate) c: V,
    pub(crate) ck: V,
    pub(crate) z_vertex: V,
    pub(crate) semi: V,
    pub(crate) mu: V,
    pub(crate) focal: V,
}

impl<V: Lane> StepLanes<V> {
    #[inline(always)]
    pub(crate) fn new(step: &Step) -> StepLanes<V> {
        let focal = match step.kind {
            Kind::Ideal(f) => f,
            _ => 1.0,
        };
        StepLanes {
            c: V::splat(step.c),
            ck: V::splat(step.c * (1.0 + step.k)),
            z_vertex: V::splat(step.z_mm),
            semi: V::splat(step.semi_aperture_mm),
            mu: V::splat(step.n_before / step.n_after),
            focal: V::splat(focal),
        }
    }
}

/// Which compiled form of the kernel a step needs: (shape, action).
pub(crate) fn kernel_form(step: &Step) -> (u8, u8) {
    let shape = if step.c == 0.0 {
        FLAT
    } else if step.k == 0.0 {
        SPHERE
    } else {
        CONIC
    };
    let action = match step.kind {
        Kind::Refract => REFRACT,
        Kind::Reflect => REFLECT,
        Kind::Ideal(_) => IDEAL,
    };
    (shape, action)
}

/// Calls `$f::<$V, SHAPE, ACTION>($args)` with the compiled form of the kernel that `$step` needs, so that
/// each loop is compiled once per (shape, action) and chosen once per surface.
macro_rules! with_kernel_form {
    ($step:expr, $f:ident::<$($V:ty),+>($($arg:expr),* $(,)?)) => {{
        use $crate::trace::{CONIC, FLAT, IDEAL, REFLECT, REFRACT, SPHERE};
        match $crate::trace::kernel_form($step) {
            (FLAT, REFRACT) => $f::<$($V),+, FLAT, REFRACT>($($arg),*),
            (FLAT, REFLECT) => $f::<$($V),+, FLAT, REFLECT>($($arg),*),
            (FLAT, _) => $f::<$($V),+, FLAT, IDEAL>($($arg),*),
            (SPHERE, REFRACT) => $f::<$($V),+, SPHERE, REFRACT>($($arg),*),
            (SPHERE, REFLECT) => $f::<$($V),+, SPHERE, REFLECT>($($arg),*),
            (SPHERE, _) => $f::<$($V),+, SPHERE, IDEAL>($($arg),*),
            (_, REFRACT) => $f::<$($V),+, CONIC, REFRACT>($($arg),*),
            (_, REFLECT) => $f::<$($V),+, CONIC, REFLECT>($($arg),*),
            (_, _) => $f::<$($V),+, CONIC, IDEAL>($($arg),*),
        }
    }};
}
pub(crate) use with_kernel_form;

/// One ray meeting one surface: intersect, check the clear aperture, then refract, reflect or deflect.
///
/// Intersection with a conicoid about its vertex uses the stable form of the quadratic. With s the
/// distance from the vertex plane, the surface is c y² − 2s + c(1+k)s² = 0; along the ray (y + t m, s + t l)
/// this is a t² + 2b t + f = 0. The root continuous with the flat case is t = f / (−b + sgn(−b)√(b² − af)),
/// which keeps its digits as c → 0; if it lands on the far sheet (1 − c(1+k)s ≤ 0) the other root d/a is
/// taken. A sphere's normal (−cy, 1 − cs) is already a unit vector; a conicoid's is normalised.
#[inline(always)]
pub(crate) fn hit<V: Lane, const SHAPE: u8, const ACTION: u8>(k: &StepLanes<V>, y: V, z: V, m: V, l: V) -> Hit<V> {
    let zero = V::splat(0.0);
    let one = V::splat(1.0);
    let s0 = z - k.z_vertex;
    // w = 1 − c(1+k)s at the intercept: positive on the sheet that holds the vertex, and the z component of
    // the (unnormalised) normal there.
    let (t, met, w) = if SHAPE == FLAT {
        (-s0 / l, !l.eq(zero), one)
    } else {
        let (a, b, f) = if SHAPE == SPHERE {
            // c(1+k) = c, and a = c(m² + l²) = c for the unit direction every ray carries: fewer operations,
            // the same intercept to the last bits (m² + l² differs from 1 by a rounding or two).
            let b = k.c.mul_add(s0.mul_add(l, y * m), -l);
            let f = k.c.mul_add(s0.mul_add(s0, y * y), -(s0 + s0));
            (k.c, b, f)
        } else {
            let a = (k.ck * l).mul_add(l, k.c * m * m);
            let b = (k.ck * s0).mul_add(l, (k.c * y).mul_add(m, -l));
            let f = (k.ck * s0).mul_add(s0, (k.c * y).mul_add(y, V::splat(-2.0) * s0));
            (a, b, f)
        };
        let disc = b.mul_add(b, -(a * f));
        let q = disc.max0().sqrt();
        let d = -b + q.signed_like(-b);
        // The far root d/a is needed only when some lane's first root lands on the far sheet.
        let t1 = f / d;
        let w1 = one - k.ck * t1.mul_add(l, s0);
        let near_ok = w1.gt(zero);
        let finite = |t: V| t.abs().lt(V::splat(f64::INFINITY));
        if V::all(near_ok) {
            // The usual case: every lane meets the sheet that holds the vertex at the first root.
            (t1, disc.ge(zero) & finite(t1), w1)
        } else {
            let t2 = V::select(a.eq(zero), V::splat(f64::INFINITY), d / a);
            let w2 = one - k.ck * t2.mul_add(l, s0);
            let far_ok = w2.gt(zero);
            let t = V::select(near_ok, t1, t2);
            (t, disc.ge(zero) & (near_ok | far_ok) & finite(t), V::select(near_ok, w1, w2))
        }
    };
    let y1 = t.mul_add(m, y);
    let z1 = t.mul_add(l, z);
    let inside = y1.abs().le(k.semi);
    let (ny, nz) = match SHAPE {
        FLAT => (zero, one),
        SPHERE => (-k.c * y1, w),
        _ => {
            let ny = -k.c * y1;
            let inv = one / ny.mul_add(ny, w * w).sqrt();
            (ny * inv, w * inv)
        }
    };
    let cos_i = m.mul_add(ny, l * nz);
    let (m1, l1, tir) = match ACTION {
        REFRACT => {
            let mu = k.mu;
            // sin²I = 1 − cos²I: near normal incidence it loses its relative digits, but cos²R = 1 − μ² sin²I
            // needs it only to its absolute rounding, which 1 − cos²I keeps.
            let sin2 = (-cos_i).mul_add(cos_i, one);
            let cos2 = (-(mu * mu)).mul_add(sin2, one);
            let cos_r = cos2.max0().sqrt().signed_like(cos_i);
            let g = cos_r - mu * cos_i;
            (mu.mul_add(m, g * ny), mu.mul_add(l, g * nz), cos2.lt(zero))
        }
        REFLECT => {
            let two_cos = V::splat(2.0) * cos_i;
            (m - two_cos * ny, l - two_cos * nz, zero.lt(zero))
        }
        _ => {
            let tan1 = m / l.abs() - y1 / k.focal;
            let inv = one / tan1.mul_add(tan1, one).sqrt();
            (tan1 * inv, inv.signed_like(l), zero.lt(zero))
        }
    };
    Hit { y: y1, z: z1, m: m1, l: l1, t, met, inside, tir }
}

/// [`hit`] for one ray through any surface, choosing the compiled form at run time.
#[inline]
pub(crate) fn hit_any(step: &Step, y: f64, z: f64, m: f64, l: f64) -> Hit<f64> {
    let k = StepLanes::<f64>::new(step);
    with_kernel_form!(step, hit::<f64>(&k, y, z, m, l))
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
pub(crate) fn ideal_lens_path<V: Lane>(n: V, f: V, rho_mm: V) -> V {
    -n * (rho_mm.mul_add(rho_mm, f * f).sqrt() - f.abs()) * V::splat(1.0).copysign(f)
}

/// Traces one ray through one surface, scalar, with typed errors.
pub fn through_step(step: &Step, index: usize, ray: &Ray, check_aperture: bool) -> Result<Ray, RayError> {
    let mut s = *step;
    if !check_aperture {
        s.semi_aperture_mm = f64::INFINITY;
    }
    let h = hit_any(&s, ray.y_mm, ray.z_mm, ray.m, ray.l);
    if !h.through() {
        return Err(fate_error(h.fate(), index, h.y));
    }
    // Summed in the batch loop's order, so that the two agree bit for bit.
    let mut path = s.n_before * h.t;
    if let Kind::Ideal(f) = s.kind {
        path += ideal_lens_path(s.n_before, f, h.y);
    }
    let opl = ray.opl_mm + path;
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
