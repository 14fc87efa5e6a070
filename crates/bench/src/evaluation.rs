//! The one evaluation of a bench revision, and the cheap path for benches that differ only in part
//! positions.
//!
//! [`Evaluation::of`] validates the bench, compiles it once, evaluates every wavelength once, finds the
//! stop and pupils once per wavelength and runs the whole analysis once. The report, the views, the rail
//! drawing and the readout are projections of the value it returns: none of them compiles, evaluates a
//! wavelength or finds a pupil again. [`counters`] counts compilations and analyses on this thread, so
//! tests can hold that claim to account.
//!
//! [`Placer`] is the cheap path for searches and tolerance runs: it keeps the compiled primary-wavelength
//! sequence and moves parts by shifting their surfaces, then re-evaluates only first order, the stop and
//! the on-axis RMS spot on the last screen (radial Gauss quadrature over meridional rays, by the axial
//! point's rotational symmetry).

use crate::compile::{self, Compiled};
use crate::eye::{EYE_CAUTION, EyeFigures};
use crate::instrument::InstrumentFigures;
use crate::model::{Bench, Laser, PartKind};
use crate::report::Report;
use crate::report::{Warning, WarningKind};
use crate::sharpness::Sharpness;
use crate::validate::{Finding, Severity, validate};
use lumenrail_optics::analysis::{Analysis, PartialPlane, Request, Vignetting, analyse};
use lumenrail_optics::beam::{BeamTrace, LaserSource};
use lumenrail_optics::paraxial::{FirstOrder, Object};
use lumenrail_optics::pupil::{FieldPoint, Pupils, meridional_fan};
use lumenrail_optics::spot::AxialSpot;
use lumenrail_optics::system::Sequence;
use lumenrail_optics::trace::RayPath;
use std::cell::Cell;

thread_local! {
    static COMPILATIONS: Cell<u64> = const { Cell::new(0) };
    static ANALYSES: Cell<u64> = const { Cell::new(0) };
}

/// How many compilations and whole analyses this thread has run: a test takes the counters before and
/// after an action to check that one revision costs one of each.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Counters {
    /// Benches compiled into surface sequences.
    pub compilations: u64,
    /// Whole analyses (every wavelength, stop, pupils, spots, field figures).
    pub analyses: u64,
}

/// The counters of this thread.
pub fn counters() -> Counters {
    Counters { compilations: COMPILATIONS.with(Cell::get), analyses: ANALYSES.with(Cell::get) }
}

pub(crate) fn count_compilation() {
    COMPILATIONS.with(|c| c.set(c.get() + 1));
}

fn count_analysis() {
    ANALYSES.with(|c| c.set(c.get() + 1));
}

/// Rays per fan drawn on the rail, across the stop's diameter.
pub const RAIL_FAN_RAYS: usize = 7;

/// The most wavelengths drawn on the rail (the first, primary and last when a bench lists more).
const MAX_DRAWN_WAVELENGTHS: usize = 3;

/// One fan of real rays for the rail drawing.
#[derive(Debug, Clone, PartialEq)]
pub struct RailFan {
    /// Wavelength, nm.
    pub wavelength_nm: f64,
    /// Whether the fan leaves the off-axis object point.
    pub off_axis: bool,
    /// The traced rays with their intercepts.
    pub paths: Vec<RayPath>,
}

/// The compiled bench and everything evaluated from it, when it can be traced.
#[derive(Debug, Clone, PartialEq)]
pub struct Traced {
    /// The bench compiled along its light path.
    pub compiled: Compiled,
    /// Every figure, every wavelength's sequence, stop and images.
    pub analysis: Analysis,
    /// The laser's Gaussian beam through the same sequence at its wavelength (`None` without a laser).
    pub beam: Option<BeamTrace>,
    /// Wavefronts, PSF and MTF at the paraxial final image (`None` without a real final image).
    pub sharpness: Option<Sharpness>,
    /// The stray-focus map (`None` without a reflecting glass surface; left to the deferred work of a
    /// live evaluation).
    pub stray: Option<crate::stray::StrayFigures>,
}

