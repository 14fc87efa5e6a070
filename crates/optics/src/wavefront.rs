//! The wavefront error of one object point at one wavelength: optical path differences on a reference
//! sphere, their peak-to-valley and RMS figures, OPD fans, a map on a square pupil grid and Zernike
//! coefficients.
//!
//! **Reference sphere.** Centred on the point where the real chief ray meets the chosen image plane (the
//! paraxial image, or a screen), passing through the point where the chief ray crosses the paraxial exit
//! pupil's plane. Each real ray is traced to that sphere and its optical path compared with the chief ray's:
//! W = OPL(chief) − OPL(ray), in waves, so W > 0 where the real wavefront is ahead of the reference sphere
//! (a screen beyond the focus gives W > 0 at the rim; an under-corrected positive lens gives W₀₄₀ > 0, the
//! sign of Welford's S_I). This is the convention of W. T. Welford, *Aberrations of Optical Systems* (Adam
//! Hilger, 1986), §5.
//!
//! **Pupil coordinates** are those of [`crate::sampling`]: normalised to the real stop, (px, py) = (1, 0)
//! at its sagittal edge (x), (0, 1) at its top (y). Rays are aimed through the real stop.
//!
//! **Figures.** `rms_waves` and `pv_waves` have piston and tilt removed (a least-squares fit of
//! a + b·px + c·py over the pupil is subtracted: the image point moved to where the wave is best centred);
//! `rms_focus_removed_waves` and `pv_focus_removed_waves` have piston, tilt and focus removed (a fit of
//! a + b·px + c·py + d·(px² + py²)). RMS figures are integrated by Gauss rings over the pupil's area (Forbes
//! 1988), PV figures are taken over the Gauss rings and the square map together. The Zernike coefficients
//! are in the Noll ordering and normalisation (R. J. Noll, J. Opt. Soc. Am. 66, 207 (1976)): Z₁ = 1,
//! Z₂ = 2ρ cos θ, Z₃ = 2ρ sin θ, Z₄ = √3(2ρ² − 1), …, each with unit RMS over the unit disc, θ measured
//! from the x axis, fitted by weighted least squares on the Gauss rings.

use crate::paraxial::Object;
use crate::pupil::Pupils;
use crate::quadrature::pupil_rings;
use crate::sampling::SkewAimer;
use crate::skew::{self, SkewRay};
use crate::skew_batch::{SkewBatch, trace_skew_batch};
use crate::system::{Kind, Sequence};
use crate::trace::RayError;

/// Zernike terms fitted (Noll 1 to 22: through secondary spherical aberration).
pub const ZERNIKE_TERMS: usize = 22;

/// Default pupil samples across the square map (the PSF and MTF are computed from it).
pub const DEFAULT_SAMPLES_ACROSS: usize = 64;

/// Points of each OPD fan, across the pupil's diameter.
pub const FAN_POINTS: usize = 41;

/// Gauss rings (in ρ²) × arms used for the RMS figures and the Zernike fit: the products of Zernike terms
/// through degree 6 with a wavefront of degree 6 are integrated exactly (2·8 − 1 ≥ 6 in ρ², 32 arms >
/// the highest harmonic 12 + 6).
const GAUSS_RINGS: usize = 8;
const GAUSS_ARMS: usize = 32;

/// How far inside the stop's edge the rim samples are aimed, so the stop's own edge never blocks them.
const INSIDE: f64 = 1.0 - 1e-12;

/// What to compute the wavefront for.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WavefrontRequest {
    /// The object point, as a share of the field (0 on axis, 1 the off-axis point).
    pub fraction: f64,
    /// The rail position of the image plane that holds the reference sphere's centre, mm.
    pub image_at_mm: f64,
    /// Pupil samples across the square map (at least 4).
    pub samples_across: usize,
}

/// Why a wavefront cannot be computed.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum WavefrontError {
    /// The paraxial exit pupil is at infinity, so there is no reference sphere of finite radius.
    #[error("the exit pupil is at infinity (telecentric image side), so there is no reference sphere")]
    NoExitPupil,
    /// The chief ray cannot be aimed or traced.
    #[error("the chief ray cannot be traced: {0}")]
    Chief(RayError),
    /// The reference sphere has no size: the image plane is at the exit pupil.
    #[error("the image plane lies at the exit pupil, so the reference sphere has no radius")]
    DegenerateSphere,
    /// Too few rays got through to fit the wavefront.
    #[error("too few rays get through the pupil to fit a wavefront ({0} of them)")]
    TooFewRays(usize),
    /// Fewer than 4 samples across were asked for.
    #[error("at least 4 pupil samples across are needed, not {0}")]
    TooFewSamples(usize),
}

