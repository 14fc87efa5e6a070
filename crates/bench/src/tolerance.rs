//! The tolerance run: how far each lens and mirror may be off its place before the image suffers.
//!
//! Three parts, all read from the one [`Evaluation`] of a bench, none compiling or validating it again:
//!
//! 1. **Sensitivities** ([`sensitivities`]), per part, by symmetric ± differences: the final image's
//!    axial shift per mm of the part's position along the rail (the cheap path, [`Placer`]: paraxial, so
//!    exact to first order), its lateral shift per 0.1 mm of decentre and per 0.1° of tilt (the exact
//!    3-D trace of decentred and tilted surfaces, `lumenrail_optics::pose`), and the growth of the
//!    on-axis RMS spot on the screen for each (at a well-aligned bench the growth is second order, with
//!    zero slope, which is why it is given as the mean of the + and − moves less the nominal).
//! 2. **The budget** ([`Budget::of`]): ± limits per part (the bench file's `tolerances`, else common shop
//!    practice), each contribution sᵢaᵢ, root-sum-square √Σ(sᵢaᵢ)² and worst-case Σ|sᵢaᵢ| stacks of
//!    image position and lateral image shift, compared with the depth of focus ±2λN² (common practice:
//!    the quarter-wave rule) and the room left on the screen, ranked by which tolerance dominates.
//! 3. **Monte Carlo** ([`monte_carlo`]): seeded random benches within the limits (uniform, or normal
//!    with σ = a/3 truncated at ±a), every error at once, with an optional refocus that moves the screen
//!    to the best focus of each trial; the 50/90/98 % values of RMS spot and image shift and a histogram.
//!    Trials run on rayon in fixed blocks, each block with its own random stream drawn from the seed,
//!    so the result is the same on any number of threads.
//!
//! **The model of a trial.** The rays are the on-axis bundle of the nominal bench, aimed once through
//! its real stop (the evaluation's ring count of Gauss rings in ρ², [`ARMS`] azimuths each), and kept
//! as launched for every trial: the object and the light leaving it do not move. Each part is moved
//! along the rail (its surfaces shifted, as the cheap path does), decentred and tilted about its pivot;
//! the rays are traced exactly through the moved surfaces and meet the screen, which stays where it
//! is (the image is measured in the screen's frame). Clear apertures are not checked in a trial: the
//! limits are small, and a ray clipped by a moved rim would make the spot jump rather than grow. Axial
//! image positions are paraxial (tilts and decentres move them only at second order).

use crate::arrange::Progress;
use crate::evaluation::{Evaluation, Placer};
use crate::model::{Bench, PartKind, PartTolerance, Pivot};
use lumenrail_optics::paraxial::{self, Object};
use lumenrail_optics::pose::{DVec3, Pose};
use lumenrail_optics::pupil::{Aimer, FieldPoint};
use lumenrail_optics::quadrature::pupil_rings;
use lumenrail_optics::skew::SkewRay;
use lumenrail_optics::skew_batch::{SkewBatch, trace_skew_batch_posed};
use lumenrail_optics::system::Sequence;
use rayon::prelude::*;
use serde::Serialize;
use std::fmt::Write as _;
use std::sync::atomic::Ordering;

/// Azimuths per ring of the tolerance run's on-axis bundle: equally spaced angles integrate every
/// azimuthal harmonic of the spot up to order 11 exactly (a decentred or tilted bench adds harmonics of
/// low order: coma-like and astigmatism-like terms).
pub const ARMS: usize = 12;

/// The move of the sensitivities' unit for position, mm.
pub const POSITION_STEP_MM: f64 = 1.0;
/// The move of the sensitivities' unit for decentre, mm.
pub const DECENTRE_STEP_MM: f64 = 0.1;
/// The move of the sensitivities' unit for tilt, degrees.
pub const TILT_STEP_DEG: f64 = 0.1;
/// The symmetric differences that give the slopes are taken over ±this share of each unit and half of it
/// (then extrapolated: see `richardson`): the error left is of fourth order in the step, and rounding
/// of rail positions near 1 m divided by the step stays near 1e-10 relative.
const SLOPE_STEP: f64 = 1e-3;

/// The default number of Monte Carlo trials.
pub const DEFAULT_TRIALS: usize = 1000;
/// The default seed.
pub const DEFAULT_SEED: u64 = 1;
/// Trials per block of the Monte Carlo: each block draws from its own stream, so that how blocks are
/// shared among threads changes nothing.
pub const BLOCK: usize = 64;
/// Bars of the Monte Carlo's histogram.
pub const HISTOGRAM_BINS: usize = 24;

/// Why a tolerance run cannot be made.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum ToleranceError {
    /// The bench cannot be traced.
    #[error("the bench cannot be traced: {0}")]
    Untraced(String),
    /// The on-axis bundle cannot be traced, so there is no spot to watch.
    #[error("the on-axis light cannot be traced to an image: {0}")]
    NoSpot(String),
    /// No lens or mirror to tolerance.
    #[error("the bench has no lens or mirror to tolerance")]
    NoParts,
    /// The run was cancelled.
    #[error("cancelled")]
    Cancelled,
}

