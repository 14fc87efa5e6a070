//! Filling the pupil of any object point with real 3-D rays: pupil grids and skew-ray aiming through the
//! real stop.
//!
//! Pupil coordinates are normalised to the stop: (px, py) = (1, 0) is the stop's edge in the sagittal
//! direction (x), (0, 1) its top edge in the meridional plane (y). A [`SkewAimer`] finds, for each pupil
//! coordinate, the real ray from the object point that meets the real stop there, so that the pupil is
//! filled through the stop as built rather than through its paraxial image.

use crate::paraxial::{Object, ParaxialRay};
use crate::pupil::{Aimer, FieldPoint, Pupils, StopAt, passing_measure};
use crate::quadrature::pupil_rings;
use crate::skew::{self, SkewRay};
use crate::skew_batch::{SkewBatch, trace_skew_batch};
use crate::system::Sequence;
use crate::trace::RayError;
use rayon::prelude::*;

/// One sample of the pupil: normalised coordinates and a quadrature weight (weights of a grid sum to 1).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PupilSample {
    /// Sagittal coordinate, −1..1.
    pub px: f64,
    /// Tangential (meridional) coordinate, −1..1.
    pub py: f64,
    /// Share of the pupil's area this sample stands for.
    pub weight: f64,
}

/// How to sample the pupil (our words: rings, grid, Gauss rings; always shown with the ray count).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Grid {
    /// The centre and `rings` concentric rings, ring j holding 6j evenly spaced points (1 + 3n(n+1) rays),
    /// so that every ray stands for about the same area.
    Rings {
        /// Number of rings about the centre.
        rings: usize,
    },
    /// The points of a square grid `across` points wide that fall inside the pupil.
    Grid {
        /// Points across the diameter.
        across: usize,
    },
    /// Gauss–Legendre rings in ρ² times evenly spaced arms: integrates over the pupil's area exactly for
    /// polynomials up to degree 2·rings − 1 in ρ² and harmonics below `arms` in angle (Forbes 1988).
    GaussRings {
        /// Number of rings.
        rings: usize,
        /// Number of arms.
        arms: usize,
    },
}

impl Grid {
    /// What a person reads: the pattern and its ray count, e.g. "rings, 127 rays", "grid, 15 across,
    /// 177 rays", "Gauss rings 6 × 12, 72 rays".
    pub fn label(&self) -> String {
        let n = self.samples().len();
        match *self {
            Grid::Rings { .. } => format!("rings, {n} rays"),
            Grid::Grid { across } => format!("grid, {across} across, {n} rays"),
            Grid::GaussRings { rings, arms } => format!("Gauss rings {rings} × {arms}, {n} rays"),
        }
    }

    /// The grid's samples. Equal weights for rings and the grid (area-uniform approximations), quadrature
    /// weights for Gauss rings.
    pub fn samples(&self) -> Vec<PupilSample> {
        let mut out = Vec::new();
        match *self {
            Grid::Rings { rings } => {
                out.push(PupilSample { px: 0.0, py: 0.0, weight: 1.0 });
                for j in 1..=rings {
                    let r = j as f64 / rings as f64;
                    let count = 6 * j;
                    for k in 0..count {
                        let phi = std::f64::consts::TAU * k as f64 / count as f64;
                        let (s, c) = phi.sin_cos();
                        out.push(PupilSample { px: r * s, py: r * c, weight: 1.0 });
                    }
                }
            }
            Grid::Grid { across } => {
                let n = across.max(1);
                let step = if n == 1 { 0.0 } else { 2.0 / (n - 1) as f64 };
                for i in 0..n {
                    for j in 0..n {
                        let (px, py) = (-1.0 + i as f64 * step, -1.0 + j as f64 * step);
                        let (px, py) = if n == 1 { (0.0, 0.0) } else { (px, py) };
                        if px * px + py * py <= 1.0 + 1e-12 {
                            out.push(PupilSample { px, py, weight: 1.0 });
                        }
                    }
                }
            }
            Grid::GaussRings { rings, arms } => {
                let arms = arms.max(1);
                for &(rho, w) in pupil_rings(rings.max(1)).iter() {
                    for k in 0..arms {
                        let phi = std::f64::consts::TAU * (k as f64 + 0.5) / arms as f64;
                        let (s, c) = phi.sin_cos();
                        out.push(PupilSample { px: rho * s, py: rho * c, weight: w / arms as f64 });
                    }
                }
            }
        }
        if !matches!(self, Grid::GaussRings { .. }) {
            let share = 1.0 / out.len() as f64;
            out.iter_mut().for_each(|s| s.weight = share);
        }
        out
    }
}