/// One pupil sample of the wavefront (a Gauss-rings point with its area weight).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WaveSample {
    /// Sagittal pupil coordinate.
    pub px: f64,
    /// Tangential pupil coordinate.
    pub py: f64,
    /// Share of the pupil's area (the weights of the full pupil sum to 1).
    pub weight: f64,
    /// Wavefront error, waves (W = OPL(chief) − OPL(ray); nothing removed).
    pub waves: f64,
}

/// One point of an OPD fan.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FanPoint {
    /// Pupil coordinate along the fan, −1..1.
    pub p: f64,
    /// Wavefront error with piston and tilt removed, waves.
    pub waves: f64,
}

/// The wavefront error of one object point at one wavelength.
#[derive(Debug, Clone, PartialEq)]
pub struct Wavefront {
    /// Wavelength, nm.
    pub wavelength_nm: f64,
    /// The object point as a share of the field.
    pub fraction: f64,
    /// The reference sphere's centre (x, y, z), mm: the chief ray's point on the image plane.
    pub reference_centre_mm: [f64; 3],
    /// The reference sphere's radius, mm (from its centre to the chief ray's point in the exit pupil).
    pub reference_radius_mm: f64,
    /// Image-space numerical aperture in x (half the spread of the direction cosine k across the
    /// pupil's sagittal diameter, times the image index).
    pub na_sagittal: f64,
    /// Image-space numerical aperture in y (the same for m across the tangential diameter).
    pub na_tangential: f64,
    /// Gauss-rings samples that got through, with their wavefront errors.
    pub samples: Vec<WaveSample>,
    /// Share of the pupil's area that gets through (Gauss-rings weights of the passing rays).
    pub transmitted: f64,
    /// RMS wavefront error with piston and tilt removed, waves.
    pub rms_waves: f64,
    /// Peak-to-valley with piston and tilt removed, waves.
    pub pv_waves: f64,
    /// RMS with piston, tilt and focus removed, waves.
    pub rms_focus_removed_waves: f64,
    /// Peak-to-valley with piston, tilt and focus removed, waves.
    pub pv_focus_removed_waves: f64,
    /// Zernike coefficients, waves, Noll j = 1..=[`ZERNIKE_TERMS`] at index j − 1.
    pub zernike: Vec<f64>,
    /// Samples across the square map.
    pub across: usize,
    /// The map, row by row from py = −1 to 1, each row from px = −1 to 1, at the cells' centres
    /// (px = −1 + (2i + 1)/across): the wavefront error with piston and tilt removed, waves, or `None`
    /// outside the pupil or where the ray is blocked.
    pub map: Vec<Option<f64>>,
    /// The pupil function's amplitude on each map cell: 1 where the cell's centre lies inside the stop's
    /// circle and its ray gets through, else 0.
    pub coverage: Vec<f64>,
    /// The tangential OPD fan (px = 0, py from −1 to 1), piston and tilt removed.
    pub tangential_fan: Vec<FanPoint>,
    /// The sagittal OPD fan (py = 0, px from −1 to 1), piston and tilt removed.
    pub sagittal_fan: Vec<FanPoint>,
    /// Tilt removed, waves: the fitted (piston, x-tilt, y-tilt) per unit pupil coordinate.
    pub tilt_waves: [f64; 3],
}

/// The reference sphere and the chief ray's path to it.
struct Reference {
    centre: [f64; 3],
    through: [f64; 3],
    radius: f64,
    n: f64,
    chief_opl_mm: f64,
}