/// One lens's or mirror's ± limits, as the run uses them.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Limits {
    /// The part's index in `bench.parts`.
    pub part: usize,
    /// The part's name.
    pub name: String,
    /// ± position along the rail, mm.
    pub position_mm: f64,
    /// ± decentre on each of x and y, mm.
    pub decentre_mm: f64,
    /// ± tilt about each of x and y, degrees.
    pub tilt_deg: f64,
    /// The point the part tilts about.
    #[serde(skip)]
    pub pivot: Pivot,
    /// The pivot in words.
    pub pivot_words: String,
    /// Whether these are common shop practice (the bench file gives none for the part).
    pub common_practice: bool,
}

/// The limits of every lens and mirror, in rail order: the bench file's entry, else common shop practice.
pub fn limits(bench: &Bench) -> Vec<Limits> {
    bench
        .rail_order()
        .into_iter()
        .filter(|&i| tolerable(&bench.parts[i].kind))
        .map(|i| {
            let name = &bench.parts[i].name;
            let given = bench.tolerances.iter().find(|t| &t.part == name);
            let t = given.cloned().unwrap_or_else(|| PartTolerance::common(name));
            Limits {
                part: i,
                name: name.clone(),
                position_mm: t.position_mm,
                decentre_mm: t.decentre_mm,
                tilt_deg: t.tilt_deg,
                pivot: t.pivot,
                pivot_words: t.pivot.words(),
                common_practice: given.is_none(),
            }
        })
        .collect()
}

/// Whether a part carries tolerances: lenses and mirrors.
pub fn tolerable(kind: &PartKind) -> bool {
    matches!(
        kind,
        PartKind::ThinLens { .. } | PartKind::Singlet { .. } | PartKind::Doublet { .. } | PartKind::Mirror { .. }
    )
}

/// One part's errors in one trial.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct PartErrors {
    /// Move along the rail, mm.
    pub dz_mm: f64,
    /// Decentre along x, mm.
    pub dx_mm: f64,
    /// Decentre along y, mm.
    pub dy_mm: f64,
    /// Tilt about x, degrees.
    pub tilt_x_deg: f64,
    /// Tilt about y, degrees.
    pub tilt_y_deg: f64,
}

/// What one trial gives.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TrialFigures {
    /// The paraxial final image's rail position, mm (`None`: at infinity).
    pub image_at_mm: Option<f64>,
    /// The spot's centroid on the screen, mm from the axis: (x, y).
    pub centroid_mm: (f64, f64),
    /// RMS spot radius about the centroid on the screen, mm.
    pub rms_mm: f64,
    /// The plane of least RMS radius (`None`: the light leaves collimated), mm.
    pub best_focus_at_mm: Option<f64>,
    /// The RMS radius there, mm.
    pub best_rms_mm: Option<f64>,
}

/// A part as the trials move it.
#[derive(Debug, Clone)]
struct Moved {
    /// Its surfaces in the sequence.
    surfaces: Vec<usize>,
    /// Its nominal rail position, mm.
    at_mm: f64,
    /// Its pivot relative to (0, 0, at_mm), mm.
    pivot_mm: DVec3,
}

/// The compiled bench ready for trials: the primary sequence with open apertures, the nominal on-axis
/// bundle as launched, and the screen's plane.
#[derive(Debug, Clone)]
pub struct Perturber {
    seq: Sequence,
    object: Object,
    parts: Vec<Moved>,
    launch: SkewBatch,
    weights: Vec<f64>,
    /// The plane the spot is measured on, mm.
    pub plane_mm: f64,
    /// The nominal bench's figures.
    pub nominal: TrialFigures,
}

impl Perturber {
    /// Prepares the trials for `evaluation`'s bench with `limits` (their pivots): the on-axis bundle is
    /// aimed through the real stop once, with the evaluation's ring count; the spot is measured on the
    /// last screen (else the final paraxial image's plane).
    pub fn new(evaluation: &Evaluation, limits: &[Limits]) -> Result<Perturber, ToleranceError> {
        let untraced = || ToleranceError::Untraced(evaluation.report.trace_failure.clone().unwrap_or_default());
        let traced = evaluation.traced.as_ref().ok_or_else(untraced)?;
        let analysis = &traced.analysis;
        let nominal_seq = analysis.seq();
        let pupils = analysis.pupils().as_ref().map_err(|e| ToleranceError::NoSpot(e.to_string()))?;
        let rings = match &analysis.spot {
            Some(Ok(s)) => s.rings,
            Some(Err(e)) => return Err(ToleranceError::NoSpot(e.to_string())),
            None => return Err(ToleranceError::NoSpot("no spot was traced".into())),
        };
        let object = traced.compiled.object;
        let bench = &evaluation.bench;
        let image_at = analysis.images().last().and_then(|i| i.at_mm);
        let plane_mm =
            evaluation.screens.last().map(|&i| bench.parts[i].at_mm).or(image_at).ok_or_else(|| {
                ToleranceError::NoSpot("the final image is at infinity and no screen is placed".into())
            })?;
        // The bundle: each ring's meridional ray aimed through the real stop, turned about the axis.
        let aimer = Aimer::new(nominal_seq, object, pupils, FieldPoint::OnAxis);
        let mut launch = SkewBatch::with_capacity(rings * ARMS);
        let mut weights = Vec::with_capacity(rings * ARMS);
        let mut guess = None;
        for &(rho, w) in pupil_rings(rings).iter() {
            let Ok(p) = aimer.parameter_for(rho * pupils.stop_semi_mm, guess) else { continue };
            guess = Some(p);
            let ray = aimer.launch(p);
            // The nominal bench decides which rings get through, as the evaluation's own spot does.
            if lumenrail_optics::trace::trace(nominal_seq, ray).is_err() {
                continue;
            }
            for j in 0..ARMS {
                let (s, c) = (std::f64::consts::TAU * j as f64 / ARMS as f64).sin_cos();
                launch.push(SkewRay {
                    x_mm: ray.y_mm * s,
                    y_mm: ray.y_mm * c,
                    z_mm: ray.z_mm,
                    k: ray.m * s,
                    m: ray.m * c,
                    l: ray.l,
                    opl_mm: 0.0,
                });
                weights.push(w / ARMS as f64);
            }
        }
        let total: f64 = weights.iter().sum();
        if launch.is_empty() || total <= 0.0 {
            return Err(ToleranceError::NoSpot("no ring of the on-axis bundle gets through".into()));
        }
        weights.iter_mut().for_each(|w| *w /= total);
        let mut seq = nominal_seq.clone();
        for s in &mut seq.steps {
            s.semi_aperture_mm = f64::INFINITY;
        }
        let parts = limits
            .iter()
            .map(|l| {
                let part = &bench.parts[l.part];
                let centre = 0.5 * part.kind.thickness_mm();
                let pivot_mm = match l.pivot {
                    Pivot::Centre => DVec3::new(0.0, 0.0, centre),
                    Pivot::FirstVertex => DVec3::ZERO,
                    Pivot::Carrier { below_axis_mm } => DVec3::new(0.0, -below_axis_mm, centre),
                };
                let surfaces = (0..seq.steps.len()).filter(|&k| seq.steps[k].element == l.part).collect();
                Moved { surfaces, at_mm: part.at_mm, pivot_mm }
            })
            .collect();
        let mut perturber = Perturber {
            seq,
            object,
            parts,
            launch,
            weights,
            plane_mm,
            nominal: TrialFigures {
                image_at_mm: None,
                centroid_mm: (0.0, 0.0),
                rms_mm: 0.0,
                best_focus_at_mm: None,
                best_rms_mm: None,
            },
        };
        perturber.nominal = perturber
            .trial(&[])
            .ok_or_else(|| ToleranceError::NoSpot("a ray of the on-axis bundle misses a surface".into()))?;
        Ok(perturber)
    }