/// Everything known about one revision of a bench.
#[derive(Debug, Clone, PartialEq)]
pub struct Evaluation {
    /// The bench as evaluated.
    pub bench: Bench,
    /// What validation found.
    pub findings: Vec<Finding>,
    /// The compiled bench and its analysis (`None` when it has errors or nothing to trace).
    pub traced: Option<Traced>,
    /// Indices of the screens in rail order.
    pub screens: Vec<usize>,
    /// The fans drawn on the rail.
    pub rail_fans: Vec<RailFan>,
    /// Each part's own first-order figures, alone in air at the primary wavelength (lenses and curved
    /// mirrors the light meets; `None` for others).
    pub part_first_order: Vec<Option<FirstOrder>>,
    /// The report: every figure a person reads.
    pub report: Report,
}

impl Evaluation {
    /// Evaluates `bench` once.
    pub fn of(bench: &Bench) -> Evaluation {
        Evaluation::evaluate(bench, true)
    }

    /// Evaluates `bench` once, as [`Evaluation::of`] does, except the slow figures: the sharpness figures,
    /// and the off-axis point's vignetting when the rim certificate cannot vouch for the whole field. Those
    /// are left pending ([`Evaluation::vignetting_job`] gives the work to run, on any thread;
    /// [`Evaluation::complete_vignetting`] fills it in), so that a drag over a heavy bench need not wait for
    /// them. Completed, it is equal to [`Evaluation::of`] in every figure.
    pub fn live(bench: &Bench) -> Evaluation {
        Evaluation::evaluate(bench, false)
    }

    /// The slow figures left pending by [`Evaluation::live`], as owned work for another thread.
    pub fn vignetting_job(&self) -> Option<VignettingJob> {
        if !self.report.vignetting_pending && !self.report.sharpness_pending {
            return None;
        }
        let t = self.traced.as_ref()?;
        let (seq, pupils) = t.analysis.vignetting_inputs()?;
        Some(VignettingJob {
            seq,
            object: t.compiled.object,
            pupils,
            vignetting: self.report.vignetting_pending,
            slow: self
                .report
                .sharpness_pending
                .then(|| (self.bench.clone(), Box::new(t.clone()), self.screens.clone())),
        })
    }

    /// Fills in the slow figures (a [`VignettingJob`]'s result for this evaluation) and projects the report
    /// anew from them.
    pub fn complete_vignetting(&mut self, d: Deferred) {
        if let Some(t) = self.traced.as_mut() {
            if let Some(v) = d.vignetting {
                t.analysis.set_vignetting(v);
            }
            if let Some((sharpness, stray)) = d.slow {
                t.sharpness = sharpness;
                t.stray = stray;
            }
        }
        self.report = Report::project(&self.bench, &self.findings, self.traced.as_ref(), &self.screens, None);
        report_extras(&self.bench, self.traced.as_ref(), &self.screens, &self.part_first_order, &mut self.report);
    }

    fn evaluate(bench: &Bench, vignetting: bool) -> Evaluation {
        let findings = validate(bench);
        let screens: Vec<usize> = bench
            .rail_order()
            .into_iter()
            .filter(|&i| matches!(bench.parts[i].kind, PartKind::Screen { .. }))
            .collect();
        let mut failure = None;
        let errors: Vec<&str> =
            findings.iter().filter(|f| f.severity == Severity::Error).map(|f| f.message.as_str()).collect();
        let mut traced = if !errors.is_empty() {
            failure = Some(errors.join("; "));
            None
        } else {
            match trace(bench, &screens, vignetting) {
                Ok(t) => Some(t),
                Err(why) => {
                    failure = Some(why);
                    None
                }
            }
        };
        // Live: the rim certificate, when it vouches for the field, gives the vignetting at once; otherwise it
        // and the sharpness figures are left pending (one projection of the report either way).
        let (mut vignetting_pending, mut sharpness_pending) = (false, false);
        if !vignetting && let Some(t) = traced.as_mut() {
            match t
                .analysis
                .pupils()
                .as_ref()
                .ok()
                .map(|p| Vignetting::certified(t.analysis.seq(), t.compiled.object, p))
            {
                Some(Some(whole)) => {
                    t.analysis.set_vignetting(whole);
                    sharpness_pending = true;
                }
                Some(None) => (vignetting_pending, sharpness_pending) = (true, true),
                // Without pupils there is little to defer: computed here.
                None => {
                    t.sharpness = Sharpness::at_paraxial_image(bench, &t.analysis, t.compiled.object);
                    t.stray = crate::stray::StrayFigures::of(bench, t, &screens);
                }
            }
        }
        let rail_fans = traced.as_ref().map_or_else(Vec::new, rail_fans);
        let part_first_order: Vec<Option<FirstOrder>> = (0..bench.parts.len())
            .map(|i| traced.as_ref().and_then(|t| part_first_order(t.analysis.seq(), i)))
            .collect();
        let mut report = Report::project(bench, &findings, traced.as_ref(), &screens, failure);
        (report.vignetting_pending, report.sharpness_pending) = (vignetting_pending, sharpness_pending);
        report_extras(bench, traced.as_ref(), &screens, &part_first_order, &mut report);
        Evaluation { bench: bench.clone(), findings, traced, screens, rail_fans, part_first_order, report }
    }