impl Reference {
    /// The optical path of `ray` (after the last surface) to the sphere, mm; `None` when it misses.
    fn opl_to_sphere(&self, ray: &SkewRay) -> Option<f64> {
        let q = [ray.x_mm - self.centre[0], ray.y_mm - self.centre[1], ray.z_mm - self.centre[2]];
        let d = [ray.k, ray.m, ray.l];
        let b = dot(d, q);
        let c = dot(q, q) - self.radius * self.radius;
        let disc = b * b - c;
        if disc < 0.0 || !disc.is_finite() {
            return None;
        }
        // Stable roots of t² + 2bt + c = 0.
        let t1 = -b - disc.sqrt().copysign(b);
        let t2 = if t1 == 0.0 { 0.0 } else { c / t1 };
        // The root on the exit pupil's side of the sphere.
        let e = [self.through[0] - self.centre[0], self.through[1] - self.centre[1], self.through[2] - self.centre[2]];
        let side = |t: f64| dot([q[0] + t * d[0], q[1] + t * d[1], q[2] + t * d[2]], e);
        let t = if side(t1) >= side(t2) { t1 } else { t2 };
        Some(ray.opl_mm + self.n * t)
    }

    /// W = OPL(chief) − OPL(ray), mm.
    fn opd_mm(&self, ray: &SkewRay) -> Option<f64> {
        self.opl_to_sphere(ray).map(|opl| self.chief_opl_mm - opl)
    }
}

fn dot(a: [f64; 3], b: [f64; 3]) -> f64 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}

/// Aims and traces rays at the pupil points `points` (each pulled a hair inside the stop), in order:
/// `None` where a ray cannot be aimed or is blocked.
fn trace_points(
    seq: &Sequence,
    conjugates: &[IdealConjugate],
    aimer: &SkewAimer,
    stop_semi_mm: f64,
    points: &[(f64, f64)],
) -> Vec<Option<SkewRay>> {
    let mut batch = SkewBatch::with_capacity(points.len());
    let mut slot = Vec::with_capacity(points.len());
    let mut near: Option<([f64; 2], (f64, f64))> = None;
    for &(px, py) in points {
        let (px, py) = (px * INSIDE, py * INSIDE);
        match aimer.parameters_near(px, py, near) {
            Ok(uv) => {
                near = Some((uv, (px * stop_semi_mm, py * stop_semi_mm)));
                slot.push(Some(batch.len()));
                batch.push(aimer.launch(uv));
            }
            Err(_) => slot.push(None),
        }
    }
    let launched = batch.clone();
    trace_skew_batch(seq, &mut batch);
    let mut rays: Vec<Option<SkewRay>> = slot.iter().map(|s| s.and_then(|i| batch.outcome(i).ok())).collect();
    for lens in conjugates {
        let mut at_lens = launched.clone();
        trace_skew_batch(&seq.prefix(lens.step + 1), &mut at_lens);
        for (ray, s) in rays.iter_mut().zip(&slot) {
            if let (Some(ray), Some(i)) = (ray.as_mut(), s) {
                ray.opl_mm += at_lens.outcome(*i).map_or(0.0, |r| lens.correction_mm(seq, &r));
            }
        }
    }
    rays
}

/// An ideal thin lens of the sequence and the paraxial object it images: the image of the bench's object
/// formed by the surfaces before it.
///
/// The traced path through an ideal lens (`trace::ideal_lens_path`) is that of a lens perfect for a plane
/// wave along the axis: any other conjugate would show a wavefront error the lens does not have (an ideal
/// lens images every point perfectly). For the wavefront, each ray's path through the lens is put right for
/// the conjugates the lens is used at: with O the lens's centre, Q where the ray meets it, P the object
/// point on the incoming ray and P′ its image on the outgoing ray (the lens maps the ray's direction
/// tangents by t′ = t − Q/f, so P′ is P's paraxial image), the added path is
/// Δ = n σ(|PO| − |PQ|) + n σ′(|OP′| − |QP′|), which makes every path from P to P′ the chief path through O
/// (Fermat's principle for a perfect image). Each difference is taken as (|PO|² − |PQ|²)/(|PO| + |PQ|) =
/// (2P·Q − ρ²)/(…), so no digits are lost when P is far; at infinity it becomes −d·Q (d the unit
/// direction), the plane wave's path. σ, σ′ = ±1 for a real or virtual object and image.
#[derive(Debug, Clone, Copy, PartialEq)]
struct IdealConjugate {
    /// The lens's step.
    step: usize,
    /// The paraxial object's distance from the lens along the light's travel, mm (negative: real, in front
    /// of it); `None` at infinity.
    object_mm: Option<f64>,
}

/// Beyond this distance from a lens, mm, its object or image is taken to be at infinity.
const FAR_MM: f64 = 1e12;

