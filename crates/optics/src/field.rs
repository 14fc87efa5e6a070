//! Figures across the field: where the tangential and sagittal foci of each object point's thin bundle
//! about its real chief ray lie (field curvature and astigmatism), and how far the real chief ray lands
//! from the paraxial image height (distortion).
//!
//! The foci are found from real skew rays aimed through the real stop at ±δ about the chief ray: the
//! tangential pair crosses itself in the meridional plane, the sagittal ray crosses the meridional plane.
//! The O(δ²) error of a finite δ is removed by Richardson extrapolation from δ and 2δ, which leaves
//! O(δ⁴) ≈ 1e-11 of the bundle's length at δ = 2e-3 of the stop radius. These are figures of the chief
//! ray's thin bundle, so clear apertures are ignored: a vignetted chief ray still has its foci.

use crate::paraxial::{self, Object, ParaxialRay};
use crate::pupil::{Aimer, FieldPoint, Pupils};
use crate::sampling::SkewAimer;
use crate::skew::{self, SkewRay};
use crate::system::Sequence;
use crate::trace::{self, RayError};

/// Pupil offset (of the stop radius) of the rays that find the foci.
const DELTA: f64 = 2e-3;

/// The field figures of one object point.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FieldSample {
    /// Share of the off-axis point's height or field angle (0 on axis, 1 the off-axis point).
    pub fraction: f64,
    /// Tangential focus minus the paraxial image plane, mm along the light's final direction.
    pub tangential_mm: f64,
    /// Sagittal focus minus the paraxial image plane, mm along the light's final direction.
    pub sagittal_mm: f64,
    /// Height of the real chief ray at the paraxial image plane, mm.
    pub chief_height_mm: f64,
    /// Paraxial image height of this point, mm.
    pub paraxial_height_mm: f64,
    /// Distortion (real − paraxial)/paraxial height, as a fraction (`None` on axis).
    pub distortion: Option<f64>,
}

/// Where two lines in a meridional plane (y, z) cross: the z of the crossing.
fn crossing_z(a: &SkewRay, b: &SkewRay) -> Option<f64> {
    let det = a.m * (-b.l) - a.l * (-b.m);
    if det == 0.0 {
        return None;
    }
    let ta = ((b.y_mm - a.y_mm) * (-b.l) - (b.z_mm - a.z_mm) * (-b.m)) / det;
    Some(a.z_mm + ta * a.l)
}

/// The foci of the bundle about the chief ray at pupil offset `d`: (tangential z, sagittal z).
fn foci_at(seq: &Sequence, aimer: &SkewAimer, d: f64) -> Result<(f64, f64), RayError> {
    let ray = |px: f64, py: f64| aimer.ray_for(px, py).and_then(|r| skew::trace_with(seq, r, false));
    let (up, down) = (ray(0.0, d)?, ray(0.0, -d)?);
    let side = ray(d, 0.0)?;
    let last = seq.steps.len().saturating_sub(1);
    let missed = RayError::Missed { surface: last };
    let zt = crossing_z(&up, &down).ok_or(missed)?;
    if side.k == 0.0 {
        return Err(missed);
    }
    let zs = side.z_mm - side.x_mm / side.k * side.l;
    Ok((zt, zs))
}

/// The field figures of the point at `fraction` of the field. `image_at_mm` is the paraxial image plane
/// and `full_height_mm` the paraxial image height of the off-axis point (fraction 1).
pub fn field_sample(
    seq: &Sequence,
    object: Object,
    pupils: &Pupils,
    fraction: f64,
    image_at_mm: f64,
    full_height_mm: f64,
) -> Result<FieldSample, RayError> {
    let aimer = SkewAimer::new(seq, object, pupils, fraction)?;
    let (t1, s1) = foci_at(seq, &aimer, DELTA)?;
    let (t2, s2) = foci_at(seq, &aimer, 2.0 * DELTA)?;
    let (zt, zs) = ((4.0 * t1 - t2) / 3.0, (4.0 * s1 - s2) / 3.0);
    let chief = skew::trace_with(seq, aimer.chief_ray(), false)?;
    let chief_height_mm = chief.at_plane(image_at_mm).1;
    let paraxial_height_mm = match object {
        Object::Finite { .. } => fraction * full_height_mm,
        Object::Distant { field_deg, .. } => {
            let full = field_deg.to_radians().tan();
            if full == 0.0 { 0.0 } else { full_height_mm * (fraction * field_deg).to_radians().tan() / full }
        }
    };
    let distortion = (paraxial_height_mm != 0.0).then(|| (chief_height_mm - paraxial_height_mm) / paraxial_height_mm);
    let dir = seq.dir_image();
    Ok(FieldSample {
        fraction,
        tangential_mm: (zt - image_at_mm) * dir,
        sagittal_mm: (zs - image_at_mm) * dir,
        chief_height_mm,
        paraxial_height_mm,
        distortion,
    })
}

/// Field figures at `count` evenly spaced fractions from 0 to 1 (the on-axis point's foci are the limit
/// of a vanishing field, found at 1e-6 of the field). Points whose rays cannot be traced are left out.
pub fn field_curves(seq: &Sequence, object: Object, pupils: &Pupils, count: usize) -> Vec<FieldSample> {
    let Some(last) = paraxial::images(seq, &object).last().copied() else {
        return Vec::new();
    };
    let (Some(at), Some(height)) = (last.at_mm, last.height_mm) else {
        return Vec::new();
    };
    let n = count.max(2);
    (0..n)
        .filter_map(|j| {
            let f = (j as f64 / (n - 1) as f64).max(1e-6);
            field_sample(seq, object, pupils, f, at, height).ok()
        })
        .collect()
}

/// The real chief ray's height at the plane `z_mm`, for the object point at `fraction` of the field
/// (aimed meridionally at the stop's centre; clear apertures ignored, as for the foci).
pub fn chief_height_at(
    seq: &Sequence,
    object: Object,
    pupils: &Pupils,
    fraction: f64,
    z_mm: f64,
) -> Result<f64, RayError> {
    let point = object.at_field(fraction);
    let mut scaled = pupils.clone();
    scaled.chief_start = ParaxialRay { y_mm: pupils.chief_start.y_mm * fraction, nu: pupils.chief_start.nu * fraction };
    let (ray, _) = Aimer::new(seq, point, &scaled, FieldPoint::OffAxis).ray_for(0.0, None)?;
    Ok(trace::trace_range(seq, ray, 0..seq.steps.len(), false)?.height_at(z_mm))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::material::Material;
    use crate::system::{Surface, System};

    /// An ideal lens images every point perfectly to the Gaussian image, wherever the stop is: no field
    /// curvature, no astigmatism, no distortion.
    #[test]
    fn an_ideal_lens_has_a_flat_undistorted_field() {
        let seq = System {
            object_medium: Material::AIR,
            surfaces: vec![Surface::aperture(170.0, 3.0), Surface::ideal_lens(200.0, 60.0)],
        }
        .at(550.0)
        .unwrap();
        let object = Object::Finite { z_mm: 0.0, height_mm: 20.0 };
        let pupils = Pupils::find(&seq, &object).unwrap();
        let curves = field_curves(&seq, object, &pupils, 5);
        assert_eq!(curves.len(), 5);
        for s in curves {
            assert!(s.tangential_mm.abs() < 1e-8 && s.sagittal_mm.abs() < 1e-8, "{s:?}");
            assert!(s.distortion.is_none_or(|d| d.abs() < 1e-12), "{s:?}");
        }
    }
}