/// Aims skew rays from one object point so that they meet the real stop at chosen pupil coordinates.
///
/// The launch has two parameters (u, v): for a finite object the ray's direction is ∝ (u, v, 1) from the
/// object point; for a distant one the ray is parallel to the field's direction and offset (u, v) from the
/// one through the first vertex. The stop coordinates are a smooth function of (u, v); Newton's method on it
/// starts from the chief ray's Jacobian and updates it by Broyden's rule, so that each ray costs a few
/// traces to the stop.
#[derive(Debug, Clone)]
pub struct SkewAimer<'a> {
    seq: &'a Sequence,
    object: Object,
    stop: StopAt,
    stop_semi_mm: f64,
    /// Launch parameters of the chief ray.
    chief: [f64; 2],
    /// d(stop x, stop y)/d(u, v) at the chief ray (diagonal by the system's symmetry).
    jacobian: [f64; 2],
}

/// Largest Newton step count before a ray is declared unreachable.
const MAX_ITERATIONS: usize = 40;

impl<'a> SkewAimer<'a> {
    /// An aimer for the object point at `fraction` of the field (0 on axis, 1 the off-axis point) of
    /// `object`, through the stop of `pupils`.
    pub fn new(seq: &'a Sequence, object: Object, pupils: &Pupils, fraction: f64) -> Result<SkewAimer<'a>, RayError> {
        let point = object.at_field(fraction);
        // The meridional aimer finds the chief ray and, from a nearby aimed ray, the scale of the launch.
        let mut scaled = pupils.clone();
        scaled.chief_start =
            ParaxialRay { y_mm: pupils.chief_start.y_mm * fraction, nu: pupils.chief_start.nu * fraction };
        let meridional = Aimer::new(seq, point, &scaled, FieldPoint::OffAxis);
        let v0 = meridional.parameter_for(0.0, None)?;
        let a = pupils.stop_semi_mm;
        let mut aimer = SkewAimer {
            seq,
            object: point,
            stop: pupils.stop,
            stop_semi_mm: a,
            chief: [0.0, v0],
            jacobian: [1.0, 1.0],
        };
        let h = 1e-3 * a;
        let v1 = meridional.parameter_for(h, Some(v0))?;
        let dv = v1 - v0;
        if dv == 0.0 || !dv.is_finite() {
            return Err(RayError::Missed { surface: aimer.stop_index() });
        }
        let jyy = h / dv;
        // Sagittal: the same launch step sideways; the chief ray's x is 0 by symmetry.
        let (x1, _) = aimer.stop_xy([dv, v0])?;
        let jxx = x1 / dv;
        if jxx == 0.0 || !jxx.is_finite() {
            return Err(RayError::Missed { surface: aimer.stop_index() });
        }
        aimer.jacobian = [jxx, jyy];
        Ok(aimer)
    }

    fn stop_index(&self) -> usize {
        match self.stop {
            StopAt::Surface(i) => i,
            StopAt::Beam => 0,
        }
    }

    /// The object point's launch for parameters (u, v).
    pub fn launch(&self, uv: [f64; 2]) -> SkewRay {
        let z1 = self.seq.steps.first().map_or(0.0, |s| s.z_mm);
        match self.object {
            Object::Finite { z_mm, height_mm } => {
                let norm = (uv[0] * uv[0] + uv[1] * uv[1] + 1.0).sqrt();
                SkewRay {
                    x_mm: 0.0,
                    y_mm: height_mm,
                    z_mm,
                    k: uv[0] / norm,
                    m: uv[1] / norm,
                    l: 1.0 / norm,
                    opl_mm: 0.0,
                }
            }
            Object::Distant { field_deg, .. } => {
                // The same frame as the meridional aimer: above the axis means travelling downward.
                let (s, c) = (-field_deg.to_radians()).sin_cos();
                SkewRay { x_mm: uv[0], y_mm: uv[1] * c, z_mm: z1 - uv[1] * s, k: 0.0, m: s, l: c, opl_mm: 0.0 }
            }
        }
    }

    /// Where the launch (u, v) meets the stop's surface, apertures ignored: (x, y).
    fn stop_xy(&self, uv: [f64; 2]) -> Result<(f64, f64), RayError> {
        let mut ray = self.launch(uv);
        match self.stop {
            StopAt::Beam => {
                let z1 = self.seq.steps.first().map_or(0.0, |s| s.z_mm);
                Ok(ray.at_plane(z1))
            }
            StopAt::Surface(i) => {
                for (j, step) in self.seq.steps[..=i].iter().enumerate() {
                    ray = skew::through_step(step, j, &ray, false)?;
                }
                Ok((ray.x_mm, ray.y_mm))
            }
        }
    }

    /// The launch parameters whose ray meets the stop at normalised pupil coordinates (px, py), converged to
    /// 1e-12 of the stop radius (1e-9 accepted when rounding stalls Newton's method).
    pub fn parameters_for(&self, px: f64, py: f64) -> Result<[f64; 2], RayError> {
        self.parameters_near(px, py, None)
    }

    /// As [`SkewAimer::parameters_for`], with Newton's method started from `start`'s launch parameters and
    /// stop coordinates (a neighbouring aimed ray's) instead of the chief ray's linear guess.
    pub fn parameters_near(
        &self,
        px: f64,
        py: f64,
        start: Option<([f64; 2], (f64, f64))>,
    ) -> Result<[f64; 2], RayError> {
        let a = self.stop_semi_mm;
        let target = (px * a, py * a);
        let tol = 1e-12 * (1.0 + a);
        let [jx, jy] = self.jacobian;
        // Broyden's method on the 2×2 Jacobian, started from the chief ray's.
        let mut jac = [[jx, 0.0], [0.0, jy]];
        let mut uv = match start {
            Some((uv0, (x0, y0))) => [uv0[0] + (target.0 - x0) / jx, uv0[1] + (target.1 - y0) / jy],
            None => [self.chief[0] + target.0 / jx, self.chief[1] + target.1 / jy],
        };
        let (x, y) = self.stop_xy(uv)?;
        let mut r = [x - target.0, y - target.1];
        for _ in 0..MAX_ITERATIONS {
            if r[0].hypot(r[1]) <= tol {
                return Ok(uv);
            }
            let det = jac[0][0] * jac[1][1] - jac[0][1] * jac[1][0];
            if det == 0.0 || !det.is_finite() {
                break;
            }
            let step = [-(jac[1][1] * r[0] - jac[0][1] * r[1]) / det, -(-jac[1][0] * r[0] + jac[0][0] * r[1]) / det];
            let next = [uv[0] + step[0], uv[1] + step[1]];
            let (x, y) = self.stop_xy(next)?;
            let r1 = [x - target.0, y - target.1];
            // Broyden: J += (Δr − J Δuv) Δuvᵀ / |Δuv|².
            let s2 = step[0] * step[0] + step[1] * step[1];
            if s2 > 0.0 {
                let jd = [jac[0][0] * step[0] + jac[0][1] * step[1], jac[1][0] * step[0] + jac[1][1] * step[1]];
                let diff = [r1[0] - r[0] - jd[0], r1[1] - r[1] - jd[1]];
                for (row, d) in jac.iter_mut().zip(diff) {
                    row[0] += d * step[0] / s2;
                    row[1] += d * step[1] / s2;
                }
            }
            (uv, r) = (next, r1);
        }
        if r[0].hypot(r[1]) <= 1e-9 * (1.0 + a) { Ok(uv) } else { Err(RayError::Missed { surface: self.stop_index() }) }
    }

    /// The real ray that meets the stop at normalised pupil coordinates (px, py).
    pub fn ray_for(&self, px: f64, py: f64) -> Result<SkewRay, RayError> {
        self.parameters_for(px, py).map(|uv| self.launch(uv))
    }

    /// The chief ray (through the stop's centre).
    pub fn chief_ray(&self) -> SkewRay {
        self.launch(self.chief)
    }
}

/// A traced pupil grid: for each sample that got through, its sample and the ray after the last surface.
#[derive(Debug, Clone, PartialEq)]
pub struct TracedGrid {
    /// Samples that reached the image space, with their final rays.
    pub rays: Vec<(PupilSample, SkewRay)>,
    /// Samples that were blocked, missed a surface or could not be aimed.
    pub lost: usize,
    /// The chief ray after the last surface (traced with the apertures ignored, so that it is there as
    /// the reference even when it is vignetted).
    pub chief: SkewRay,
}

/// Aims and traces every sample of `grid` from the object point at `fraction` of the field. Rim samples
/// are pulled a hair (1e-12) inside the stop so the stop's own edge never counts as blocking.
pub fn trace_grid(
    seq: &Sequence,
    object: Object,
    pupils: &Pupils,
    fraction: f64,
    grid: &[PupilSample],
) -> Result<TracedGrid, RayError> {
    let aimer = SkewAimer::new(seq, object, pupils, fraction)?;
    let chief = skew::trace_with(seq, aimer.chief_ray(), false)?;
    // Aim every sample, then trace the aimed rays together through the batched kernel.
    let inside = 1.0 - 1e-12;
    let mut aimed = Vec::with_capacity(grid.len());
    let mut batch = SkewBatch::with_capacity(grid.len());
    // Each aim starts from the last aimed neighbour (grids run ring by ring, or row by row).
    let a = aimer.stop_semi_mm;
    let mut near: Option<([f64; 2], (f64, f64))> = None;
    for s in grid {
        let (px, py) = (s.px * inside, s.py * inside);
        if let Ok(uv) = aimer.parameters_near(px, py, near) {
            near = Some((uv, (px * a, py * a)));
            aimed.push(*s);
            batch.push(aimer.launch(uv));
        }
    }
    trace_skew_batch(seq, &mut batch);
    let rays: Vec<(PupilSample, SkewRay)> =
        aimed.into_iter().enumerate().filter_map(|(i, s)| batch.outcome(i).ok().map(|r| (s, r))).collect();
    let lost = grid.len() - rays.len();
    Ok(TracedGrid { rays, lost, chief })
}

/// The share of the real stop's area whose rays from the point at `fraction` of the field get through
/// every clear aperture (1: no vignetting).
///
/// Along an arm from the stop's centre at angle φ the passing stretches of radius are found (8 samples,
/// each pass/block edge bisected to 1e-8 of the radius), giving a(φ) = Σ(ρ₂² − ρ₁²); the share is the
/// mean of a(φ) over the circle, integrated by adaptive Simpson's rule on 8 starting intervals to 1e-7
/// (a(φ) has kinks where the edge passes from one aperture to another, which the adaptive rule finds).
///
/// When the rim of the stop clears every other clear aperture with a margin ([`rim_clears`]) the whole
/// pupil does, and the share is exactly 1 without integrating.
pub fn pupil_transmission(seq: &Sequence, object: Object, pupils: &Pupils, fraction: f64) -> Result<f64, RayError> {
    let aimer = SkewAimer::new(seq, object, pupils, fraction)?;
    if rim_clears_with(seq, &aimer, pupils) {
        return Ok(1.0);
    }
    pupil_transmission_integrated(seq, &aimer, fraction)
}

/// Rim rays per half circle in [`rim_clears`].
const RIM_RAYS: usize = 32;

/// How far inside every other clear aperture the rim's rays must pass for [`rim_clears`]: 0.5% of its
/// radius, four times the most that the rim's image can bulge out between neighbouring rim rays
/// (R(1 − cos(π/64)) ≈ 1.2e-3 R for a circle).
const RIM_MARGIN: f64 = 0.995;

/// Whether every ray from the point at `fraction` of the field through the rim of the real stop (33 rays
/// over the half circle, the other half being its mirror image in the meridional plane) meets every other
/// clear aperture inside 99.5% of its radius. Then the whole pupil gets through: the rays of the stop's
/// disc meet each aperture's plane inside the curve that the rim's rays trace there (the map from the
/// stop to that plane is continuous and one to one away from a caustic), and that curve lies inside the
/// aperture's circle. The chief ray is checked too.
pub fn rim_clears(seq: &Sequence, object: Object, pupils: &Pupils, fraction: f64) -> bool {
    SkewAimer::new(seq, object, pupils, fraction).is_ok_and(|aimer| rim_clears_with(seq, &aimer, pupils))
}

/// The launches of the rays through the rim of the real stop ([`RIM_RAYS`] + 1 of them over the half
/// circle, a hair inside the edge), each aimed from its neighbour; `None` for a ray that cannot be aimed.
fn rim_rays<'a>(aimer: &'a SkewAimer<'a>) -> impl Iterator<Item = Option<SkewRay>> + 'a {
    rim_at(aimer, (0..=RIM_RAYS).map(|j| std::f64::consts::PI * j as f64 / RIM_RAYS as f64))
}

/// The launches of `count` rays evenly spaced round the whole rim of the real stop, from its top edge
/// (φ = 0, pupil coordinates (0, 1)) towards +x (φ = π/2, (1, 0)), each a hair (1e-12 of the stop's
/// radius) inside the edge so that the stop's own edge never counts as blocking, and each aimed from its
/// neighbour; `None` for a ray that cannot be aimed. The rays that [`rim_clears`] checks over the half
/// circle come from the same aiming.
pub fn rim_around<'a>(aimer: &'a SkewAimer<'a>, count: usize) -> impl Iterator<Item = Option<SkewRay>> + 'a {
    rim_at(aimer, (0..count).map(move |j| std::f64::consts::TAU * j as f64 / count as f64))
}

/// The launches of the rays through the rim of the real stop at the angles `phis`, a hair inside the
/// edge, each aimed from the one before.
fn rim_at<'a>(
    aimer: &'a SkewAimer<'a>,
    phis: impl Iterator<Item = f64> + 'a,
) -> impl Iterator<Item = Option<SkewRay>> + 'a {
    let inside = 1.0 - 1e-12;
    let a = aimer.stop_semi_mm;
    let mut near: Option<([f64; 2], (f64, f64))> = None;
    phis.map(move |phi| {
        let (px, py) = (inside * phi.sin(), inside * phi.cos());
        let uv = aimer.parameters_near(px, py, near).ok()?;
        near = Some((uv, (px * a, py * a)));
        Some(aimer.launch(uv))
    })
}