/// Every ideal lens of `seq` with its paraxial object for the bench's `object`.
fn ideal_conjugates(seq: &Sequence, object: Object) -> Vec<IdealConjugate> {
    (0..seq.steps.len())
        .filter(|&i| matches!(seq.steps[i].kind, Kind::Ideal(_)))
        .map(|step| {
            let before = crate::paraxial::images(&seq.prefix(step), &object);
            let object_at = match before.last() {
                Some(image) => image.at_mm,
                None => match object {
                    Object::Finite { z_mm, .. } => Some(z_mm),
                    Object::Distant { .. } => None,
                },
            };
            let s = &seq.steps[step];
            let object_mm = object_at.map(|z| (z - s.z_mm) * s.dir_before).filter(|d| d.abs() < FAR_MM);
            IdealConjugate { step, object_mm }
        })
        .collect()
}

impl IdealConjugate {
    /// The path to add to a ray that left the lens as `ray` (at the lens's plane): the perfect lens's
    /// path for this conjugate less the path the trace added.
    fn correction_mm(&self, seq: &Sequence, ray: &SkewRay) -> f64 {
        let s = &seq.steps[self.step];
        let Kind::Ideal(f) = s.kind else { return 0.0 };
        let n = s.n_before;
        let (qx, qy) = (ray.x_mm, ray.y_mm);
        let rho2 = qx * qx + qy * qy;
        // Direction tangents along the light's travel, out of the lens and into it.
        let (tx_out, ty_out) = (ray.k / ray.l.abs(), ray.m / ray.l.abs());
        let (tx_in, ty_in) = (tx_out + qx / f, ty_out + qy / f);
        // The path from the conjugate point at distance `d` (None: infinity) along tangents `t` to Q,
        // less that to O, on the object side (`sign` −1) or the image side (+1).
        let side = |d: Option<f64>, (tx, ty): (f64, f64), sign: f64| -> f64 {
            let norm = (1.0 + tx * tx + ty * ty).sqrt();
            match d {
                None => sign * (tx * qx + ty * qy) / norm,
                Some(d) => {
                    let (px, py) = (qx + tx * d, qy + ty * d);
                    let to_o = (px * px + py * py + d * d).sqrt();
                    let to_q = d.abs() * norm;
                    sign * d.signum() * (2.0 * (px * qx + py * qy) - rho2) / (to_o + to_q)
                }
            }
        };
        let image_mm = match self.object_mm {
            None => Some(f),
            Some(d) => {
                let v = 1.0 / f + 1.0 / d;
                (v != 0.0).then(|| 1.0 / v).filter(|z| z.abs() < FAR_MM)
            }
        };
        let perfect = n * (side(self.object_mm, (tx_in, ty_in), -1.0) + side(image_mm, (tx_out, ty_out), 1.0));
        let traced = -n * ((rho2 + f * f).sqrt() - f.abs()) * f.signum();
        perfect - traced
    }
}

/// Whether the map cell centred at (px, py) belongs to the pupil: 1 when its centre lies inside the
/// stop's circle, else 0. (Grey rim cells weighted by their area share bias the autocorrelation by
/// O(1/across) near the rim; whole cells by centre keep the MTF within 2e-3 of the circular pupil's at
/// 128 across, `tests/wavefront.rs`.)
pub(crate) fn cell_coverage(px: f64, py: f64) -> f64 {
    if px * px + py * py <= 1.0 { 1.0 } else { 0.0 }
}