    /// The analysis, when the bench can be traced.
    pub fn analysis(&self) -> Option<&Analysis> {
        self.traced.as_ref().map(|t| &t.analysis)
    }

    /// The compiled bench, when it can be traced.
    pub fn compiled(&self) -> Option<&Compiled> {
        self.traced.as_ref().map(|t| &t.compiled)
    }
}

/// The report's figures that read the whole projected report beside the evaluation: the instrument
/// figures and the eye part's (with its caution). After every projection of the report.
fn report_extras(
    bench: &Bench,
    traced: Option<&Traced>,
    screens: &[usize],
    part_first_order: &[Option<FirstOrder>],
    report: &mut Report,
) {
    if let Some(t) = traced
        && let Ok(pupils) = t.analysis.pupils()
    {
        report.instrument = InstrumentFigures::of(bench, report, t.analysis.seq(), pupils, part_first_order);
    }
    if let Some(e) = eye_index(bench) {
        let retina = traced.and_then(|t| match &t.analysis.spot {
            Some(Ok(s)) => s.planes.get(retina_plane(bench, &t.compiled, screens)).copied(),
            _ => None,
        });
        report.eye = EyeFigures::of(bench, e, report, retina.as_ref(), part_first_order[e].as_ref());
        report.warnings.push(Warning {
            kind: WarningKind::Caution,
            part: None,
            field: None,
            message: EYE_CAUTION.into(),
        });
    }
}

/// The slow figures of one live evaluation, owned, to run on any thread ([`Evaluation::live`]).
#[derive(Debug, Clone)]
pub struct VignettingJob {
    seq: Sequence,
    object: Object,
    pupils: Pupils,
    vignetting: bool,
    /// For the sharpness figures and the stray-focus map: the bench, what was traced, and its screens.
    slow: Option<(Bench, Box<Traced>, Vec<usize>)>,
}

/// What a [`VignettingJob`] computed: the vignetting figures and the sharpness figures, each when it was
/// pending.
#[derive(Debug, Clone, Default)]
pub struct Deferred {
    /// The off-axis point's vignetting.
    pub vignetting: Option<Vignetting>,
    /// The sharpness figures and the stray-focus map (`Some((None, _))`: computed, and there are none,
    /// e.g. no real final image).
    pub slow: Option<(Option<Sharpness>, Option<crate::stray::StrayFigures>)>,
}

impl VignettingJob {
    /// Integrates the vignetting ([`Vignetting::of`]) and computes the sharpness figures and the
    /// stray-focus map, as pending.
    pub fn run(&self) -> Deferred {
        Deferred {
            vignetting: self.vignetting.then(|| Vignetting::of(&self.seq, self.object, &self.pupils)),
            slow: self.slow.as_ref().map(|(bench, traced, screens)| {
                (
                    Sharpness::at_paraxial_image(bench, &traced.analysis, self.object),
                    crate::stray::StrayFigures::of(bench, traced, screens),
                )
            }),
        }
    }
}

