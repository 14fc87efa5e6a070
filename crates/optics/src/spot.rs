//! Spot figures: RMS and geometric radius at any plane, best focus, the marginal ray.
//!
//! On axis the real stop is filled uniformly by area: each ring of the stop is one aimed meridional ray,
//! and by rotational symmetry its transverse aberration at a plane is the radius of that ring's circle
//! there. Ring radii and weights come from Gauss–Legendre quadrature in ρ² ([`crate::quadrature`]); the
//! ring count doubles until the figures settle.
//!
//! Off axis there is no such symmetry: [`SkewSpot`] integrates a Gauss polar grid of skew rays aimed
//! through the real stop, and [`Moments`] gives its RMS radius at every plane from three sums.

use crate::batch::{RayBatch, trace_batch};
use crate::paraxial::Object;
use crate::pupil::{Aimer, FieldPoint, Pupils};
use crate::quadrature::pupil_rings;
use crate::sampling::{Grid, PupilSample, trace_grid};
use crate::skew::SkewRay;
use crate::system::Sequence;
use crate::trace::{self, Ray, RayError};

/// One ring of the pupil: its radius in the stop (as a fraction), its area weight and its ray in image
/// space.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Ring {
    /// Normalised radius in the stop, 0 to 1.
    pub rho: f64,
    /// Share of the stop's area (all rings sum to 1).
    pub weight: f64,
    /// The ray after the last surface.
    pub ray: Ray,
}

/// Why the on-axis spot cannot be computed.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum SpotError {
    /// The marginal ray (the edge of the stop) does not get through.
    #[error("the marginal ray does not get through: {0}")]
    Marginal(RayError),
    /// No ring's ray gets through.
    #[error("no ray from the on-axis point gets through: {0}")]
    AllBlocked(RayError),
}

/// The traced on-axis bundle.
#[derive(Debug, Clone)]
pub struct AxialSpot<'a> {
    seq: &'a Sequence,
    aimer: Aimer<'a>,
    stop_semi_mm: f64,
    /// The quadrature rings that got through (weights renormalised over them).
    pub rings: Vec<Ring>,
    /// Share of the stop's area whose rays were stopped before the image.
    pub blocked_share: f64,
    /// The marginal ray (edge of the stop) in image space.
    pub marginal: Ray,
    /// Geometric samples: rays at evenly spaced radii ρ = j/32, for the geometric radius.
    samples: Vec<(f64, Ray, f64)>,
}

/// How many evenly spaced radii sample the bundle for the geometric radius.
pub const GEOMETRIC_SAMPLES: usize = 32;

impl<'a> AxialSpot<'a> {
    /// Traces `rings` quadrature rings of the on-axis bundle.
    pub fn trace(seq: &'a Sequence, object: Object, pupils: &Pupils, rings: usize) -> Result<AxialSpot<'a>, SpotError> {
        let aimer = Aimer::new(seq, object, pupils, FieldPoint::OnAxis);
        let a = pupils.stop_semi_mm;
        // The marginal ray sits a hair inside the stop's edge, so that the stop itself passes it.
        let marginal = aimer
            .ray_for((1.0 - 1e-12) * a, None)
            .and_then(|(ray, _)| trace::trace(seq, ray))
            .map_err(SpotError::Marginal)?;
        let nodes = pupil_rings(rings);
        let traced = trace_aimed(seq, &aimer, nodes.iter().map(|&(rho, _)| rho * a));
        let mut kept = Vec::with_capacity(rings);
        let mut blocked = 0.0;
        let mut last_err = None;
        for (&(rho, weight), outcome) in nodes.iter().zip(traced) {
            match outcome {
                Ok((ray, _)) => kept.push(Ring { rho, weight, ray }),
                Err(e) => {
                    blocked += weight;
                    last_err = Some(e);
                }
            }
        }
        if kept.is_empty() {
            return Err(SpotError::AllBlocked(last_err.expect("a ring failed")));
        }
        let total: f64 = kept.iter().map(|r| r.weight).sum();
        for r in &mut kept {
            r.weight /= total;
        }
        Ok(AxialSpot {
            seq,
            aimer,
            stop_semi_mm: a,
            rings: kept,
            blocked_share: blocked,
            marginal,
            samples: Vec::new(),
        })
    }

    /// Traces the evenly spaced samples that [`AxialSpot::geometric_radius_at`] needs.
    pub fn with_geometric_samples(mut self) -> AxialSpot<'a> {
        let rhos: Vec<f64> =
            (1..=GEOMETRIC_SAMPLES).map(|j| (j as f64 / GEOMETRIC_SAMPLES as f64) * (1.0 - 1e-12)).collect();
        let traced = trace_aimed(self.seq, &self.aimer, rhos.iter().map(|rho| rho * self.stop_semi_mm));
        for (rho, outcome) in rhos.into_iter().zip(traced) {
            if let Ok((ray, p)) = outcome {
                self.samples.push((rho, ray, p));
            }
        }
        self
    }