impl Wavefront {
    /// The wavefront error of the point at `request.fraction` of the field of `object`, through the stop of
    /// `pupils`, referred to a sphere centred on the chief ray's point on the plane `request.image_at_mm`.
    pub fn of(
        seq: &Sequence,
        object: Object,
        pupils: &Pupils,
        request: &WavefrontRequest,
    ) -> Result<Wavefront, WavefrontError> {
        let across = request.samples_across;
        if across < 4 {
            return Err(WavefrontError::TooFewSamples(across));
        }
        let exit_at_mm = pupils.exit_pupil_at_mm.ok_or(WavefrontError::NoExitPupil)?;
        let aimer = SkewAimer::new(seq, object, pupils, request.fraction).map_err(WavefrontError::Chief)?;
        let conjugates = ideal_conjugates(seq, object);
        let mut chief = skew::trace_with(seq, aimer.chief_ray(), false).map_err(WavefrontError::Chief)?;
        for lens in &conjugates {
            let at_lens = skew::trace_with(&seq.prefix(lens.step + 1), aimer.chief_ray(), false)
                .map_err(WavefrontError::Chief)?;
            chief.opl_mm += lens.correction_mm(seq, &at_lens);
        }
        let (cx, cy) = chief.at_plane(request.image_at_mm);
        let (ex, ey) = chief.at_plane(exit_at_mm);
        let centre = [cx, cy, request.image_at_mm];
        let through = [ex, ey, exit_at_mm];
        let radius = ((ex - cx).powi(2) + (ey - cy).powi(2) + (exit_at_mm - request.image_at_mm).powi(2)).sqrt();
        if radius <= 1e-9 || !radius.is_finite() {
            return Err(WavefrontError::DegenerateSphere);
        }
        let n = seq.n_image().abs();
        let t_exit = (exit_at_mm - chief.z_mm) / chief.l;
        let reference = Reference { centre, through, radius, n, chief_opl_mm: chief.opl_mm + n * t_exit };
        let wave_mm = seq.wavelength_nm * 1e-6;
        let a = pupils.stop_semi_mm;

        // Gauss rings: the RMS figures and the Zernike fit.
        let rings = pupil_rings(GAUSS_RINGS);
        let mut gauss = Vec::with_capacity(GAUSS_RINGS * GAUSS_ARMS);
        for &(rho, w) in rings.iter() {
            for k in 0..GAUSS_ARMS {
                let phi = std::f64::consts::TAU * (k as f64 + 0.5) / GAUSS_ARMS as f64;
                let (s, c) = phi.sin_cos();
                gauss.push((rho * s, rho * c, w / GAUSS_ARMS as f64));
            }
        }
        let points: Vec<(f64, f64)> = gauss.iter().map(|&(x, y, _)| (x, y)).collect();
        let samples: Vec<WaveSample> = trace_points(seq, &conjugates, &aimer, a, &points)
            .into_iter()
            .zip(&gauss)
            .filter_map(|(r, &(px, py, weight))| {
                let w = reference.opd_mm(r.as_ref()?)? / wave_mm;
                w.is_finite().then_some(WaveSample { px, py, weight, waves: w })
            })
            .collect();
        if samples.len() < 2 * ZERNIKE_TERMS {
            return Err(WavefrontError::TooFewRays(samples.len()));
        }
        let transmitted: f64 = samples.iter().map(|s| s.weight).sum();
        let tilt = fit(&samples, &TILT);
        let focus = fit(&samples, &FOCUS);
        let zernike = fit_zernike(&samples);
        let tilt_waves = [tilt[0], tilt[1], tilt[2]];

        // The square map, and the numerical apertures from the rays through the pupil's four edges.
        let mut map_points = Vec::with_capacity(across * across);
        let mut coverage = Vec::with_capacity(across * across);
        for j in 0..across {
            let py = -1.0 + (2 * j + 1) as f64 / across as f64;
            for i in 0..across {
                let px = -1.0 + (2 * i + 1) as f64 / across as f64;
                coverage.push(cell_coverage(px, py));
                map_points.push((px, py));
            }
        }
        let inside: Vec<usize> = (0..map_points.len()).filter(|&i| coverage[i] > 0.0).collect();
        let pts: Vec<(f64, f64)> = inside.iter().map(|&i| clamp_to_disc(map_points[i])).collect();
        let traced = trace_points(seq, &conjugates, &aimer, a, &pts);
        let mut map = vec![None; across * across];
        for ((&i, r), &(px, py)) in inside.iter().zip(traced).zip(&pts) {
            let w = r.as_ref().and_then(|r| reference.opd_mm(r)).map(|w| w / wave_mm - eval(&TILT, &tilt, px, py));
            match w.filter(|w| w.is_finite()) {
                Some(w) => map[i] = Some(w),
                None => coverage[i] = 0.0,
            }
        }

        let edges = trace_points(seq, &conjugates, &aimer, a, &[(1.0, 0.0), (-1.0, 0.0), (0.0, 1.0), (0.0, -1.0)]);
        let spread = |p: &Option<SkewRay>, q: &Option<SkewRay>, f: fn(&SkewRay) -> f64| {
            p.as_ref().zip(q.as_ref()).map(|(p, q)| 0.5 * n * (f(p) - f(q)).abs())
        };
        let na_x = spread(&edges[0], &edges[1], |r| r.k);
        let na_y = spread(&edges[2], &edges[3], |r| r.m);
        // A vignetted edge: fall back to the chief ray's reference sphere, the stop's radius seen from it.
        let fallback = n * (pupils.exit_pupil_diameter_mm.unwrap_or(0.0) * 0.5 / radius).min(1.0);
        let na_sagittal = na_x.unwrap_or(fallback);
        let na_tangential = na_y.unwrap_or(fallback);

        let fan = |along_y: bool| -> Vec<FanPoint> {
            let ps: Vec<f64> = (0..FAN_POINTS).map(|i| -1.0 + 2.0 * i as f64 / (FAN_POINTS - 1) as f64).collect();
            let pts: Vec<(f64, f64)> = ps.iter().map(|&p| if along_y { (0.0, p) } else { (p, 0.0) }).collect();
            trace_points(seq, &conjugates, &aimer, a, &pts)
                .into_iter()
                .zip(ps.iter().zip(&pts))
                .filter_map(|(r, (&p, &(px, py)))| {
                    let w = reference.opd_mm(r.as_ref()?)? / wave_mm - eval(&TILT, &tilt, px, py);
                    w.is_finite().then_some(FanPoint { p, waves: w })
                })
                .collect()
        };
        let tangential_fan = fan(true);
        let sagittal_fan = fan(false);

        let residual = |basis: &[Term], c: &[f64]| -> (f64, f64) {
            let (mut sum, mut total) = (0.0, 0.0);
            let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
            for s in &samples {
                let r = s.waves - eval(basis, c, s.px, s.py);
                sum += s.weight * r * r;
                total += s.weight;
                lo = lo.min(r);
                hi = hi.max(r);
            }
            for (&(px, py), w) in map_points.iter().zip(&map) {
                if let Some(w) = w {
                    // The map has tilt removed already; put it back before removing this fit.
                    let r = w + eval(&TILT, &tilt, px, py) - eval(basis, c, px, py);
                    lo = lo.min(r);
                    hi = hi.max(r);
                }
            }
            ((sum / total).max(0.0).sqrt(), hi - lo)
        };
        let (rms_waves, pv_waves) = residual(&TILT, &tilt);
        let (rms_focus_removed_waves, pv_focus_removed_waves) = residual(&FOCUS, &focus);

        Ok(Wavefront {
            wavelength_nm: seq.wavelength_nm,
            fraction: request.fraction,
            reference_centre_mm: centre,
            reference_radius_mm: radius,
            na_sagittal,
            na_tangential,
            samples,
            transmitted,
            rms_waves,
            pv_waves,
            rms_focus_removed_waves,
            pv_focus_removed_waves,
            zernike,
            across,
            map,
            coverage,
            tangential_fan,
            sagittal_fan,
            tilt_waves,
        })
    }