/// Compiles and analyses a valid bench, or says why it cannot be traced.
fn trace(bench: &Bench, screens: &[usize], vignetting: bool) -> Result<Traced, String> {
    let compiled = compile::compile(bench).map_err(|e| format!("unknown material \"{}\"", e.name))?;
    if compiled.system.surfaces.is_empty() {
        return Err("no part bends or limits the light (a bench of screens only)".into());
    }
    let last_z = compiled.system.surfaces.last().map_or(0.0, |s| s.vertex_z_mm);
    let mut planes_mm = Vec::new();
    let mut partial_planes = Vec::new();
    for &i in screens {
        let at_mm = bench.parts[i].at_mm;
        if (at_mm - last_z) * compiled.final_direction >= 0.0 {
            planes_mm.push(at_mm);
        } else {
            let surfaces = compiled.last_crossing(i).unwrap_or(0);
            partial_planes.push(PartialPlane { surfaces, at_mm });
        }
    }
    if let Some(e) = eye_index(bench) {
        // The retina is the eye's screen, after every screen's plane.
        planes_mm.push(bench.parts[e].end_mm());
    }
    let request = Request {
        object: compiled.object,
        wavelengths_nm: bench.wavelengths_nm.clone(),
        primary: bench.primary_wavelength,
        planes_mm,
        partial_planes,
        vignetting,
        weights: bench.wavelength_weights.clone(),
    };
    count_analysis();
    let analysis = analyse(&compiled.system, &request).map_err(|e| e.to_string())?;
    let beam = bench.laser.as_ref().and_then(|l| laser_beam(l, &analysis));
    // A live evaluation leaves the sharpness figures (thousands of aimed skew rays) to its deferred job.
    let sharpness = if vignetting { Sharpness::at_paraxial_image(bench, &analysis, compiled.object) } else { None };
    let mut traced = Traced { compiled, analysis, beam, sharpness, stray: None };
    if vignetting {
        traced.stray = crate::stray::StrayFigures::of(bench, &traced, screens);
    }
    Ok(traced)
}

/// The eye part, if the bench has one (validation allows one, as the last part).
fn eye_index(bench: &Bench) -> Option<usize> {
    bench.parts.iter().position(|p| matches!(p.kind, PartKind::Eye { .. }))
}

/// The index of the retina among the analysis's spot planes: after the screens in the final space.
fn retina_plane(bench: &Bench, compiled: &Compiled, screens: &[usize]) -> usize {
    let last_z = compiled.system.surfaces.last().map_or(0.0, |s| s.vertex_z_mm);
    screens.iter().filter(|&&i| (bench.parts[i].at_mm - last_z) * compiled.final_direction >= 0.0).count()
}

/// The laser's beam through the sequence of its wavelength (which validation has made one of the bench's,
/// so that sequence is already evaluated); `None` when the numbers are not usable (validation says why).
fn laser_beam(laser: &Laser, analysis: &Analysis) -> Option<BeamTrace> {
    let w = analysis
        .wavelengths
        .iter()
        .find(|w| (w.seq.wavelength_nm - laser.wavelength_nm).abs() <= 1e-9 * laser.wavelength_nm)?;
    let source = LaserSource {
        wavelength_nm: laser.wavelength_nm,
        waist_radius_mm: 0.5 * laser.waist_diameter_mm,
        waist_at_mm: laser.waist_at_mm,
        m_squared: laser.m_squared,
    };
    BeamTrace::of(&w.seq, source).ok()
}

/// The rail's fans: on-axis and off-axis, at the first, primary and last wavelength.
fn rail_fans(traced: &Traced) -> Vec<RailFan> {
    let (analysis, object) = (&traced.analysis, traced.compiled.object);
    let count = analysis.wavelengths.len();
    let drawn: Vec<usize> = if count > MAX_DRAWN_WAVELENGTHS {
        let mut d = vec![0, analysis.primary, count - 1];
        d.dedup();
        d
    } else {
        (0..count).collect()
    };
    let mut fans = Vec::new();
    for k in drawn {
        let w = &analysis.wavelengths[k];
        let Ok(pupils) = &w.pupils else { continue };
        for (field, off_axis) in [(FieldPoint::OnAxis, false), (FieldPoint::OffAxis, true)] {
            let paths = meridional_fan(&w.seq, object, pupils, field, RAIL_FAN_RAYS);
            fans.push(RailFan { wavelength_nm: w.seq.wavelength_nm, off_axis, paths });
        }
    }
    fans
}