    /// How many rays each trial traces.
    pub fn rays(&self) -> usize {
        self.launch.len()
    }

    /// The figures of one trial: `errors[j]` moves the part of limits entry `j` (missing entries: no
    /// error). `None` when a ray misses a surface or is totally reflected.
    pub fn trial(&self, errors: &[PartErrors]) -> Option<TrialFigures> {
        let mut seq = self.seq.clone();
        let mut poses: Vec<Pose> = Vec::new();
        for (moved, e) in self.parts.iter().zip(errors) {
            if e.dz_mm != 0.0 {
                for &k in &moved.surfaces {
                    seq.steps[k].z_mm += e.dz_mm;
                }
            }
            let pivot = moved.pivot_mm + DVec3::new(0.0, 0.0, moved.at_mm + e.dz_mm);
            let pose = Pose::of_errors(e.dx_mm, e.dy_mm, e.tilt_x_deg.to_radians(), e.tilt_y_deg.to_radians(), pivot);
            if !pose.is_identity() {
                if poses.is_empty() {
                    poses = vec![Pose::IDENTITY; seq.steps.len()];
                }
                for &k in &moved.surfaces {
                    poses[k] = pose;
                }
            }
        }
        let image_at_mm = paraxial::images(&seq, &self.object).last().and_then(|i| i.at_mm);
        let mut batch = self.launch.clone();
        trace_skew_batch_posed(&seq, &poses, &mut batch);
        let z = self.plane_mm;
        let mut points = Vec::with_capacity(batch.len());
        for i in 0..batch.len() {
            let r = batch.outcome(i).ok()?;
            if r.l == 0.0 {
                return None;
            }
            let (x, y) = r.at_plane(z);
            points.push(Landing { x, y, sx: r.k / r.l, sy: r.m / r.l });
        }
        let w = &self.weights;
        let mean = |f: &dyn Fn(&Landing) -> f64| points.iter().zip(w).map(|(p, w)| w * f(p)).sum::<f64>();
        let (cx, cy, sx, sy) = (mean(&|p| p.x), mean(&|p| p.y), mean(&|p| p.sx), mean(&|p| p.sy));
        let rms_mm = mean(&|p| (p.x - cx).powi(2) + (p.y - cy).powi(2)).sqrt();
        // RMS² about the centroid is quadratic in the plane's shift t: Σw|Δp + tΔs|², least at
        // t = −Σw Δp·Δs / Σw |Δs|².
        let ps = mean(&|p| (p.x - cx) * (p.sx - sx) + (p.y - cy) * (p.sy - sy));
        let ss = mean(&|p| (p.sx - sx).powi(2) + (p.sy - sy).powi(2));
        let (best_focus_at_mm, best_rms_mm) = if ss > 1e-24 {
            let t = -ps / ss;
            let r2 = mean(&|p| (p.x - cx + t * (p.sx - sx)).powi(2) + (p.y - cy + t * (p.sy - sy)).powi(2));
            (Some(z + t), Some(r2.max(0.0).sqrt()))
        } else {
            (None, None)
        };
        let finite = rms_mm.is_finite() && cx.is_finite() && cy.is_finite();
        finite.then_some(TrialFigures { image_at_mm, centroid_mm: (cx, cy), rms_mm, best_focus_at_mm, best_rms_mm })
    }
}