/// [`rim_clears`] with an aimer already made for the point.
pub fn rim_clears_with(seq: &Sequence, aimer: &SkewAimer, pupils: &Pupils) -> bool {
    let stop = match pupils.stop {
        StopAt::Surface(i) => Some(i),
        StopAt::Beam => None,
    };
    let clears = |ray: SkewRay| -> bool {
        let mut ray = ray;
        for (j, step) in seq.steps.iter().enumerate() {
            match skew::through_step(step, j, &ray, false) {
                Ok(next) => ray = next,
                Err(_) => return false,
            }
            if Some(j) != stop
                && step.semi_aperture_mm.is_finite()
                && ray.x_mm.hypot(ray.y_mm) > RIM_MARGIN * step.semi_aperture_mm
            {
                return false;
            }
        }
        true
    };
    if !clears(aimer.chief_ray()) {
        return false;
    }
    rim_rays(aimer).all(|ray| ray.is_some_and(clears))
}

/// The first clear aperture (its surface index) that stops a ray through the rim of the real stop from
/// the point at `fraction` of the field, going round the rim (`None`: the whole rim gets through).
pub fn rim_clipper(seq: &Sequence, object: Object, pupils: &Pupils, fraction: f64) -> Option<usize> {
    let aimer = SkewAimer::new(seq, object, pupils, fraction).ok()?;
    rim_rays(&aimer)
        .flatten()
        .filter_map(|ray| match skew::trace(seq, ray) {
            Err(RayError::Blocked { surface, .. }) => Some(surface),
            _ => None,
        })
        .min()
}