/// The first-order figures of part `index` alone in air: its surfaces' first run in the sequence.
pub(crate) fn part_first_order(seq: &Sequence, index: usize) -> Option<FirstOrder> {
    let start = seq.steps.iter().position(|s| s.element == index)?;
    let len = seq.steps[start..].iter().take_while(|s| s.element == index).count();
    let alone = Sequence {
        wavelength_nm: seq.wavelength_nm,
        n_object: seq.steps[start].n_before,
        steps: seq.steps[start..start + len].to_vec(),
    };
    FirstOrder::of(&alone).filter(|f| !f.afocal && f.power_per_mm != 0.0)
}

/// The figures the cheap path gives for one placement.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Placement {
    /// First-order figures (`None` when the parts have no power).
    pub first_order: Option<FirstOrder>,
    /// The final paraxial image position (`None`: at infinity).
    pub image_at_mm: Option<f64>,
    /// Lateral magnification of the final image (`None` for a distant object or an image at infinity).
    pub magnification: Option<f64>,
    /// The stop's surface index in the sequence (`None`: the input beam of a distant object).
    pub stop_surface: Option<usize>,
    /// Entrance pupil diameter, mm.
    pub entrance_pupil_diameter_mm: Option<f64>,
    /// RMS radius of the on-axis spot at the target plane, mm (`None`: the light does not get there).
    pub rms_mm: Option<f64>,
}

/// Why the cheap path cannot place the parts as asked.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum PlaceError {
    /// The bench cannot be traced at all.
    #[error("the bench cannot be traced: {0}")]
    Untraced(String),
    /// The move changes the order in which the light meets the parts; evaluate the bench in full.
    #[error("the move changes the order in which the light meets the parts")]
    OrderChanged,
    /// No such part.
    #[error("there is no part {0}")]
    NoPart(usize),
}

/// The cheap path: the compiled primary-wavelength sequence of a bench, with parts moved by shifting
/// their surfaces. Nothing is compiled or evaluated at a wavelength again.
#[derive(Debug, Clone)]
pub struct Placer {
    seq: Sequence,
    object: Object,
    /// Rail positions of the parts as last placed.
    at_mm: Vec<f64>,
    /// Rail position of every part's first vertex and its surfaces in the sequence.
    surfaces_of: Vec<Vec<usize>>,
    /// Each surface's offset from its part's rail position.
    offsets: Vec<f64>,
    /// The part whose rail position is the target plane (the last screen), if any.
    target: Option<usize>,
    /// Quadrature rings for the RMS spot (the count the full evaluation settled at).
    rings: usize,
}

impl Placer {
    /// The cheap path for `evaluation`'s bench, aiming at its last screen (or the final paraxial image
    /// when it has none).
    pub fn new(evaluation: &Evaluation) -> Result<Placer, PlaceError> {
        let traced = evaluation
            .traced
            .as_ref()
            .ok_or_else(|| PlaceError::Untraced(evaluation.report.trace_failure.clone().unwrap_or_default()))?;
        let seq = traced.analysis.seq().clone();
        let bench = &evaluation.bench;
        let mut surfaces_of = vec![Vec::new(); bench.parts.len()];
        let mut offsets = Vec::with_capacity(seq.steps.len());
        for (k, s) in seq.steps.iter().enumerate() {
            surfaces_of[s.element].push(k);
            offsets.push(s.z_mm - bench.parts[s.element].at_mm);
        }
        let rings = match &traced.analysis.spot {
            Some(Ok(s)) => s.rings,
            _ => 16,
        };
        Ok(Placer {
            seq,
            object: traced.compiled.object,
            at_mm: bench.parts.iter().map(|p| p.at_mm).collect(),
            surfaces_of,
            offsets,
            target: evaluation.screens.last().copied(),
            rings,
        })
    }