/// Where one ray lands on the screen: the point and the slopes dx/dz, dy/dz.
struct Landing {
    x: f64,
    y: f64,
    sx: f64,
    sy: f64,
}

/// One trial's figures as the Monte Carlo keeps them.
#[derive(Debug, Clone, Copy, PartialEq)]
struct Outcome {
    rms_um: f64,
    lateral_um: f64,
    axial_mm: Option<f64>,
    refocus_mm: f64,
}

/// One part's sensitivities.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Sensitivity {
    /// The part's index in `bench.parts`.
    pub part: usize,
    /// The part's name.
    pub name: String,
    /// The final image's axial shift per mm of the part's position along the rail, mm/mm (`None`: the
    /// image is at infinity, or the move changes the order of the parts).
    pub axial_image_per_mm: Option<f64>,
    /// The on-axis RMS spot's growth on the screen for ±1 mm of position, µm (mean of the two less the
    /// nominal).
    pub axial_rms_growth_um: Option<f64>,
    /// The lateral image shift per 0.1 mm of decentre (y for y; x for x alike), µm.
    pub decentre_image_um: Option<f64>,
    /// The RMS spot's growth for ±0.1 mm of decentre, µm.
    pub decentre_rms_growth_um: Option<f64>,
    /// The lateral image shift per 0.1° of tilt (y for a tilt about x; x for a tilt about y alike), µm.
    pub tilt_image_um: Option<f64>,
    /// The RMS spot's growth for ±0.1° of tilt, µm.
    pub tilt_rms_growth_um: Option<f64>,
}

/// Every part's sensitivities, in the order of `limits`: axial moves by the cheap path, decentres and
/// tilts by the exact posed trace (about each part's pivot).
pub fn sensitivities(
    evaluation: &Evaluation,
    perturber: &Perturber,
    limits: &[Limits],
) -> Result<Vec<Sensitivity>, ToleranceError> {
    let mut placer = Placer::new(evaluation).map_err(|e| ToleranceError::Untraced(e.to_string()))?;
    let nominal_rms_um = perturber.nominal.rms_mm * 1e3;
    let growth = |a: Option<TrialFigures>, b: Option<TrialFigures>| -> Option<f64> {
        Some(0.5 * (a?.rms_mm + b?.rms_mm) * 1e3 - nominal_rms_um)
    };
    let lateral = |j: usize, one: fn(f64) -> PartErrors, unit: f64| -> Option<f64> {
        let mut errors = vec![PartErrors::default(); limits.len()];
        let slope = richardson(SLOPE_STEP * unit, |h| {
            errors[j] = one(h);
            perturber.trial(&errors).map(|t| t.centroid_mm.1)
        })?;
        Some(slope * unit * 1e3)
    };
    let grown = |j: usize, one: fn(f64) -> PartErrors, unit: f64| -> Option<f64> {
        let mut errors = vec![PartErrors::default(); limits.len()];
        errors[j] = one(unit);
        let plus = perturber.trial(&errors);
        errors[j] = one(-unit);
        growth(plus, perturber.trial(&errors))
    };
    let decentre: fn(f64) -> PartErrors = |v| PartErrors { dy_mm: v, ..PartErrors::default() };
    let tilt: fn(f64) -> PartErrors = |v| PartErrors { tilt_x_deg: v, ..PartErrors::default() };
    let nominal_placer_rms = placer.figures().rms_mm;
    let mut out = Vec::with_capacity(limits.len());
    for (j, l) in limits.iter().enumerate() {
        let at = evaluation.bench.parts[l.part].at_mm;
        let mut placed = |dz: f64| -> Option<crate::evaluation::Placement> {
            let ok = placer.place(l.part, at + dz).is_ok();
            let figures = ok.then(|| placer.figures());
            let _ = placer.place(l.part, at);
            figures
        };
        let axial_image_per_mm = richardson(SLOPE_STEP * POSITION_STEP_MM, |h| placed(h).and_then(|p| p.image_at_mm));
        let (plus, minus) = (placed(POSITION_STEP_MM), placed(-POSITION_STEP_MM));
        let axial_rms_growth_um = match (plus.and_then(|p| p.rms_mm), minus.and_then(|p| p.rms_mm), nominal_placer_rms)
        {
            (Some(a), Some(b), Some(n)) => Some((0.5 * (a + b) - n) * 1e3),
            _ => None,
        };
        out.push(Sensitivity {
            part: l.part,
            name: l.name.clone(),
            axial_image_per_mm,
            axial_rms_growth_um,
            decentre_image_um: lateral(j, decentre, DECENTRE_STEP_MM),
            decentre_rms_growth_um: grown(j, decentre, DECENTRE_STEP_MM),
            tilt_image_um: lateral(j, tilt, TILT_STEP_DEG),
            tilt_rms_growth_um: grown(j, tilt, TILT_STEP_DEG),
        });
    }
    Ok(out)
}

/// The slope of `f` at 0 by symmetric differences over ±h and ±h/2, combined by Richardson's
/// extrapolation (4D(h/2) − D(h))/3, which cancels the h² term of the error (L. F. Richardson, 1911; any
/// numerical-analysis text): what is left is O(h⁴) and rounding.
fn richardson(h: f64, mut f: impl FnMut(f64) -> Option<f64>) -> Option<f64> {
    let mut d = |h: f64| -> Option<f64> { Some((f(h)? - f(-h)?) / (2.0 * h)) };
    let (wide, narrow) = (d(h)?, d(0.5 * h)?);
    Some((4.0 * narrow - wide) / 3.0)
}