    /// RMS spot radius at the plane `z_mm`, mm (about the axis, where the on-axis centroid lies).
    pub fn rms_radius_at(&self, z_mm: f64) -> f64 {
        self.rings.iter().map(|r| r.weight * r.ray.height_at(z_mm).powi(2)).sum::<f64>().sqrt()
    }

    /// The plane of least RMS radius and the RMS radius there. RMS² is quadratic in the plane's position,
    /// so its minimum is found exactly: Δz = −Σw y s / Σw s², with y and s each ray's height and slope.
    /// `None` when the light leaves collimated (RMS slope below 1e-12): there is no focus to find.
    pub fn best_focus(&self) -> Option<(f64, f64)> {
        let z_ref = self.marginal.z_mm;
        let (mut ys, mut ss) = (0.0, 0.0);
        for r in &self.rings {
            let y = r.ray.height_at(z_ref);
            let s = r.ray.slope();
            ys += r.weight * y * s;
            ss += r.weight * s * s;
        }
        if ss < 1e-24 {
            return None;
        }
        let z = z_ref - ys / ss;
        Some((z, self.rms_radius_at(z)))
    }

    /// Geometric spot radius at `z_mm` (the radius that holds every ray), mm: the largest of the evenly
    /// spaced samples (see [`AxialSpot::with_geometric_samples`]), refined by parabolic interpolation
    /// between its neighbours to 1e-9 in ρ (the radius is flat at its maximum, so its value is then exact
    /// to rounding).
    pub fn geometric_radius_at(&self, z_mm: f64) -> f64 {
        let mut best = (self.marginal.height_at(z_mm).abs(), self.samples.len());
        for (j, (_, ray, _)) in self.samples.iter().enumerate() {
            let r = ray.height_at(z_mm).abs();
            if r > best.0 {
                best = (r, j);
            }
        }
        let (radius, j) = best;
        if j + 1 >= self.samples.len() {
            return radius;
        }
        let lo = if j == 0 { (0.0, 0.0) } else { (self.samples[j - 1].0, self.samples[j - 1].1.height_at(z_mm).abs()) };
        let hi = (self.samples[j + 1].0, self.samples[j + 1].1.height_at(z_mm).abs());
        let guess = Some(self.samples[j].2);
        let eval = |rho: f64| -> f64 {
            self.aimer
                .ray_for(rho * self.stop_semi_mm, guess)
                .and_then(|(ray, _)| trace::trace(self.seq, ray))
                .map_or(0.0, |r| r.height_at(z_mm).abs())
        };
        radius.max(parabolic_max(eval, lo, (self.samples[j].0, radius), hi, 1e-9))
    }
}

/// Aims a ray at each stop height (each aim starting from the last one's answer), then traces them all
/// in one batch, whose loop hides the latency of each ray's chain of divisions and roots.
fn trace_aimed(
    seq: &Sequence,
    aimer: &Aimer<'_>,
    heights_mm: impl Iterator<Item = f64>,
) -> Vec<Result<(Ray, f64), RayError>> {
    let mut params: Vec<Result<f64, RayError>> = Vec::new();
    let mut batch = RayBatch::with_capacity(heights_mm.size_hint().0);
    let mut guess = None;
    for h in heights_mm {
        let p = aimer.parameter_for(h, guess);
        if let Ok(p) = p {
            guess = Some(p);
            batch.push(aimer.launch(p));
        }
        params.push(p);
    }
    trace_batch(seq, &mut batch);
    let mut next = 0;
    params
        .into_iter()
        .map(|p| {
            let p = p?;
            let out = batch.outcome(next);
            next += 1;
            Ok((out?, p))
        })
        .collect()
}