    /// Whether the wavefront is diffraction-limited by the Maréchal criterion: RMS (piston and tilt
    /// removed) at most λ/14.
    pub fn diffraction_limited(&self) -> bool {
        self.rms_waves <= MARECHAL_RMS_WAVES
    }

    /// The Maréchal approximation of the Strehl ratio, exp(−(2πσ)²), σ the RMS with piston and tilt removed
    /// (Born & Wolf, *Principles of Optics*, §9.1).
    pub fn strehl_marechal(&self) -> f64 {
        (-(std::f64::consts::TAU * self.rms_waves).powi(2)).exp()
    }
}

/// The Maréchal criterion: a wavefront is diffraction-limited when its RMS error is at most λ/14
/// (Strehl ≳ 0.8; Born & Wolf, *Principles of Optics*, §9.1).
pub const MARECHAL_RMS_WAVES: f64 = 1.0 / 14.0;

/// Map cells on the rim are traced a hair inside the disc so that the stop's edge never blocks them.
fn clamp_to_disc((px, py): (f64, f64)) -> (f64, f64) {
    let r = px.hypot(py);
    if r > 1.0 { (px / r, py / r) } else { (px, py) }
}

/// A term of a least-squares basis, as a function of the pupil point.
type Term = fn(f64, f64) -> f64;

const TILT: [Term; 3] = [|_, _| 1.0, |x, _| x, |_, y| y];
const FOCUS: [Term; 4] = [|_, _| 1.0, |x, _| x, |_, y| y, |x, y| x * x + y * y];