/// Which kind of error a budget line is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum ErrorKind {
    /// Position along the rail.
    Position,
    /// Decentre across the axis.
    Decentre,
    /// Tilt.
    Tilt,
}

impl ErrorKind {
    /// The word for it.
    pub fn word(self) -> &'static str {
        match self {
            ErrorKind::Position => "position",
            ErrorKind::Decentre => "decentre",
            ErrorKind::Tilt => "tilt",
        }
    }
}

/// One tolerance's share of the stacks.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Contribution {
    /// The part's name.
    pub name: String,
    /// What kind of error.
    pub kind: ErrorKind,
    /// The ± limit (mm for position and decentre, degrees for tilt).
    pub limit: f64,
    /// Its image position change sᵢaᵢ, mm.
    pub axial_mm: f64,
    /// Its lateral image shift sᵢaᵢ on each axis, µm.
    pub lateral_um: f64,
    /// Its share of the larger of the two RSS stacks it enters (sᵢaᵢ)²/Σ, 0 to 1.
    pub share: f64,
}

/// The stacks of every tolerance.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Budget {
    /// Every tolerance, the dominant first.
    pub contributions: Vec<Contribution>,
    /// Root-sum-square stack of the image position, ± mm.
    pub rss_axial_mm: f64,
    /// Worst-case stack of the image position, ± mm.
    pub worst_axial_mm: f64,
    /// Root-sum-square stack of the lateral image shift on each axis, ± µm.
    pub rss_lateral_um: f64,
    /// Worst-case stack of the lateral image shift on each axis, ± µm.
    pub worst_lateral_um: f64,
    /// The depth of focus ±2λN², mm (common practice: the quarter-wave rule; `None` without a working
    /// f-number).
    pub depth_of_focus_mm: Option<f64>,
    /// The room left on the screen beyond the final image's height, mm (`None`: no screen, or no image
    /// height).
    pub screen_room_mm: Option<f64>,
    /// Which sensitivities could not be found (the budget counts them as 0).
    pub missing: Vec<String>,
}

impl Budget {
    /// The budget of `limits` with `sensitivities` (same order) for `evaluation`'s bench.
    pub fn of(evaluation: &Evaluation, limits: &[Limits], sensitivities: &[Sensitivity]) -> Budget {
        let mut contributions = Vec::new();
        let mut missing = Vec::new();
        let mut need = |v: Option<f64>, what: String| {
            v.unwrap_or_else(|| {
                missing.push(what);
                0.0
            })
        };
        for (l, s) in limits.iter().zip(sensitivities) {
            let axial = need(s.axial_image_per_mm, format!("{}: position", l.name)) * l.position_mm;
            let dec = need(s.decentre_image_um, format!("{}: decentre", l.name)) / DECENTRE_STEP_MM * l.decentre_mm;
            let tilt = need(s.tilt_image_um, format!("{}: tilt", l.name)) / TILT_STEP_DEG * l.tilt_deg;
            for (kind, limit, axial_mm, lateral_um) in [
                (ErrorKind::Position, l.position_mm, axial, 0.0),
                (ErrorKind::Decentre, l.decentre_mm, 0.0, dec),
                (ErrorKind::Tilt, l.tilt_deg, 0.0, tilt),
            ] {
                contributions.push(Contribution {
                    name: l.name.clone(),
                    kind,
                    limit,
                    axial_mm,
                    lateral_um,
                    share: 0.0,
                });
            }
        }
        let rss = |f: fn(&Contribution) -> f64| contributions.iter().map(|c| f(c).powi(2)).sum::<f64>().sqrt();
        let worst = |f: fn(&Contribution) -> f64| contributions.iter().map(|c| f(c).abs()).sum::<f64>();
        let (rss_axial_mm, rss_lateral_um) = (rss(|c| c.axial_mm), rss(|c| c.lateral_um));
        let (worst_axial_mm, worst_lateral_um) = (worst(|c| c.axial_mm), worst(|c| c.lateral_um));
        let share = |v: f64, total: f64| if total > 0.0 { (v / total).powi(2) } else { 0.0 };
        for c in &mut contributions {
            c.share = share(c.axial_mm, rss_axial_mm).max(share(c.lateral_um, rss_lateral_um));
        }
        contributions.sort_by(|a, b| b.share.total_cmp(&a.share));
        let report = &evaluation.report;
        let screen_room_mm = evaluation.screens.last().and_then(|&i| {
            let half = 0.5 * evaluation.bench.parts[i].kind.diameter_mm();
            report.images.last().and_then(|img| img.height_mm).map(|h| half - h.abs())
        });
        Budget {
            contributions,
            rss_axial_mm,
            worst_axial_mm,
            rss_lateral_um,
            worst_lateral_um,
            depth_of_focus_mm: report.aberrations.depth_of_focus_mm,
            screen_room_mm,
            missing,
        }
    }
}

/// How the Monte Carlo draws each error within its ± limit a.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Distribution {
    /// Uniform over ±a.
    Uniform,
    /// Normal with σ = `sigma_fraction` · a, truncated at ±a (drawn again when beyond).
    Normal {
        /// σ as a share of the limit (1/3 unless the user sets otherwise).
        sigma_fraction: f64,
    },
}

impl Distribution {
    /// The normal distribution with σ = a/3, truncated at ±a.
    pub const NORMAL: Distribution = Distribution::Normal { sigma_fraction: 1.0 / 3.0 };