/// The maximum of a smooth function bracketed by `a < b < c` with f(b) the largest of the three, by
/// successive parabolic interpolation (each step evaluates f at the vertex of the parabola through the
/// bracket), to `tol` in the argument.
fn parabolic_max(
    f: impl Fn(f64) -> f64,
    (mut a, mut fa): (f64, f64),
    (mut b, mut fb): (f64, f64),
    (mut c, mut fc): (f64, f64),
    tol: f64,
) -> f64 {
    for _ in 0..40 {
        let num = (b - a).powi(2) * (fb - fc) - (b - c).powi(2) * (fb - fa);
        let den = (b - a) * (fb - fc) - (b - c) * (fb - fa);
        if den == 0.0 {
            break;
        }
        let x = b - 0.5 * num / den;
        if !(x > a && x < c) || (x - b).abs() < tol {
            break;
        }
        let fx = f(x);
        if fx > fb {
            if x < b {
                (c, fc) = (b, fb);
            } else {
                (a, fa) = (b, fb);
            }
            (b, fb) = (x, fx);
        } else if x < b {
            (a, fa) = (x, fx);
        } else {
            (c, fc) = (x, fx);
        }
    }
    fb
}

/// The on-axis spot at one plane.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PlaneSpot {
    /// The plane's rail position.
    pub at_mm: f64,
    /// RMS radius, mm.
    pub rms_mm: f64,
    /// Radius that holds every ray, mm.
    pub geometric_mm: f64,
}

/// The spot figures at a set of planes, with the ring count doubled from 4 until every RMS figure changes
/// by less than 1e-9 of itself (or 1e-12 mm), at most 256 rings.
#[derive(Debug, Clone, PartialEq)]
pub struct SpotFigures {
    /// The spot at each asked plane, in the order asked.
    pub planes: Vec<PlaneSpot>,
    /// Rail position of least RMS radius (`None`: the light leaves collimated).
    pub best_focus_at_mm: Option<f64>,
    /// RMS radius there, mm.
    pub best_rms_mm: Option<f64>,
    /// Geometric radius there, mm.
    pub best_geometric_mm: Option<f64>,
    /// The marginal ray in image space.
    pub marginal: Ray,
    /// Ring count the figures converged at.
    pub rings: usize,
    /// Share of the stop's area whose rays were stopped.
    pub blocked_share: f64,
    /// The converged rings' radial moments, for sums over wavelengths.
    pub moments: RadialMoments,
}

/// The area-weighted sums of an on-axis bundle's straight rays about a plane z₀: with t = z − z₀,
/// RMS²(z) = a + 2bt + ct² (heights y, slopes s: a = Σwy², b = Σwys, c = Σws²).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RadialMoments {
    /// The reference plane.
    pub z_ref: f64,
    /// Σ w y².
    pub a: f64,
    /// Σ w y s.
    pub b: f64,
    /// Σ w s².
    pub c: f64,
}

impl RadialMoments {
    /// The moments of `spot`'s rings about `z_ref`.
    pub fn of(spot: &AxialSpot<'_>, z_ref: f64) -> RadialMoments {
        let (mut a, mut b, mut c) = (0.0, 0.0, 0.0);
        for r in &spot.rings {
            let (y, s) = (r.ray.height_at(z_ref), r.ray.slope());
            a += r.weight * y * y;
            b += r.weight * y * s;
            c += r.weight * s * s;
        }
        RadialMoments { z_ref, a, b, c }
    }

    /// The same moments about another plane.
    pub fn about(&self, z_ref: f64) -> RadialMoments {
        let t = z_ref - self.z_ref;
        RadialMoments { z_ref, a: self.a + t * (2.0 * self.b + t * self.c), b: self.b + t * self.c, c: self.c }
    }

    /// RMS radius at the plane `z_mm`.
    pub fn rms_at(&self, z_mm: f64) -> f64 {
        self.about(z_mm).a.max(0.0).sqrt()
    }

    /// The plane of least RMS radius and that radius (`None`: the light leaves collimated).
    pub fn best(&self) -> Option<(f64, f64)> {
        (self.c > 1e-24).then(|| {
            let z = self.z_ref - self.b / self.c;
            (z, self.rms_at(z))
        })
    }
}