/// The largest share of the field (0 to 1 of the object height or field angle) whose stop rim clears
/// every other aperture ([`rim_clears`]), so that its whole pupil passes; found by bisection to 1e-4 of
/// the field. `None` when even the axis does not clear.
pub fn unclipped_field(seq: &Sequence, object: Object, pupils: &Pupils) -> Option<f64> {
    if rim_clears(seq, object, pupils, 1.0) {
        return Some(1.0);
    }
    clipped_field_limit(seq, object, pupils)
}

/// [`unclipped_field`] for a field already known not to clear at its full size.
pub(crate) fn clipped_field_limit(seq: &Sequence, object: Object, pupils: &Pupils) -> Option<f64> {
    if !rim_clears(seq, object, pupils, 0.0) {
        return None;
    }
    let (mut lo, mut hi) = (0.0, 1.0);
    while hi - lo > 1e-4 {
        let mid = 0.5 * (lo + hi);
        if rim_clears(seq, object, pupils, mid) {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    Some(lo)
}

/// The share by integration over arms (see [`pupil_transmission`]), with no shortcut.
pub fn pupil_transmission_integrated(seq: &Sequence, aimer: &SkewAimer, fraction: f64) -> Result<f64, RayError> {
    pupil_transmission_settled(seq, aimer, fraction).map(|(share, _)| share)
}

/// [`pupil_transmission_integrated`] and whether the integral settled (every part of it met its error
/// estimate within [`ARMS`] arms); when not, the arms disagree from one to the next (a pinhole far smaller
/// than the beam) and the share is approximate.
pub fn pupil_transmission_settled(seq: &Sequence, aimer: &SkewAimer, fraction: f64) -> Result<(f64, bool), RayError> {
    if fraction == 0.0 {
        // The on-axis point's pupil is the same along every arm (rotational symmetry).
        return Ok((arm_share(seq, aimer, 0.0).clamp(0.0, 1.0), true));
    }
    let arm = |phi: f64| arm_share(seq, aimer, phi);
    let (total, settled) = adaptive_simpson_periodic(&arm, 8, 1e-7, ARMS);
    Ok(((total / std::f64::consts::TAU).clamp(0.0, 1.0), settled))
}

/// Σ(ρ₂² − ρ₁²) over the stretches of the arm at angle `phi` whose rays get through, each pass/block edge
/// found on the rays' clearance ([`skew::clearance`]).
fn arm_share(seq: &Sequence, aimer: &SkewAimer, phi: f64) -> f64 {
    let (sin, cos) = phi.sin_cos();
    let inside = 1.0 - 1e-12;
    let clearance = |rho: f64| {
        let r = rho * inside;
        aimer.ray_for(r * sin, r * cos).map_or(-1.0, |ray| skew::clearance(seq, ray))
    };
    passing_measure((0.0, 1.0), 8, 1e-8, clearance, |a, b| b * b - a * a)
}

/// The most arms the integral over φ traces. A smooth share settles in a few (the demos take 2 to 40), a
/// kink where an iris's rim starts to clip in up to about 380 (two irises at 8°); a share that jumps about from arm to arm (a
/// pinhole far smaller than the beam, met by only some arms' samples) would otherwise refine to the full
/// depth everywhere, 2¹¹ arms an interval, seconds of tracing for a figure no finer than its arms.
const ARMS: usize = 384;

/// How many parts one round of refinement splits, their new arms traced together on every core.
const SPLITS_PER_ROUND: usize = 8;

/// A part of the interval in adaptive Simpson's rule, its ends', midpoint's and quarter points' values
/// known: both halves' Simpson sums and the error estimate they give.
struct Part {
    a: f64,
    b: f64,
    /// f at a, (3a + b)/4, m, (a + 3b)/4, b.
    v: [f64; 5],
    left: f64,
    right: f64,
    error: f64,
    tol: f64,
    depth: u32,
}

impl Part {
    /// The part [a, b] with its five values and its whole-interval Simpson sum.
    fn new(a: f64, b: f64, v: [f64; 5], whole: f64, tol: f64, depth: u32) -> Part {
        let left = 0.5 * (b - a) / 6.0 * (v[0] + 4.0 * v[1] + v[2]);
        let right = 0.5 * (b - a) / 6.0 * (v[2] + 4.0 * v[3] + v[4]);
        Part { a, b, v, left, right, error: left + right - whole, tol, depth }
    }

    fn settled(&self) -> bool {
        self.depth == 0 || self.error.abs() <= 15.0 * self.tol
    }

    /// The Richardson-corrected sum (Lyness 1969).
    fn value(&self) -> f64 {
        self.left + self.right + self.error / 15.0
    }
}

/// ∫₀^2π f(φ) dφ of a periodic `f` by adaptive Simpson's rule (Lyness 1969) from `start` equal intervals,
/// to an error of about `density` per radian: each round splits the unsettled parts with the largest error
/// estimates (at most [`SPLITS_PER_ROUND`], the earliest made among equals), their new values computed on
/// every core, until every part settles (or has been halved ten times) or `budget` evaluations are spent;
/// open parts then keep their corrected estimates, and the second value is false. The parts are summed in
/// order of φ, so the result depends on `f` alone, not on the number of threads.
fn adaptive_simpson_periodic(
    f: &(dyn Fn(f64) -> f64 + Sync),
    start: usize,
    density: f64,
    budget: usize,
) -> (f64, bool) {
    let h = std::f64::consts::TAU / start as f64;
    let values: Vec<f64> = (0..4 * start).into_par_iter().map(|j| f(0.25 * h * j as f64)).collect();
    let mut spent = values.len();
    let mut parts: Vec<Part> = (0..start)
        .map(|k| {
            let v = std::array::from_fn(|i| values[(4 * k + i) % (4 * start)]);
            let whole = h / 6.0 * (v[0] + 4.0 * v[2] + v[4]);
            Part::new(k as f64 * h, (k + 1) as f64 * h, v, whole, density * h, 10)
        })
        .collect();
    while spent + 4 <= budget {
        let mut open: Vec<usize> = (0..parts.len()).filter(|&i| !parts[i].settled()).collect();
        if open.is_empty() {
            break;
        }
        open.sort_by(|&i, &j| parts[j].error.abs().total_cmp(&parts[i].error.abs()).then(i.cmp(&j)));
        open.truncate(SPLITS_PER_ROUND.min((budget - spent) / 4));
        open.sort_unstable();
        let xs: Vec<f64> = open
            .iter()
            .flat_map(|&i| {
                let (a, b) = (parts[i].a, parts[i].b);
                let q = 0.125 * (b - a);
                [a + q, a + 3.0 * q, a + 5.0 * q, a + 7.0 * q]
            })
            .collect();
        let new: Vec<f64> = xs.par_iter().map(|&x| f(x)).collect();
        spent += new.len();
        for (k, &i) in open.iter().enumerate().rev() {
            let p = parts.swap_remove(i);
            let n = &new[4 * k..4 * k + 4];
            let m = 0.5 * (p.a + p.b);
            let (t, d) = (0.5 * p.tol, p.depth - 1);
            parts.push(Part::new(p.a, m, [p.v[0], n[0], p.v[1], n[1], p.v[2]], p.left, t, d));
            parts.push(Part::new(m, p.b, [p.v[2], n[2], p.v[3], n[3], p.v[4]], p.right, t, d));
        }
    }
    parts.sort_by(|x, y| x.a.total_cmp(&y.a));
    (parts.iter().fold(0.0, |sum, p| sum + p.value()), parts.iter().all(Part::settled))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::material::Material;
    use crate::system::{Shape, Surface, System};

    #[test]
    fn grids_have_the_advertised_points() {
        assert_eq!(Grid::Rings { rings: 6 }.samples().len(), 1 + 3 * 6 * 7);
        let square = Grid::Grid { across: 11 }.samples();
        assert!(square.iter().all(|s| s.px.hypot(s.py) <= 1.0 + 1e-12));
        assert!(square.iter().any(|s| (s.py - 1.0).abs() < 1e-15));
        for g in [Grid::Rings { rings: 3 }, Grid::Grid { across: 9 }, Grid::GaussRings { rings: 4, arms: 8 }] {
            let w: f64 = g.samples().iter().map(|s| s.weight).sum();
            assert!((w - 1.0).abs() < 1e-14, "{g:?}");
        }
    }

    /// The polar grid integrates ρ⁴cos²φ over the unit disk exactly: ∫ρ⁴cos²φ dA / π = 1/6.
    #[test]
    fn polar_grid_integrates_exactly() {
        let s = Grid::GaussRings { rings: 3, arms: 6 }.samples();
        let m: f64 = s
            .iter()
            .map(|p| p.weight * (p.px * p.px + p.py * p.py).powi(2) * p.py * p.py / (p.px * p.px + p.py * p.py))
            .sum();
        assert!((m - 1.0 / 6.0).abs() < 1e-15, "{m}");
    }

    fn singlet_with_front_stop() -> Sequence {
        System {
            object_medium: Material::AIR,
            surfaces: vec![
                Surface::aperture(80.0, 4.0).in_element(0),
                Surface::refracting(100.0, Shape::sphere(60.0), Material::Constant(1.6)).with_semi_aperture(15.0),
                Surface::refracting(106.0, Shape::sphere(-90.0), Material::AIR).with_semi_aperture(15.0),
            ],
        }
        .at(550.0)
        .unwrap()
    }

    /// Every aimed ray meets the real stop where it was asked to, off axis and in every direction.
    #[test]
    fn aimed_rays_meet_the_real_stop() {
        let seq = System {
            object_medium: Material::AIR,
            surfaces: vec![
                Surface::refracting(50.0, Shape::sphere(40.0), Material::Constant(1.7)).with_semi_aperture(20.0),
                Surface::refracting(56.0, Shape::sphere(-70.0), Material::AIR).with_semi_aperture(20.0),
                Surface::aperture(70.0, 3.0).in_element(1),
                Surface::refracting(80.0, Shape::conic(30.0, -0.6), Material::Constant(1.5)).with_semi_aperture(20.0),
                Surface::refracting(85.0, Shape::Flat, Material::AIR).with_semi_aperture(20.0),
            ],
        }
        .at(550.0)
        .unwrap();
        for object in [
            Object::Finite { z_mm: -100.0, height_mm: 12.0 },
            Object::Distant { field_deg: 8.0, beam_diameter_mm: 30.0 },
        ] {
            let pupils = Pupils::find(&seq, &object).unwrap();
            assert_eq!(pupils.stop, StopAt::Surface(2));
            let aimer = SkewAimer::new(&seq, object, &pupils, 1.0).unwrap();
            for (px, py) in [(0.0, 0.0), (1.0, 0.0), (0.0, -1.0), (0.6, 0.8), (-0.3, 0.2), (-0.7, -0.7)] {
                let mut ray = aimer.ray_for(px, py).unwrap();
                for (j, step) in seq.steps[..=2].iter().enumerate() {
                    ray = skew::through_step(step, j, &ray, false).unwrap();
                }
                assert!(
                    (ray.x_mm - 3.0 * px).abs() < 1e-11 && (ray.y_mm - 3.0 * py).abs() < 1e-11,
                    "{object:?} {px} {py}"
                );
            }
        }
    }

    /// The rays round the whole rim meet the real stop on its edge (a hair inside), evenly spaced in
    /// angle from the top edge towards +x, off axis as on axis.
    #[test]
    fn rim_rays_go_round_the_whole_rim() {
        let seq = singlet_with_front_stop();
        let object = Object::Finite { z_mm: 0.0, height_mm: 10.0 };
        let pupils = Pupils::find(&seq, &object).unwrap();
        for fraction in [0.0, 1.0] {
            let aimer = SkewAimer::new(&seq, object, &pupils, fraction).unwrap();
            let rays: Vec<SkewRay> = rim_around(&aimer, 64).map(Option::unwrap).collect();
            assert_eq!(rays.len(), 64);
            for (j, ray) in rays.into_iter().enumerate() {
                let at_stop = skew::through_step(&seq.steps[0], 0, &ray, false).unwrap();
                let phi = std::f64::consts::TAU * j as f64 / 64.0;
                // The stop's radius is 4 mm; the aim converges to 1e-12 of it and sits 1e-12 inside.
                assert!((at_stop.x_mm - 4.0 * phi.sin()).abs() < 1e-10, "{fraction} {j}");
                assert!((at_stop.y_mm - 4.0 * phi.cos()).abs() < 1e-10, "{fraction} {j}");
            }
        }
    }

    /// The sagittal rays of an off-axis point are mirror images across the meridional plane.
    #[test]
    fn grids_keep_the_meridional_symmetry() {
        let seq = singlet_with_front_stop();
        let object = Object::Finite { z_mm: 0.0, height_mm: 10.0 };
        let pupils = Pupils::find(&seq, &object).unwrap();
        let g = trace_grid(&seq, object, &pupils, 1.0, &Grid::Rings { rings: 4 }.samples()).unwrap();
        assert_eq!(g.lost, 0);
        let at = |px: f64, py: f64| {
            g.rays
                .iter()
                .find(|(s, _)| (s.px - px).abs() < 1e-12 && (s.py - py).abs() < 1e-12)
                .unwrap()
                .1
                .at_plane(300.0)
        };
        for (s, _) in &g.rays {
            let (a, b) = (at(s.px, s.py), at(-s.px, s.py));
            assert!((a.0 + b.0).abs() < 1e-11 && (a.1 - b.1).abs() < 1e-11);
        }
    }

    /// Two irises of semi-apertures `a1` and `a2`, `d` apart, and nothing else.
    fn two_irises(a1: f64, a2: f64, d: f64) -> Sequence {
        System {
            object_medium: Material::AIR,
            surfaces: vec![Surface::aperture(100.0, a1), Surface::aperture(100.0 + d, a2)],
        }
        .at(550.0)
        .unwrap()
    }

    /// Two irises and nothing between them: a beam at angle θ sees the second iris projected onto the
    /// first, shifted by d tan θ, so the share of the stop that gets through is the overlap of two circles
    /// over the stop's area (the lens-shaped area of two intersecting circles, a plane-geometry exact case).
    #[test]
    fn vignetting_by_two_irises_is_the_overlap_of_two_circles() {
        let (a1, a2, d) = (4.0f64, 5.0f64, 40.0f64);
        let seq = two_irises(a1, a2, d);
        for theta in [0.0f64, 2.0, 5.0, 8.0, 12.0] {
            let object = Object::Distant { field_deg: theta, beam_diameter_mm: 30.0 };
            let pupils = Pupils::find(&seq, &object).unwrap();
            assert_eq!(pupils.stop, StopAt::Surface(0));
            let got = pupil_transmission(&seq, object, &pupils, 1.0).unwrap();
            let s = d * theta.to_radians().tan();
            let overlap = if s >= a1 + a2 {
                0.0
            } else if s <= (a1 - a2).abs() {
                std::f64::consts::PI * a1.min(a2).powi(2)
            } else {
                let alpha = ((s * s + a1 * a1 - a2 * a2) / (2.0 * s * a1)).acos();
                let beta = ((s * s + a2 * a2 - a1 * a1) / (2.0 * s * a2)).acos();
                a1 * a1 * (alpha - alpha.sin() * alpha.cos()) + a2 * a2 * (beta - beta.sin() * beta.cos())
            };
            let want = overlap / (std::f64::consts::PI * a1 * a1);
            // Measured: below 2e-9, and 6.9e-7 at 8°.
            assert!((got - want).abs() < 1e-5, "θ {theta}: {got} vs {want}");
        }
    }

    /// Two irises 40 mm apart (a1 = 4, a2 = 5 mm): at 5° the second clips the beam the first admits, and
    /// the field passes whole up to the angle where the first's rim, shifted by d tan θ, meets 99.5% of
    /// the second's radius: tan θ = (0.995 a2 − a1)/d (plane geometry).
    #[test]
    fn the_clipping_iris_is_named_and_the_unclipped_field_found() {
        let (a1, a2, d) = (4.0f64, 5.0f64, 40.0f64);
        let seq = two_irises(a1, a2, d);
        let object = Object::Distant { field_deg: 5.0, beam_diameter_mm: 30.0 };
        let pupils = Pupils::find(&seq, &object).unwrap();
        assert_eq!(rim_clipper(&seq, object, &pupils, 1.0), Some(1));
        let f = unclipped_field(&seq, object, &pupils).unwrap();
        let want = ((RIM_MARGIN * a2 - a1) / d).atan().to_degrees() / 5.0;
        assert!((f - want).abs() < 2e-4, "{f} vs {want}");
    }

    /// The rim certificate against the integral: two irises 40 mm apart, a1 = 4, a2 = 5 mm. The rim of the
    /// first, shifted by s = d tan θ, clears the second with the 0.5% margin exactly when s < 0.995 a2 − a1
    /// (plane geometry); there the integrated share is 1 too, and beyond it the certificate refuses.
    #[test]
    fn the_rim_certificate_agrees_with_the_integral() {
        let (a1, a2, d) = (4.0f64, 5.0f64, 40.0f64);
        let seq = two_irises(a1, a2, d);
        for theta in [0.0f64, 0.5, 1.0, 1.35, 1.45, 2.0, 5.0] {
            let object = Object::Distant { field_deg: theta, beam_diameter_mm: 30.0 };
            let pupils = Pupils::find(&seq, &object).unwrap();
            let s = d * theta.to_radians().tan();
            let clears = rim_clears(&seq, object, &pupils, 1.0);
            assert_eq!(clears, s < RIM_MARGIN * a2 - a1, "θ {theta}: shift {s} mm");
            let aimer = SkewAimer::new(&seq, object, &pupils, 1.0).unwrap();
            let integrated = pupil_transmission_integrated(&seq, &aimer, 1.0).unwrap();
            if clears {
                assert!((integrated - 1.0).abs() < 1e-9, "θ {theta}: {integrated}");
            }
        }
    }
}