    /// Words for it.
    pub fn words(&self) -> String {
        match self {
            Distribution::Uniform => "uniform within ±a".into(),
            Distribution::Normal { sigma_fraction } => {
                format!("normal, σ = {:.3}·a, truncated at ±a", sigma_fraction)
            }
        }
    }
}

/// What the Monte Carlo runs.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct MonteCarloOptions {
    /// Number of trials.
    pub trials: usize,
    /// The seed of the random streams.
    pub seed: u64,
    /// How errors are drawn.
    pub distribution: Distribution,
    /// Whether each trial's screen moves to that trial's best focus.
    pub refocus: bool,
}

impl Default for MonteCarloOptions {
    fn default() -> Self {
        MonteCarloOptions {
            trials: DEFAULT_TRIALS,
            seed: DEFAULT_SEED,
            distribution: Distribution::Uniform,
            refocus: false,
        }
    }
}

/// The 50, 90 and 98 % values of a figure over the trials (nearest rank).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Percentiles {
    /// Half the trials are at or below this.
    pub p50: f64,
    /// 90 % of the trials are at or below this.
    pub p90: f64,
    /// 98 % of the trials are at or below this.
    pub p98: f64,
}

impl Percentiles {
    fn of(sorted: &[f64]) -> Percentiles {
        let at = |p: f64| {
            let rank = ((p * sorted.len() as f64).ceil() as usize).clamp(1, sorted.len().max(1));
            sorted.get(rank - 1).copied().unwrap_or(0.0)
        };
        Percentiles { p50: at(0.5), p90: at(0.9), p98: at(0.98) }
    }
}

/// The histogram of the trials' RMS spot radii.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Histogram {
    /// The left edge of the first bar, µm.
    pub from_um: f64,
    /// Each bar's width, µm.
    pub bin_um: f64,
    /// Trials per bar.
    pub counts: Vec<usize>,
}

/// What the Monte Carlo found.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct MonteCarlo {
    /// The options it ran with.
    pub options: MonteCarloOptions,
    /// Trials that gave figures.
    pub trials: usize,
    /// Trials in which a ray missed a surface or was totally reflected (left out of the figures).
    pub failed: usize,
    /// The nominal RMS spot radius on the screen, µm.
    pub nominal_rms_um: f64,
    /// RMS spot radius (at each trial's best focus with refocus, else on the screen), µm.
    pub rms_um: Percentiles,
    /// Lateral image shift (the spot's centroid from the nominal), µm.
    pub lateral_um: Percentiles,
    /// |Axial image shift| (paraxial image position from the nominal), mm.
    pub axial_mm: Percentiles,
    /// The standard deviation of the axial image shift, mm (for small uniform tolerances it tends to the
    /// RSS stack over √3).
    pub axial_sigma_mm: f64,
    /// With refocus: |screen move| to each trial's best focus, mm.
    pub refocus_mm: Option<Percentiles>,
    /// The RMS radii's histogram.
    pub histogram: Histogram,
}

/// SplitMix64 (G. L. Steele, D. Lea, C. H. Flood, "Fast splittable pseudorandom number generators",
/// OOPSLA 2014): a 64-bit stream from any seed, small and fully determined by it.
#[derive(Debug, Clone)]
struct Stream(u64);

impl Stream {
    fn next_u64(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }

    /// Uniform on [0, 1), 53 bits.
    fn unit(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
    }

    /// One error within ±a.
    fn draw(&mut self, a: f64, d: Distribution) -> f64 {
        match d {
            Distribution::Uniform => a * (2.0 * self.unit() - 1.0),
            Distribution::Normal { sigma_fraction } => {
                let sigma = sigma_fraction * a;
                // Box–Muller, drawn again beyond ±a (at σ = a/3 that is 0.27 % of draws).
                for _ in 0..1000 {
                    let u1 = 1.0 - self.unit();
                    let u2 = self.unit();
                    let v = sigma * (-2.0 * u1.ln()).sqrt() * (std::f64::consts::TAU * u2).cos();
                    if v.abs() <= a {
                        return v;
                    }
                }
                0.0
            }
        }
    }
}

/// The stream of block `b` of a run seeded `seed`.
fn block_stream(seed: u64, b: usize) -> Stream {
    let mut s = Stream(seed ^ (b as u64).wrapping_mul(0xD1B5_4A32_D192_ED03));
    s.next_u64();
    s
}