/// Computes converged [`SpotFigures`] at `planes_mm`.
pub fn spot_figures(
    seq: &Sequence,
    object: Object,
    pupils: &Pupils,
    planes_mm: &[f64],
) -> Result<SpotFigures, SpotError> {
    let mut rings = 4;
    let mut prev: Option<Vec<f64>> = None;
    loop {
        let spot = AxialSpot::trace(seq, object, pupils, rings)?;
        let best = spot.best_focus();
        let mut figures: Vec<f64> = planes_mm.iter().map(|&z| spot.rms_radius_at(z)).collect();
        if let Some((bz, brms)) = best {
            figures.push(brms);
            figures.push(bz);
        }
        let settled = prev
            .as_ref()
            .is_some_and(|p| p.iter().zip(&figures).all(|(a, b)| (a - b).abs() <= 1e-9 * b.abs().max(a.abs()) + 1e-12));
        if settled || rings >= 256 {
            let spot = spot.with_geometric_samples();
            return Ok(SpotFigures {
                planes: planes_mm
                    .iter()
                    .map(|&z| PlaneSpot {
                        at_mm: z,
                        rms_mm: spot.rms_radius_at(z),
                        geometric_mm: spot.geometric_radius_at(z),
                    })
                    .collect(),
                best_focus_at_mm: best.map(|b| b.0),
                best_rms_mm: best.map(|b| b.1),
                best_geometric_mm: best.map(|b| spot.geometric_radius_at(b.0)),
                marginal: spot.marginal,
                rings,
                blocked_share: spot.blocked_share,
                moments: RadialMoments::of(&spot, spot.marginal.z_mm),
            });
        }
        prev = Some(figures);
        rings *= 2;
    }
}

/// The off-axis bundle of one object point: a Gauss polar grid of skew rays over the real stop (Forbes
/// 1988 in ρ², evenly in angle), with the rays that got through and the chief ray, all in image space.
#[derive(Debug, Clone, PartialEq)]
pub struct SkewSpot {
    /// The quadrature rays that got through, with their samples.
    pub rays: Vec<(PupilSample, SkewRay)>,
    /// The chief ray (traced with the apertures ignored, so that a vignetted chief ray is still there).
    pub chief: SkewRay,
    /// Rings of the grid the figures settled at (twice as many arms).
    pub rings: usize,
}

/// Centroid and RMS radius of a bundle at one plane.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BundleAt {
    /// Centroid x, mm from the axis.
    pub centroid_x_mm: f64,
    /// Centroid y, mm from the axis.
    pub centroid_y_mm: f64,
    /// RMS radius about the centroid, mm.
    pub rms_mm: f64,
}

impl SkewSpot {
    /// The bundle of the point at `fraction` of the field, doubled from 6 rings by 12 arms until the RMS
    /// radius at the plane `z_mm` settles to 1e-9 of itself or 1e-12 mm (at most 24 × 48). `None` when
    /// the chief ray cannot be aimed or no ray gets through.
    pub fn converged(seq: &Sequence, object: Object, pupils: &Pupils, fraction: f64, z_mm: f64) -> Option<SkewSpot> {
        let mut last: Option<(SkewSpot, f64)> = None;
        let mut rings = 6;
        while rings <= 24 {
            let grid = Grid::GaussRings { rings, arms: 2 * rings }.samples();
            let traced = trace_grid(seq, object, pupils, fraction, &grid).ok()?;
            if traced.rays.is_empty() {
                return None;
            }
            let spot = SkewSpot { rays: traced.rays, chief: traced.chief, rings };
            let rms = spot.at_plane(z_mm).rms_mm;
            if let Some((_, prev)) = &last
                && (rms - prev).abs() <= 1e-9 * rms.max(*prev) + 1e-12
            {
                return Some(spot);
            }
            last = Some((spot, rms));
            rings *= 2;
        }
        last.map(|(s, _)| s)
    }