    /// The cheap path for `bench` straight from its compiled primary-wavelength sequence, for searches
    /// that place parts many times: no analysis is run (the RMS spot uses 16 Gauss rings). Aims at the
    /// last screen.
    pub fn of_bench(bench: &Bench) -> Result<Placer, PlaceError> {
        let compiled =
            compile::compile(bench).map_err(|e| PlaceError::Untraced(format!("unknown material \"{}\"", e.name)))?;
        let wavelength = bench.primary_wavelength_nm().ok_or_else(|| PlaceError::Untraced("no wavelength".into()))?;
        let seq = compiled.system.at(wavelength).map_err(|e| PlaceError::Untraced(e.to_string()))?;
        let mut surfaces_of = vec![Vec::new(); bench.parts.len()];
        let mut offsets = Vec::with_capacity(seq.steps.len());
        for (k, s) in seq.steps.iter().enumerate() {
            surfaces_of[s.element].push(k);
            offsets.push(s.z_mm - bench.parts[s.element].at_mm);
        }
        let target = bench.rail_order().into_iter().rfind(|&i| matches!(bench.parts[i].kind, PartKind::Screen { .. }));
        Ok(Placer {
            seq,
            object: compiled.object,
            at_mm: bench.parts.iter().map(|p| p.at_mm).collect(),
            surfaces_of,
            offsets,
            target,
            rings: 16,
        })
    }

    /// Takes the plane of part `index` (a screen) as the target plane of the RMS spot.
    pub fn aim_at(&mut self, index: usize) {
        self.target = Some(index).filter(|&i| i < self.at_mm.len());
    }

    /// Moves part `index` to `at_mm`. Refused, leaving the part where it was, when that changes the order
    /// of the surfaces along the light path (then the bench must be evaluated in full).
    pub fn place(&mut self, index: usize, at_mm: f64) -> Result<(), PlaceError> {
        let surfaces = self.surfaces_of.get(index).ok_or(PlaceError::NoPart(index))?;
        let was = self.at_mm[index];
        for &k in surfaces {
            self.seq.steps[k].z_mm = at_mm + self.offsets[k];
        }
        self.at_mm[index] = at_mm;
        // Along the light, each vertex must lie beyond the one before in that space's direction.
        let steps = &self.seq.steps;
        let start = match self.object {
            Object::Finite { z_mm, .. } => Some(z_mm),
            Object::Distant { .. } => None,
        };
        let in_order = start.is_none_or(|z| steps.first().is_none_or(|s| s.z_mm >= z))
            && steps.windows(2).all(|w| (w[1].z_mm - w[0].z_mm) * w[0].dir_after >= 0.0);
        if in_order {
            return Ok(());
        }
        // Put the part back where it was, so the placer stays usable.
        for &k in &self.surfaces_of[index] {
            self.seq.steps[k].z_mm = was + self.offsets[k];
        }
        self.at_mm[index] = was;
        Err(PlaceError::OrderChanged)
    }

    /// First order, the stop, the final image and the on-axis RMS spot at the target plane, for the
    /// parts as placed.
    pub fn figures(&self) -> Placement {
        let seq = &self.seq;
        let first_order = FirstOrder::of(seq);
        let image = lumenrail_optics::paraxial::images(seq, &self.object).last().copied();
        let image_at_mm = image.and_then(|i| i.at_mm);
        let mut out = Placement {
            first_order,
            image_at_mm,
            magnification: image.and_then(|i| i.magnification),
            stop_surface: None,
            entrance_pupil_diameter_mm: None,
            rms_mm: None,
        };
        let Ok(pupils) = Pupils::find(seq, &self.object) else { return out };
        out.stop_surface = match pupils.stop {
            lumenrail_optics::pupil::StopAt::Surface(s) => Some(s),
            lumenrail_optics::pupil::StopAt::Beam => None,
        };
        out.entrance_pupil_diameter_mm = pupils.entrance_pupil_diameter_mm;
        let plane = self.target.map(|i| self.at_mm[i]).or(image_at_mm);
        if let Some(z) = plane
            && let Ok(spot) = AxialSpot::trace(seq, self.object, &pupils, self.rings)
        {
            out.rms_mm = Some(spot.rms_radius_at(z));
        }
        out
    }
}