/// Runs the Monte Carlo on the current rayon pool: `options.trials` benches, each error drawn within its
/// limit; `progress` counts trials done and its cancel flag stops the run between blocks. The same seed
/// gives the same result on any number of threads.
pub fn monte_carlo(
    perturber: &Perturber,
    limits: &[Limits],
    options: &MonteCarloOptions,
    progress: &Progress,
) -> Result<MonteCarlo, ToleranceError> {
    let n = options.trials.max(1);
    progress.total.store(n, Ordering::Relaxed);
    progress.done.store(0, Ordering::Relaxed);
    let blocks = n.div_ceil(BLOCK);
    let nominal = perturber.nominal;
    let results: Vec<Option<Vec<Option<Outcome>>>> = (0..blocks)
        .into_par_iter()
        .map(|b| {
            if progress.cancel.load(Ordering::Relaxed) {
                return None;
            }
            let mut stream = block_stream(options.seed, b);
            let count = BLOCK.min(n - b * BLOCK);
            let mut out = Vec::with_capacity(count);
            let mut errors = vec![PartErrors::default(); limits.len()];
            for _ in 0..count {
                for (e, l) in errors.iter_mut().zip(limits) {
                    let d = options.distribution;
                    *e = PartErrors {
                        dz_mm: stream.draw(l.position_mm, d),
                        dx_mm: stream.draw(l.decentre_mm, d),
                        dy_mm: stream.draw(l.decentre_mm, d),
                        tilt_x_deg: stream.draw(l.tilt_deg, d),
                        tilt_y_deg: stream.draw(l.tilt_deg, d),
                    };
                }
                out.push(perturber.trial(&errors).map(|t| {
                    let (dx, dy) = (t.centroid_mm.0 - nominal.centroid_mm.0, t.centroid_mm.1 - nominal.centroid_mm.1);
                    let axial_mm = match (t.image_at_mm, nominal.image_at_mm) {
                        (Some(a), Some(b)) => Some(a - b),
                        _ => None,
                    };
                    let (rms, moved) = match (options.refocus, t.best_focus_at_mm, t.best_rms_mm) {
                        (true, Some(z), Some(r)) => (r, z - perturber.plane_mm),
                        _ => (t.rms_mm, 0.0),
                    };
                    Outcome { rms_um: rms * 1e3, lateral_um: dx.hypot(dy) * 1e3, axial_mm, refocus_mm: moved }
                }));
            }
            progress.done.fetch_add(count, Ordering::Relaxed);
            Some(out)
        })
        .collect();
    let mut trials = Vec::with_capacity(n);
    for block in results {
        trials.extend(block.ok_or(ToleranceError::Cancelled)?);
    }
    let failed = trials.iter().filter(|t| t.is_none()).count();
    let ok: Vec<Outcome> = trials.into_iter().flatten().collect();
    let sorted = |f: fn(&Outcome) -> Option<f64>| {
        let mut v: Vec<f64> = ok.iter().filter_map(f).filter(|v| v.is_finite()).collect();
        v.sort_by(f64::total_cmp);
        v
    };
    let rms = sorted(|t| Some(t.rms_um));
    let axial: Vec<f64> = ok.iter().filter_map(|t| t.axial_mm).filter(|v| v.is_finite()).collect();
    let mean = axial.iter().sum::<f64>() / axial.len().max(1) as f64;
    let axial_sigma_mm = (axial.iter().map(|a| (a - mean).powi(2)).sum::<f64>() / axial.len().max(1) as f64).sqrt();
    // Bars from the least to the largest RMS radius (one bar 1 µm wide when every trial gives the same).
    let (low, top) = (rms.first().copied().unwrap_or(0.0), rms.last().copied().unwrap_or(0.0));
    let bin_um = if top > low { (top - low) / HISTOGRAM_BINS as f64 } else { 1.0 };
    let mut counts = vec![0; HISTOGRAM_BINS];
    for r in &rms {
        counts[(((r - low) / bin_um) as usize).min(HISTOGRAM_BINS - 1)] += 1;
    }
    Ok(MonteCarlo {
        options: *options,
        trials: ok.len(),
        failed,
        nominal_rms_um: nominal.rms_mm * 1e3,
        rms_um: Percentiles::of(&rms),
        lateral_um: Percentiles::of(&sorted(|t| Some(t.lateral_um))),
        axial_mm: Percentiles::of(&sorted(|t| t.axial_mm.map(f64::abs))),
        axial_sigma_mm,
        refocus_mm: options.refocus.then(|| Percentiles::of(&sorted(|t| Some(t.refocus_mm.abs())))),
        histogram: Histogram { from_um: low, bin_um, counts },
    })
}

/// `x` with `decimals` decimals, without the minus sign of a value that rounds to zero ("0.00", never
/// "-0.00").
pub fn fixed(x: f64, decimals: usize) -> String {
    let s = format!("{x:.decimals$}");
    match s.strip_prefix('-') {
        Some(rest) if rest.chars().all(|c| c == '0' || c == '.') => rest.to_string(),
        _ => s,
    }
}

/// A whole tolerance run: the limits, sensitivities, budget and (when asked) the Monte Carlo.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ToleranceRun {
    /// The bench's title.
    pub title: String,
    /// The plane the spot is measured on, mm.
    pub plane_mm: f64,
    /// The nominal on-axis RMS spot radius there, µm.
    pub nominal_rms_um: f64,
    /// Rays per trial.
    pub rays_per_trial: usize,
    /// Every lens's and mirror's limits, in rail order.
    pub limits: Vec<Limits>,
    /// Their sensitivities, same order.
    pub sensitivities: Vec<Sensitivity>,
    /// The stacks.
    pub budget: Budget,
    /// The Monte Carlo, when run.
    pub monte_carlo: Option<MonteCarlo>,
}

impl ToleranceRun {
    /// Limits, sensitivities and budget of `evaluation`'s bench (no Monte Carlo yet).
    pub fn of(evaluation: &Evaluation) -> Result<(ToleranceRun, Perturber), ToleranceError> {
        let limits = limits(&evaluation.bench);
        if limits.is_empty() {
            return Err(ToleranceError::NoParts);
        }
        let perturber = Perturber::new(evaluation, &limits)?;
        let sensitivities = sensitivities(evaluation, &perturber, &limits)?;
        let budget = Budget::of(evaluation, &limits, &sensitivities);
        let run = ToleranceRun {
            title: evaluation.bench.title.clone(),
            plane_mm: perturber.plane_mm,
            nominal_rms_um: perturber.nominal.rms_mm * 1e3,
            rays_per_trial: perturber.rays(),
            limits,
            sensitivities,
            budget,
            monte_carlo: None,
        };
        Ok((run, perturber))
    }