    /// Centroid and RMS radius at the plane `z_mm`, weights renormalised over the rays that got through.
    pub fn at_plane(&self, z_mm: f64) -> BundleAt {
        let w: f64 = self.rays.iter().map(|(s, _)| s.weight).sum();
        let (mut cx, mut cy) = (0.0, 0.0);
        for (s, r) in &self.rays {
            let (x, y) = r.at_plane(z_mm);
            cx += s.weight * x;
            cy += s.weight * y;
        }
        (cx, cy) = (cx / w, cy / w);
        let ms: f64 = self
            .rays
            .iter()
            .map(|(s, r)| {
                let (x, y) = r.at_plane(z_mm);
                s.weight * ((x - cx).powi(2) + (y - cy).powi(2))
            })
            .sum::<f64>()
            / w;
        BundleAt { centroid_x_mm: cx, centroid_y_mm: cy, rms_mm: ms.sqrt() }
    }

    /// The bundle's second moments about its centroid at the plane `z_ref`.
    pub fn moments(&self, z_ref: f64) -> Moments {
        Moments::of(&self.rays, z_ref)
    }
}

/// The weighted second moments of straight rays about their centroid at a reference plane: with t the
/// distance from that plane, RMS²(t) = (Vxx + Vyy) + 2t(Cxs + Cys) + t²(Vss), so a sweep through focus
/// and its exact minimum cost nothing per plane.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Moments {
    z_ref: f64,
    v: f64,
    c: f64,
    vs: f64,
}

impl Moments {
    /// The moments of `rays` (weighted by their samples) at the plane `z_ref`.
    pub fn of(rays: &[(PupilSample, SkewRay)], z_ref: f64) -> Moments {
        let w: f64 = rays.iter().map(|(s, _)| s.weight).sum();
        let mean = |f: &dyn Fn(&SkewRay) -> f64| rays.iter().map(|(s, r)| s.weight * f(r)).sum::<f64>() / w;
        let (x0, y0) = (mean(&|r| r.at_plane(z_ref).0), mean(&|r| r.at_plane(z_ref).1));
        let (sx0, sy0) = (mean(&|r| r.k / r.l), mean(&|r| r.m / r.l));
        let (mut v, mut c, mut vs) = (0.0, 0.0, 0.0);
        for (s, r) in rays {
            let (x, y) = r.at_plane(z_ref);
            let (dx, dy, sx, sy) = (x - x0, y - y0, r.k / r.l - sx0, r.m / r.l - sy0);
            v += s.weight * (dx * dx + dy * dy);
            c += s.weight * (dx * sx + dy * sy);
            vs += s.weight * (sx * sx + sy * sy);
        }
        Moments { z_ref, v: v / w, c: c / w, vs: vs / w }
    }

    /// RMS radius about the centroid at the plane `z_mm`.
    pub fn rms_at(&self, z_mm: f64) -> f64 {
        let t = z_mm - self.z_ref;
        (self.v + t * (2.0 * self.c + t * self.vs)).max(0.0).sqrt()
    }

    /// The plane of least RMS radius (`None` for a collimated bundle).
    pub fn best_focus(&self) -> Option<f64> {
        (self.vs > 1e-24).then(|| self.z_ref - self.c / self.vs)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::material::Material;
    use crate::system::{Surface, System};

    /// A telescope of two ideal lenses sharing a focus sends a distant point's light out collimated: there
    /// is no best focus, and the figures settle at once instead of doubling the rings for ever.
    #[test]
    fn a_collimated_exit_beam_has_no_best_focus() {
        let seq = System {
            object_medium: Material::AIR,
            surfaces: vec![
                Surface::ideal_lens(100.0, 200.0).with_semi_aperture(20.0),
                Surface::ideal_lens(350.0, 50.0),
            ],
        }
        .at(550.0)
        .unwrap();
        let object = Object::Distant { field_deg: 0.0, beam_diameter_mm: 20.0 };
        let pupils = Pupils::find(&seq, &object).unwrap();
        let s = spot_figures(&seq, object, &pupils, &[450.0]).unwrap();
        assert_eq!((s.best_focus_at_mm, s.best_rms_mm), (None, None));
        assert!(s.rings <= 8, "{}", s.rings);
        // The beam is 200/50 = 4 times narrower: a 2.5 mm radius disk, RMS 2.5/√2 mm.
        assert!((s.planes[0].rms_mm - 2.5 / 2f64.sqrt()).abs() < 1e-9, "{}", s.planes[0].rms_mm);
    }
}