fn eval(basis: &[Term], c: &[f64], px: f64, py: f64) -> f64 {
    basis.iter().zip(c).map(|(f, c)| c * f(px, py)).sum()
}

/// Weighted least-squares coefficients of `basis` for the samples.
fn fit(samples: &[WaveSample], basis: &[Term]) -> Vec<f64> {
    let rows: Vec<(Vec<f64>, f64, f64)> =
        samples.iter().map(|s| (basis.iter().map(|f| f(s.px, s.py)).collect(), s.waves, s.weight)).collect();
    least_squares(&rows, basis.len())
}

/// The Zernike coefficients (Noll 1..=ZERNIKE_TERMS) by weighted least squares.
fn fit_zernike(samples: &[WaveSample]) -> Vec<f64> {
    let rows: Vec<(Vec<f64>, f64, f64)> = samples
        .iter()
        .map(|s| ((1..=ZERNIKE_TERMS).map(|j| zernike(j, s.px, s.py)).collect(), s.waves, s.weight))
        .collect();
    least_squares(&rows, ZERNIKE_TERMS)
}

/// Solves the weighted normal equations Σ w a aᵀ c = Σ w a y by Cholesky factorisation; a singular
/// direction (a term the samples cannot see) gets coefficient 0.
fn least_squares(rows: &[(Vec<f64>, f64, f64)], n: usize) -> Vec<f64> {
    let mut g = vec![0.0; n * n];
    let mut r = vec![0.0; n];
    for (a, y, w) in rows {
        for i in 0..n {
            r[i] += w * a[i] * y;
            for j in 0..=i {
                g[i * n + j] += w * a[i] * a[j];
            }
        }
    }
    // Cholesky: g = L Lᵀ in the lower triangle.
    let scale = (0..n).map(|i| g[i * n + i]).fold(0.0, f64::max);
    let mut dead = vec![false; n];
    for j in 0..n {
        let mut d = g[j * n + j];
        for k in 0..j {
            d -= g[j * n + k] * g[j * n + k];
        }
        if d <= 1e-12 * scale || dead[j] {
            dead[j] = true;
            for i in j..n {
                g[i * n + j] = 0.0;
            }
            continue;
        }
        let d = d.sqrt();
        g[j * n + j] = d;
        for i in j + 1..n {
            let mut s = g[i * n + j];
            for k in 0..j {
                s -= g[i * n + k] * g[j * n + k];
            }
            g[i * n + j] = s / d;
        }
    }
    let mut z = vec![0.0; n];
    for i in 0..n {
        if dead[i] {
            continue;
        }
        let mut s = r[i];
        for k in 0..i {
            s -= g[i * n + k] * z[k];
        }
        z[i] = s / g[i * n + i];
    }
    let mut c = vec![0.0; n];
    for i in (0..n).rev() {
        if dead[i] {
            continue;
        }
        let mut s = z[i];
        for k in i + 1..n {
            s -= g[k * n + i] * c[k];
        }
        c[i] = s / g[i * n + i];
    }
    c
}

/// The radial degree n and azimuthal order m of Noll's index j (j ≥ 1); m is negative for the sine
/// terms (odd j).
pub fn noll_to_nm(j: usize) -> (usize, i64) {
    let j = j.max(1);
    let mut n = 0;
    while (n + 1) * (n + 2) / 2 < j {
        n += 1;
    }
    let k = j - n * (n + 1) / 2 - 1;
    let m = if n % 2 == 0 { 2 * k.div_ceil(2) } else { 2 * (k / 2) + 1 };
    let m = m as i64;
    if m != 0 && j % 2 == 1 { (n, -m) } else { (n, m) }
}

/// The Zernike polynomial of Noll index j at pupil point (px, py), with Noll's normalisation (unit RMS
/// over the unit disc): √(n+1) R (m = 0), √(2(n+1)) R cos mθ (even j), √(2(n+1)) R sin mθ (odd j).
pub fn zernike(j: usize, px: f64, py: f64) -> f64 {
    let (n, m) = noll_to_nm(j);
    let ma = m.unsigned_abs() as usize;
    let rho = px.hypot(py);
    let theta = py.atan2(px);
    let mut radial = 0.0;
    for s in 0..=(n - ma) / 2 {
        let num = factorial(n - s);
        let den = factorial(s) * factorial((n + ma) / 2 - s) * factorial((n - ma) / 2 - s);
        let sign = if s % 2 == 0 { 1.0 } else { -1.0 };
        radial += sign * num / den * rho.powi((n - 2 * s) as i32);
    }
    let norm = ((n + 1) as f64).sqrt();
    match m {
        0 => norm * radial,
        m if m > 0 => norm * std::f64::consts::SQRT_2 * radial * (ma as f64 * theta).cos(),
        _ => norm * std::f64::consts::SQRT_2 * radial * (ma as f64 * theta).sin(),
    }
}