    /// The run as JSON (keys documented in README.md).
    pub fn to_json(&self) -> String {
        serde_json::to_string_pretty(self).expect("the tolerance run serialises")
    }

    /// The run as text for a person.
    pub fn to_text(&self) -> String {
        let mut t = String::new();
        let _ = writeln!(t, "Tolerance run: {}", self.title);
        let _ = writeln!(
            t,
            "Spot measured on the plane at {:.3} mm; nominal on-axis RMS {:.2} µm ({} rays per trial)",
            self.plane_mm, self.nominal_rms_um, self.rays_per_trial
        );
        t.push_str("\nLimits (± each; tilts about the pivot shown)\n");
        for l in &self.limits {
            let _ = writeln!(
                t,
                "  {:<20} position {:.3} mm, decentre {:.3} mm, tilt {:.3}°, pivot: {}{}",
                l.name,
                l.position_mm,
                l.decentre_mm,
                l.tilt_deg,
                l.pivot_words,
                if l.common_practice { " (common practice)" } else { "" }
            );
        }
        t.push_str("\nSensitivities (symmetric ± differences)\n");
        let _ = writeln!(
            t,
            "  {:<20} {:>14} {:>12} {:>14} {:>12} {:>14} {:>12}",
            "part", "image mm/mm", "RMS ±1 mm", "µm/0.1 mm dec", "RMS ±0.1", "µm/0.1° tilt", "RMS ±0.1°"
        );
        let v = |x: Option<f64>, d: usize| x.map_or_else(|| "n/a".to_string(), |x| fixed(x, d));
        for s in &self.sensitivities {
            let _ = writeln!(
                t,
                "  {:<20} {:>14} {:>12} {:>14} {:>12} {:>14} {:>12}",
                s.name,
                v(s.axial_image_per_mm, 4),
                v(s.axial_rms_growth_um, 2),
                v(s.decentre_image_um, 2),
                v(s.decentre_rms_growth_um, 2),
                v(s.tilt_image_um, 2),
                v(s.tilt_rms_growth_um, 2)
            );
        }
        t.push_str(
            "  (RMS columns: growth of the on-axis RMS spot in µm, mean of the + and − moves less the nominal)\n",
        );
        let b = &self.budget;
        t.push_str("\nBudget\n");
        let _ = writeln!(t, "  image position: RSS ±{:.4} mm, worst case ±{:.4} mm", b.rss_axial_mm, b.worst_axial_mm);
        match b.depth_of_focus_mm {
            Some(d) => {
                let verdict = if b.rss_axial_mm <= d { "within" } else { "beyond" };
                let _ =
                    writeln!(t, "  depth of focus ±{d:.4} mm (±2λN², common practice): the RSS stack is {verdict} it");
            }
            None => t.push_str("  depth of focus: none (no working f-number)\n"),
        }
        let _ = writeln!(
            t,
            "  lateral image shift, each axis: RSS ±{:.2} µm, worst case ±{:.2} µm",
            b.rss_lateral_um, b.worst_lateral_um
        );
        if let Some(room) = b.screen_room_mm {
            let verdict = if b.worst_lateral_um * 1e-3 <= room { "stays on" } else { "can leave" };
            let _ =
                writeln!(t, "  room on the screen beyond the image: {room:.3} mm: the worst case {verdict} the screen");
        }
        t.push_str("  ranked (share of its RSS stack):\n");
        for c in b.contributions.iter().filter(|c| c.share > 0.0).take(10) {
            let unit = if c.kind == ErrorKind::Tilt { "°" } else { " mm" };
            let _ = writeln!(
                t,
                "    {:>5.1} %  {:<20} {:<9} ±{}{unit}: image {:+.4} mm, lateral {:+.2} µm",
                100.0 * c.share,
                c.name,
                c.kind.word(),
                c.limit,
                c.axial_mm,
                c.lateral_um
            );
        }
        for m in &b.missing {
            let _ = writeln!(t, "  not found: {m} (counted as 0)");
        }
        if let Some(mc) = &self.monte_carlo {
            let o = &mc.options;
            let _ = writeln!(
                t,
                "\nMonte Carlo: {} trials, seed {}, {}{}",
                o.trials,
                o.seed,
                o.distribution.words(),
                if o.refocus { ", screen refocused each trial" } else { "" }
            );
            if mc.failed > 0 {
                let _ = writeln!(t, "  {} trials lost a ray (left out)", mc.failed);
            }
            if mc.trials == 0 {
                t.push_str("  no trial gave figures: every one lost a ray\n");
                return t;
            }
            let p = |p: &Percentiles, d: usize| format!("{:.d$} / {:.d$} / {:.d$}", p.p50, p.p90, p.p98);
            let _ = writeln!(t, "  RMS spot µm (50/90/98 %): {} (nominal {:.2})", p(&mc.rms_um, 2), mc.nominal_rms_um);
            let _ = writeln!(t, "  lateral image shift µm: {}", p(&mc.lateral_um, 2));
            let _ = writeln!(t, "  axial image shift mm:   {} (σ {:.4} mm)", p(&mc.axial_mm, 4), mc.axial_sigma_mm);
            if let Some(r) = &mc.refocus_mm {
                let _ = writeln!(t, "  refocus move mm:        {}", p(r, 4));
            }
        }
        t
    }
}