fn factorial(n: usize) -> f64 {
    (1..=n).map(|k| k as f64).product()
}

/// Common names of the first Noll terms, for tables (trade names of the aberrations).
pub fn zernike_name(j: usize) -> &'static str {
    match j {
        1 => "piston",
        2 => "tilt x",
        3 => "tilt y",
        4 => "defocus",
        5 => "astigmatism 45°",
        6 => "astigmatism 0°",
        7 => "coma y",
        8 => "coma x",
        9 => "trefoil y",
        10 => "trefoil x",
        11 => "spherical",
        12 => "secondary astigmatism 0°",
        13 => "secondary astigmatism 45°",
        14 => "tetrafoil x",
        15 => "tetrafoil y",
        16 => "secondary coma x",
        17 => "secondary coma y",
        18 => "secondary trefoil x",
        19 => "secondary trefoil y",
        20 => "pentafoil x",
        21 => "pentafoil y",
        22 => "secondary spherical",
        _ => "",
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Noll's Table 1 (J. Opt. Soc. Am. 66, 207 (1976)): the (n, m) of the first terms.
    #[test]
    fn noll_indices_follow_noll_table_1() {
        let expect = [
            (1, (0, 0)),
            (2, (1, 1)),
            (3, (1, -1)),
            (4, (2, 0)),
            (5, (2, -2)),
            (6, (2, 2)),
            (7, (3, -1)),
            (8, (3, 1)),
            (9, (3, -3)),
            (10, (3, 3)),
            (11, (4, 0)),
            (12, (4, 2)),
            (13, (4, -2)),
            (14, (4, 4)),
            (15, (4, -4)),
            (22, (6, 0)),
        ];
        for (j, nm) in expect {
            assert_eq!(noll_to_nm(j), nm, "j = {j}");
        }
    }

    /// Noll's closed forms: Z4 = √3(2ρ² − 1), Z7 = √8(3ρ³ − 2ρ) sin θ, Z11 = √5(6ρ⁴ − 6ρ² + 1).
    #[test]
    fn zernike_terms_match_noll_closed_forms() {
        for (x, y) in [(0.3, 0.4), (-0.7, 0.2), (0.1, -0.9)] {
            let r2: f64 = x * x + y * y;
            let r = r2.sqrt();
            let st = y / r;
            assert!((zernike(4, x, y) - 3f64.sqrt() * (2.0 * r2 - 1.0)).abs() < 1e-14);
            assert!((zernike(7, x, y) - 8f64.sqrt() * (3.0 * r2 * r - 2.0 * r) * st).abs() < 1e-14);
            assert!((zernike(11, x, y) - 5f64.sqrt() * (6.0 * r2 * r2 - 6.0 * r2 + 1.0)).abs() < 1e-14);
        }
    }

    /// Orthonormality over the unit disc (Noll 1976, eq. 3), integrated exactly by Gauss rings.
    #[test]
    fn zernike_terms_are_orthonormal_on_the_disc() {
        let rings = pupil_rings(GAUSS_RINGS);
        for a in 1..=ZERNIKE_TERMS {
            for b in 1..=ZERNIKE_TERMS {
                let mut s = 0.0;
                for &(rho, w) in rings.iter() {
                    for k in 0..GAUSS_ARMS {
                        let phi = std::f64::consts::TAU * (k as f64 + 0.5) / GAUSS_ARMS as f64;
                        let (x, y) = (rho * phi.cos(), rho * phi.sin());
                        s += w / GAUSS_ARMS as f64 * zernike(a, x, y) * zernike(b, x, y);
                    }
                }
                let want = if a == b { 1.0 } else { 0.0 };
                assert!((s - want).abs() < 1e-12, "<Z{a}, Z{b}> = {s}");
            }
        }
    }
}
