//! The arranger: which of the drawer's lenses, placed where on the rail, meet the bench's aims.
//!
//! For every choice of 1, 2 or 3 lenses from the drawer (each either way round, a drawer item used no
//! more often than its quantity), the search
//! 1. reduces each lens to its paraxial first order at the primary wavelength (focal length and principal
//!    planes, from its own thick trace), and solves the positions in closed form: Gaussian imaging
//!    1/s′ − 1/s = 1/f between principal planes puts the last lens where it images onto the target plane
//!    (a quadratic with up to two roots), the afocal condition spaces two lenses by f₁ + f₂ between their
//!    inner principal planes, and where one unknown remains (the first lens of two, the middle one of
//!    three) a grid brackets the roots of the magnification's miss and bisection (a bounded 1-D method)
//!    closes them;
//!    Three lenses leave many solutions per choice: a coarser grid is used, and only the solution that
//!    bends the paraxial marginal ray least (Σ|Δu|³, a stand-in for third-order aberration) is traced;
//!    the shortlist (below) refines it;
//! 2. prunes on that first order: only arrangements whose paraxial magnification, image distance and
//!    afocal ratio can meet the aims, with the parts on the rail, in order, and their carriers apart,
//!    reach the exact trace;
//! 3. refines on the exact trace: the last lens is moved by golden-section search (bounded, 1-D) to the
//!    least on-axis RMS spot on the target screen, within the magnification's tolerance, by the
//!    evaluation's cheap path (three-lens arrangements only once they reach the shortlist of the
//!    sharpest);
//! 4. evaluates each survivor in full, once, and ranks them: aims met, then the aims' total miss, RMS
//!    on axis and off axis, vignetting, total length, number of parts, then the drawer order (so the
//!    ranking is the same on any number of threads: candidates are evaluated in parallel with rayon and
//!    collected in their enumeration order, then sorted by that total order).
//!
//! The bench's own parts stay where they are; the arranger adds lenses between them. Mirrors, irises
//! and screens in a drawer are not placed.

use crate::aims::{AimStatus, placeable};
use crate::drawer::{Drawer, DrawerItem};
use crate::evaluation::{Evaluation, Placer};
use crate::model::{Aim, Bench, ObjectSpec, Part, PartKind};
use rayon::prelude::*;
use serde::Serialize;
use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};

/// What to search.
#[derive(Debug, Clone, PartialEq)]
pub struct Options {
    /// The fewest lenses to place (1–3).
    pub min_parts: usize,
    /// The most lenses to place (1–3).
    pub max_parts: usize,
    /// How many ranked candidates to keep.
    pub top: usize,
    /// The smallest gap between neighbouring parts' glass or carriers, mm (a `CarrierGap` aim raises it).
    pub gap_mm: f64,
}

impl Default for Options {
    fn default() -> Self {
        Options { min_parts: 1, max_parts: 2, top: 10, gap_mm: 2.0 }
    }
}

/// A running search's progress, shared with the thread that shows it: candidates done of the total,
/// and a flag that stops the search at the next candidate.
#[derive(Debug, Default)]
pub struct Progress {
    /// Candidates looked at so far.
    pub done: AtomicUsize,
    /// Candidates to look at (set when the search starts).
    pub total: AtomicUsize,
    /// Set to stop the search; it then returns what it has ranked so far.
    pub cancel: AtomicBool,
}

impl Progress {
    /// The share done, 0 to 1.
    pub fn fraction(&self) -> f32 {
        let total = self.total.load(Ordering::Relaxed).max(1);
        (self.done.load(Ordering::Relaxed) as f32 / total as f32).min(1.0)
    }
}

/// One drawer lens placed by the arranger.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Placed {
    /// Index of the item in the drawer.
    pub item: usize,
    /// The item's label.
    pub label: String,
    /// Whether it is turned round from the way the drawer gives it.
    pub turned: bool,
    /// Rail position of its first vertex, mm.
    pub at_mm: f64,
}

/// One ranked arrangement.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Candidate {
    /// The lenses placed, in rail order.
    pub parts: Vec<Placed>,
    /// Each aim as this arrangement meets it.
    pub aims: Vec<AimStatus>,
    /// How many aims it meets.
    pub met: usize,
    /// The aims' total miss, in tolerances.
    pub miss: f64,
    /// On-axis RMS spot radius on the target screen (or at the final image), µm.
    pub rms_on_axis_um: Option<f64>,
    /// Off-axis RMS spot radius there, µm.
    pub rms_off_axis_um: Option<f64>,
    /// The share of the off-axis point's pupil area that gets through (1: no vignetting).
    pub off_axis_transmission: Option<f64>,
    /// The bench's total length, mm.
    pub total_length_mm: Option<f64>,
}

impl Candidate {
    /// Whether every aim is met.
    pub fn meets_all(&self) -> bool {
        self.aims.iter().all(|a| a.met)
    }
}

/// The search's answer.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Arrangement {
    /// The best candidates, best first (at most `Options::top`).
    pub candidates: Vec<Candidate>,
    /// Choices of lenses looked at.
    pub combinations: usize,
    /// Arrangements that passed the first-order pruning and were traced exactly.
    pub traced: usize,
    /// Whether the search was cancelled before it finished.
    pub cancelled: bool,
}

/// Why the arranger cannot search.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum ArrangeError {
    /// The bench has no aims.
    #[error("the bench has no aims: add at least one (a sharp image on a screen, a magnification, …)")]
    NoAims,
    /// The drawer holds no lens.
    #[error("the drawer holds no lens to place")]
    NoLenses,
    /// The bench itself cannot be evaluated.
    #[error("the bench cannot be evaluated: {0}")]
    Bench(String),
    /// The part counts are outside 1–3.
    #[error("the arranger places 1 to 3 lenses, not {0}")]
    Parts(String),
}

/// A lens's paraxial model at the primary wavelength: focal length and principal planes from its first
/// vertex, and its length between vertices.
#[derive(Debug, Clone, Copy, PartialEq)]
struct Lens {
    item: usize,
    turned: bool,
    f: f64,
    h1: f64,
    h2: f64,
    length: f64,
    /// Clear semi-diameter, mm.
    semi: f64,
}

/// The lens models of a drawer item (one way round, or both when turning changes it).
fn lenses_of(item: usize, it: &DrawerItem, wavelength_nm: f64) -> Vec<Lens> {
    if !placeable(&it.part) {
        return Vec::new();
    }
    let mut out = Vec::new();
    let turns: &[bool] = if it.part.turned() == it.part { &[false] } else { &[false, true] };
    for &turned in turns {
        let kind = if turned { it.part.turned() } else { it.part.clone() };
        let Some(fo) = crate::drawer::first_order_alone(&kind, wavelength_nm) else { continue };
        let (Some(f), Some(p1), Some(p2)) = (fo.efl_mm, fo.front_principal_at_mm, fo.back_principal_at_mm) else {
            continue;
        };
        if !(f.is_finite() && p1.is_finite() && p2.is_finite()) {
            continue;
        }
        out.push(Lens { item, turned, f, h1: p1, h2: p2, length: kind.thickness_mm(), semi: 0.5 * kind.diameter_mm() });
    }
    out
}

/// Where the light's image goes through a lens whose first vertex is at `x`: Gaussian imaging between
/// principal planes. `from` is the object (or previous image) position, `None` for parallel light.
/// Returns the image position (`None`: at infinity) and the lateral magnification (`None` for
/// parallel light in or out).
fn image_through(l: &Lens, x: f64, from: Option<f64>) -> (Option<f64>, Option<f64>) {
    let (h, h_) = (x + l.h1, x + l.h2);
    match from {
        None => (Some(h_ + l.f), None),
        Some(z) => {
            let s = z - h;
            let d = s + l.f;
            if d.abs() < 1e-12 * l.f.abs().max(1.0) {
                return (None, None);
            }
            let s_ = s * l.f / d;
            (Some(h_ + s_), Some(s_ / s))
        }
    }
}

/// First vertex positions that make lens `l` image `from` onto `target` (up to two).
fn focus_onto(l: &Lens, from: Option<f64>, target: f64) -> Vec<f64> {
    let a = target - l.h2;
    match from {
        None => vec![a - l.f],
        Some(z) => {
            // 1/(A − x) − 1/(B − x) = 1/f  ⇔  x² − (A + B)x + AB − f(B − A) = 0.
            let b = z - l.h1;
            let (sum, c) = (a + b, a * b - l.f * (b - a));
            let mut disc = (a - b).powi(2) + 4.0 * l.f * (b - a);
            // At exactly 4f apart the two roots meet; rounding must not lose them.
            let scale = (a - b).powi(2).max((4.0 * l.f * (b - a)).abs());
            if disc < 0.0 && disc > -1e-12 * scale {
                disc = 0.0;
            }
            if disc < 0.0 {
                return Vec::new();
            }
            // The roots of x² − Sx + c without cancellation: q = (S + sign(S)·√disc)/2, then q and c/q.
            let q = 0.5 * (sum + if sum >= 0.0 { disc.sqrt() } else { -disc.sqrt() });
            let mut roots = if q != 0.0 { vec![q, c / q] } else { vec![0.0] };
            roots.retain(|x| x.is_finite());
            roots.sort_by(f64::total_cmp);
            roots.dedup_by(|x, y| (*x - *y).abs() < 1e-9);
            roots
        }
    }
}

/// The search's fixed frame: where the light starts, where lenses may go, and the paraxial targets.
struct Frame {
    object: Option<f64>,
    /// Where the final image must land (a named screen, or object + distance).
    target: Option<f64>,
    /// The screen the sharp-image aim names, by index.
    screen: Option<usize>,
    magnification: Option<(f64, f64)>,
    afocal_ratio: Option<(f64, f64, bool)>,
    lo: f64,
    hi: f64,
    gap: f64,
    obstacles: Vec<(f64, f64)>,
}

impl Frame {
    /// Whether lenses at `xs` sit on the rail, in order, apart from each other and the bench's parts.
    fn fits(&self, lenses: &[Lens], xs: &[f64]) -> bool {
        let mut spans: Vec<(f64, f64)> = lenses.iter().zip(xs).map(|(l, &x)| (x, x + l.length)).collect();
        if spans.iter().any(|&(a, b)| !(a.is_finite() && a >= self.lo && b <= self.hi)) {
            return false;
        }
        if spans.windows(2).any(|w| w[1].0 < w[0].1 + self.gap) {
            return false;
        }
        spans.extend(self.obstacles.iter().copied());
        spans.sort_by(|a, b| a.0.total_cmp(&b.0));
        spans.windows(2).all(|w| w[1].0 >= w[0].1 + self.gap)
    }

    /// The first-order miss of lenses at `xs`, in tolerances (0 within them; the exact trace decides
    /// within twice the tolerance); `None` when they do not fit on the rail or form no image where one
    /// is asked.
    fn paraxial_miss(&self, lenses: &[Lens], xs: &[f64]) -> Option<f64> {
        if !self.fits(lenses, xs) {
            return None;
        }
        let mut at = self.object;
        let mut m = 1.0;
        let mut has_m = self.object.is_some();
        for (l, &x) in lenses.iter().zip(xs) {
            let (img, mi) = image_through(l, x, at);
            at = img;
            match mi {
                Some(v) => m *= v,
                None => has_m = false,
            }
        }
        let mut miss = 0.0;
        if let Some(t) = self.target {
            // Focus is solved in closed form; allow its rounding only.
            if at.is_none_or(|z| (z - t).abs() > 1e-6 * t.abs().max(1.0)) {
                return None;
            }
        }
        let over = |off: f64, tol: f64| (off - 2.0 * tol).max(0.0) / tol.max(1e-9);
        if let Some((want, tol)) = self.magnification {
            miss += if has_m { over((m - want).abs(), tol) } else { crate::aims::NO_VALUE_MISS };
        }
        if let Some((want, tol, angular)) = self.afocal_ratio {
            let value = match lenses {
                [a, b] => {
                    let m = -a.f / b.f;
                    if angular { m } else { 1.0 / m.abs() }
                }
                _ => f64::INFINITY,
            };
            miss += over((value - want).abs(), tol).min(crate::aims::NO_VALUE_MISS);
        }
        Some(miss)
    }
}

/// How many of the sharpest refined arrangements are evaluated in full, at least.
const FULLY_EVALUATED: usize = 40;

/// Searches the drawer for arrangements of lenses on `bench` that meet its aims; see the module docs.
pub fn arrange(
    bench: &Bench,
    drawer: &Drawer,
    options: &Options,
    progress: &Progress,
) -> Result<Arrangement, ArrangeError> {
    if bench.aims.is_empty() {
        return Err(ArrangeError::NoAims);
    }
    let (min_parts, max_parts) = (options.min_parts, options.max_parts);
    if !(1..=3).contains(&min_parts) || !(min_parts..=3).contains(&max_parts) {
        return Err(ArrangeError::Parts(format!("{min_parts} to {max_parts}")));
    }
    // The bench need not trace before lenses are added (a bench of an object and a screen does not).
    if let Some(e) =
        crate::validate::validate(bench).into_iter().find(|f| f.severity == crate::validate::Severity::Error)
    {
        return Err(ArrangeError::Bench(e.message));
    }
    let wavelength = bench.primary_wavelength_nm().unwrap_or(587.5618);
    let lenses: Vec<Vec<Lens>> = drawer.items.iter().enumerate().map(|(k, it)| lenses_of(k, it, wavelength)).collect();
    if lenses.iter().all(Vec::is_empty) {
        return Err(ArrangeError::NoLenses);
    }
    let frame = frame_of(bench, options);
    // Quantities: what the bench already holds from the drawer counts against them.
    let mut left: Vec<u32> = drawer.items.iter().map(|it| it.quantity).collect();
    for p in &bench.parts {
        if let Some(k) = p.from_drawer.as_ref().and_then(|l| drawer.items.iter().position(|it| &it.label == l)) {
            left[k] = left[k].saturating_sub(1);
        }
    }
    let usable: Vec<usize> = (0..drawer.items.len()).filter(|&k| !lenses[k].is_empty() && left[k] > 0).collect();
    let mut choices: Vec<Vec<usize>> = Vec::new();
    for n in min_parts..=max_parts {
        let mut idx = vec![0usize; n];
        'outer: loop {
            let pick: Vec<usize> = idx.iter().map(|&i| usable[i]).collect();
            let fits_quantity = pick.iter().all(|k| pick.iter().filter(|j| *j == k).count() as u32 <= left[*k]);
            if fits_quantity {
                choices.push(pick);
            }
            // Next ordered tuple (every order: the rail order is the tuple's).
            let mut d = n;
            loop {
                if d == 0 {
                    break 'outer;
                }
                d -= 1;
                idx[d] += 1;
                if idx[d] < usable.len() {
                    break;
                }
                idx[d] = 0;
            }
        }
        if usable.is_empty() {
            break;
        }
    }
    progress.total.store(choices.len(), Ordering::Relaxed);
    progress.done.store(0, Ordering::Relaxed);
    let found: Vec<Found> = choices
        .par_iter()
        .map(|pick| {
            if progress.cancel.load(Ordering::Relaxed) {
                return Found::default();
            }
            let out = search_choice(bench, drawer, &frame, &lenses, pick);
            progress.done.fetch_add(1, Ordering::Relaxed);
            out
        })
        .collect();
    let cancelled = progress.cancel.load(Ordering::Relaxed);
    let mut refined: Vec<Refined> = Vec::new();
    let mut nears: Vec<Option<NearMiss>> = Vec::new();
    for f in found {
        refined.extend(f.refined);
        nears.push(f.near);
    }
    let mut traced = refined.len();
    // The sharpest by the cheap path are evaluated in full (a stable sort keeps the enumeration order
    // among equals); the full evaluation then ranks them.
    refined.sort_by(|a, b| a.rms_mm.total_cmp(&b.rms_mm));
    refined.truncate((4 * options.top).max(FULLY_EVALUATED));
    // Three-lens arrangements were traced unrefined: refine the shortlist now.
    let refined: Vec<Refined> = refined
        .into_par_iter()
        .map(|r| if r.way.len() >= 3 { refine(bench, drawer, &frame, &r.way, &r.xs, true).unwrap_or(r) } else { r })
        .collect();
    let mut all: Vec<Candidate> =
        refined.par_iter().filter_map(|r| exact(bench, drawer, &frame, &r.way, &r.xs)).collect();
    if !cancelled && !all.iter().any(Candidate::meets_all) {
        // Nothing meets the aims: trace the nearest first-order misses (enumeration order breaks ties).
        let mut nears: Vec<NearMiss> = nears.into_iter().flatten().collect();
        nears.sort_by(|a, b| a.miss.total_cmp(&b.miss));
        nears.truncate(options.top.max(1));
        let misses: Vec<Candidate> =
            nears.par_iter().filter_map(|n| exact(bench, drawer, &frame, &n.way, &n.xs)).collect();
        traced += misses.len();
        all.extend(misses);
    }
    all.sort_by(rank);
    all.dedup_by(|a, b| a.parts == b.parts);
    all.truncate(options.top.max(1));
    Ok(Arrangement { candidates: all, combinations: choices.len(), traced, cancelled })
}

/// The total order of candidates: aims met (more first), total miss, RMS on and off axis, vignetting,
/// length, number of parts, then the drawer order and positions.
pub fn rank(a: &Candidate, b: &Candidate) -> std::cmp::Ordering {
    let none_last = |x: Option<f64>| x.unwrap_or(f64::INFINITY);
    b.met
        .cmp(&a.met)
        .then(a.miss.total_cmp(&b.miss))
        .then(none_last(a.rms_on_axis_um).total_cmp(&none_last(b.rms_on_axis_um)))
        .then(none_last(a.rms_off_axis_um).total_cmp(&none_last(b.rms_off_axis_um)))
        // More of the off-axis pupil through ranks first (none: last).
        .then(none_last(a.off_axis_transmission.map(|t| -t)).total_cmp(&none_last(b.off_axis_transmission.map(|t| -t))))
        .then(none_last(a.total_length_mm).total_cmp(&none_last(b.total_length_mm)))
        .then(a.parts.len().cmp(&b.parts.len()))
        .then_with(|| {
            let key = |c: &Candidate| c.parts.iter().map(|p| (p.item, p.turned)).collect::<Vec<_>>();
            key(a).cmp(&key(b))
        })
        .then_with(|| {
            for (p, q) in a.parts.iter().zip(&b.parts) {
                let o = p.at_mm.total_cmp(&q.at_mm);
                if o.is_ne() {
                    return o;
                }
            }
            std::cmp::Ordering::Equal
        })
}

fn frame_of(bench: &Bench, options: &Options) -> Frame {
    let object = match bench.object {
        ObjectSpec::Point { at_mm, .. } => Some(at_mm),
        ObjectSpec::Distant { .. } => None,
    };
    let mut target = None;
    let mut screen = None;
    let mut magnification = None;
    let mut afocal_ratio = None;
    let mut gap = options.gap_mm;
    for aim in &bench.aims {
        match aim {
            Aim::SharpOn { screen: name, .. } => {
                screen = bench.parts.iter().position(|p| &p.name == name);
                target = screen.map(|i| bench.parts[i].at_mm);
            }
            Aim::ObjectToImage { distance_mm, .. } if target.is_none() => {
                target = object.map(|o| o + distance_mm);
            }
            Aim::Magnification { value, tolerance } => magnification = Some((*value, *tolerance)),
            Aim::AngularMagnification { value, tolerance } => afocal_ratio = Some((*value, *tolerance, true)),
            Aim::BeamExpansion { ratio, tolerance } => afocal_ratio = Some((*ratio, *tolerance, false)),
            Aim::CarrierGap { at_least_mm } => gap = gap.max(*at_least_mm),
            _ => {}
        }
    }
    let lo = object.unwrap_or(0.0).max(0.0);
    let hi = target.unwrap_or(bench.rail_length_mm).min(bench.rail_length_mm);
    let obstacles = bench.parts.iter().map(|p| p.carrier_span_mm().unwrap_or((p.at_mm, p.end_mm()))).collect();
    Frame { object, target, screen, magnification, afocal_ratio, lo, hi, gap, obstacles }
}

/// A first-order solution that misses the aims: kept in case nothing meets them.
#[derive(Debug, Clone)]
struct NearMiss {
    miss: f64,
    way: Vec<Lens>,
    xs: Vec<f64>,
}

/// What one choice of lenses gives.
#[derive(Debug, Default)]
struct Found {
    /// Arrangements traced (and, for one or two lenses, refined) by the cheap path.
    refined: Vec<Refined>,
    /// The nearest first-order miss.
    near: Option<NearMiss>,
}

/// Every way round of the chosen items, solved and pruned, traced by the cheap path (one or two lenses
/// refined there; three lenses only the gentlest, refined if they reach the shortlist); with the
/// choice's nearest first-order miss.
fn search_choice(bench: &Bench, drawer: &Drawer, frame: &Frame, lenses: &[Vec<Lens>], pick: &[usize]) -> Found {
    let mut ways: Vec<Vec<Lens>> = vec![Vec::new()];
    for &k in pick {
        ways = ways.into_iter().flat_map(|w| lenses[k].iter().map(move |l| [w.clone(), vec![*l]].concat())).collect();
    }
    let mut met: Vec<(f64, Vec<Lens>, Vec<f64>)> = Vec::new();
    let mut near: Option<NearMiss> = None;
    for way in ways {
        for xs in solve(frame, &way) {
            let Some(miss) = frame.paraxial_miss(&way, &xs) else { continue };
            if miss == 0.0 {
                met.push((bending(frame, &way, &xs), way.clone(), xs));
            } else if near.as_ref().is_none_or(|n| miss < n.miss) {
                near = Some(NearMiss { miss, way: way.clone(), xs });
            }
        }
    }
    // Three lenses leave many first-order solutions: only the gentlest (least marginal-ray bending) of
    // each choice is traced, unrefined until the shortlist.
    if pick.len() >= 3 {
        met.sort_by(|a, b| a.0.total_cmp(&b.0));
        met.truncate(THREE_PART_KEEP);
        let refined =
            met.into_iter().filter_map(|(_, way, xs)| refine(bench, drawer, frame, &way, &xs, false)).collect();
        return Found { refined, near };
    }
    let refined = met.into_iter().filter_map(|(_, way, xs)| refine(bench, drawer, frame, &way, &xs, true)).collect();
    Found { refined, near }
}

/// First-order solutions of a three-lens choice traced (the gentlest by [`bending`]).
const THREE_PART_KEEP: usize = 1;

/// How hard the lenses at `xs` bend the paraxial marginal ray (from the axial object point to the first
/// lens's rim, or a parallel beam at its rim): Σ|Δu|³ over the lenses, a cheap stand-in for their
/// aberrations (third-order spherical aberration grows with the cube of the bending), to choose which
/// first-order solutions of many to trace.
fn bending(frame: &Frame, way: &[Lens], xs: &[f64]) -> f64 {
    let rim = way.first().map_or(1.0, |l| l.semi);
    let (mut z, mut y, mut u) = match frame.object {
        Some(o) => (o, 0.0, rim / (xs[0] + way[0].h1 - o).max(1e-9)),
        None => (xs[0] + way[0].h1, rim, 0.0),
    };
    let mut sum = 0.0;
    for (l, &x) in way.iter().zip(xs) {
        let h = x + l.h1;
        y += u * (h - z);
        let du = -y / l.f;
        sum += du.abs().powi(3);
        u += du;
        z = x + l.h2;
    }
    sum
}

/// Candidate positions for `way` in closed form (see the module docs).
fn solve(frame: &Frame, way: &[Lens]) -> Vec<Vec<f64>> {
    const GRID: usize = 48;
    let (lo, hi) = (frame.lo + frame.gap, frame.hi - frame.gap);
    if hi <= lo {
        return Vec::new();
    }
    let last = way.len() - 1;
    // Afocal: two lenses spaced by f₁ + f₂ between the inner principal planes, first one as early as fits.
    if let Some((want, tol, angular)) = frame.afocal_ratio {
        if way.len() != 2 {
            return Vec::new();
        }
        let (a, b) = (&way[0], &way[1]);
        let m = -a.f / b.f;
        let value = if angular { m } else { 1.0 / m.abs() };
        // Far outside the aim: not even a near miss worth tracing.
        if (value - want).abs() > 1e3 * tol.max(1e-3 * want.abs()) {
            return Vec::new();
        }
        let spacing = a.f + b.f;
        let mut x1 = lo;
        // Step past the bench's parts until both lenses fit.
        for _ in 0..64 {
            let x2 = x1 + a.h2 + spacing - b.h1;
            if frame.fits(way, &[x1, x2]) {
                return vec![vec![x1, x2]];
            }
            x1 += frame.gap.max(1.0);
            if x1 > hi {
                break;
            }
        }
        return Vec::new();
    }
    let Some(target) = frame.target else {
        // No image plane: one lens at the magnification asked for, if any.
        if let (Some((m, _)), Some(z), 1) = (frame.magnification, frame.object, way.len()) {
            let l = &way[0];
            // s′ = m s and 1/s′ − 1/s = 1/f give s = f(1 − m)/m.
            let s = l.f * (1.0 - m) / m;
            return vec![vec![z - s - l.h1]];
        }
        return Vec::new();
    };
    // The last lens images onto the target; the ones before it are free (grid, then bisection on the
    // magnification's miss where a magnification is asked for).
    let tail = |xs: &[f64]| -> Vec<Vec<f64>> {
        let mut at = frame.object;
        for (l, &x) in way.iter().zip(xs) {
            at = image_through(l, x, at).0;
            if at.is_none() {
                return Vec::new();
            }
        }
        focus_onto(&way[last], at, target).into_iter().map(|x| [xs, &[x]].concat()).collect()
    };
    let magnification_of = |xs: &[f64]| -> Option<f64> {
        let mut at = frame.object;
        let mut m = 1.0;
        for (l, &x) in way.iter().zip(xs) {
            let (img, mi) = image_through(l, x, at);
            at = img;
            m *= mi?;
        }
        Some(m)
    };
    let grid = |n: usize| (0..n).map(move |k| lo + (hi - lo) * (k as f64 + 0.5) / n as f64);
    match way.len() {
        1 => tail(&[]),
        2 => free_one(frame, grid(GRID).collect(), &|x| tail(&[x]), &magnification_of),
        _ => {
            let mut out = Vec::new();
            // Three lenses: a coarser grid (8 first positions, 24 for the middle lens) keeps every choice of
            // 60 items within seconds; bisection still closes each bracketed root exactly.
            for x1 in grid(8) {
                out.extend(free_one(
                    frame,
                    grid(GRID / 2).filter(|&x| x > x1).collect(),
                    &|x| tail(&[x1, x]),
                    &magnification_of,
                ));
            }
            out
        }
    }
}

/// One free position over `xs` (the rest follow from it by `tail`, each root branch on its own): with a
/// magnification asked for, the roots of its miss bracketed on the grid and closed by bisection; else
/// a few grid points spread along the rail.
fn free_one(
    frame: &Frame,
    xs: Vec<f64>,
    tail: &dyn Fn(f64) -> Vec<Vec<f64>>,
    magnification_of: &dyn Fn(&[f64]) -> Option<f64>,
) -> Vec<Vec<f64>> {
    let Some((want, _)) = frame.magnification else {
        // No magnification asked: the exact trace ranks a few spread placements.
        let step = (xs.len() / 6).max(1);
        return xs.iter().step_by(step).flat_map(|&x| tail(x)).collect();
    };
    let mut out = Vec::new();
    for branch in 0..2 {
        let miss = |x: f64| -> Option<(f64, Vec<f64>)> {
            let sol = tail(x).into_iter().nth(branch)?;
            Some((magnification_of(&sol)? - want, sol))
        };
        let found_before = out.len();
        let mut nearest: Option<(f64, Vec<f64>)> = None;
        let mut prev: Option<(f64, f64)> = None;
        for &x in &xs {
            let now = miss(x).map(|(d, _)| d);
            if let (Some((px, pd)), Some(d)) = (prev, now)
                && pd.signum() != d.signum()
            {
                // Bisection on [px, x].
                let (mut a, mut b, mut da) = (px, x, pd);
                // 44 halvings take a 500 mm bracket below 3e-11 mm.
                for _ in 0..44 {
                    let mid = 0.5 * (a + b);
                    match miss(mid) {
                        Some((dm, _)) if dm.signum() == da.signum() => {
                            a = mid;
                            da = dm;
                        }
                        Some(_) => b = mid,
                        None => break,
                    }
                }
                if let Some((_, sol)) = miss(0.5 * (a + b)) {
                    out.push(sol);
                }
            }
            if let Some((d, sol)) = miss(x)
                && nearest.as_ref().is_none_or(|(n, _)| d.abs() < *n)
            {
                nearest = Some((d.abs(), sol));
            }
            prev = now.map(|d| (x, d));
        }
        if out.len() == found_before
            && let Some((_, sol)) = nearest
        {
            // No root on this branch: its nearest point, a near miss for when nothing meets the aims.
            out.push(sol);
        }
    }
    out
}

/// An arrangement refined on the exact trace by the cheap path, waiting for its full evaluation.
#[derive(Debug, Clone)]
struct Refined {
    way: Vec<Lens>,
    xs: Vec<f64>,
    /// The on-axis RMS at the target screen by the cheap path, mm (infinite: none).
    rms_mm: f64,
}

/// `bench` with the lenses of `way` at `xs`; the index of the first one added.
fn with_lenses(bench: &Bench, drawer: &Drawer, way: &[Lens], xs: &[f64]) -> (Bench, usize) {
    let mut trial = bench.clone();
    let first_new = trial.parts.len();
    for (l, &x) in way.iter().zip(xs) {
        let it = &drawer.items[l.item];
        let kind = if l.turned { it.part.turned() } else { it.part.clone() };
        let name = fresh_name(&trial, &it.label);
        trial.parts.push(Part {
            name,
            at_mm: x,
            kind,
            carrier_mm: None,
            from_drawer: Some(it.label.clone()),
            coatings: Vec::new(),
        });
    }
    (trial, first_new)
}

/// The arrangement traced exactly by the cheap path: the last lens refined by golden-section search to
/// the least on-axis RMS spot on the target screen, within the magnification's tolerance.
fn refine(
    bench: &Bench,
    drawer: &Drawer,
    frame: &Frame,
    way: &[Lens],
    xs: &[f64],
    golden_search: bool,
) -> Option<Refined> {
    let (trial, first_new) = with_lenses(bench, drawer, way, xs);
    let mut placer = Placer::of_bench(&trial).ok()?;
    if let Some(screen) = frame.screen {
        placer.aim_at(screen);
    }
    let Some(screen) = frame.screen.filter(|_| golden_search) else {
        return Some(Refined {
            way: way.to_vec(),
            xs: xs.to_vec(),
            rms_mm: placer.figures().rms_mm.unwrap_or(f64::INFINITY),
        });
    };
    placer.aim_at(screen);
    let mut out_xs = xs.to_vec();
    let best_rms;
    {
        {
            let k = first_new + way.len() - 1;
            let x0 = trial.parts[k].at_mm;
            let reach = 0.05 * way[way.len() - 1].f.abs() + 1.0;
            let mut rms = |x: f64| -> f64 {
                let fits = {
                    let mut xs2 = xs.to_vec();
                    *xs2.last_mut().expect("one lens at least") = x;
                    frame.fits(way, &xs2)
                };
                if !fits || placer.place(k, x).is_err() {
                    return f64::INFINITY;
                }
                let figures = placer.figures();
                // The refinement keeps the magnification asked for.
                if let Some((want, tol)) = frame.magnification
                    && figures.magnification.is_none_or(|m| (m - want).abs() > tol)
                {
                    return f64::INFINITY;
                }
                figures.rms_mm.unwrap_or(f64::INFINITY)
            };
            let best = golden(&mut rms, x0 - reach, x0 + reach, 1e-5);
            // Kept only when it gains more than a picometre (a perfect image stays where first order puts it).
            let (at_best, at_start) = (rms(best), rms(x0));
            if at_best < at_start - 1e-9 {
                *out_xs.last_mut().expect("one lens at least") = best;
                best_rms = at_best;
            } else {
                best_rms = at_start;
            }
        }
    }
    Some(Refined { way: way.to_vec(), xs: out_xs, rms_mm: best_rms })
}

/// The refined arrangement evaluated in full, once.
fn exact(bench: &Bench, drawer: &Drawer, frame: &Frame, way: &[Lens], xs: &[f64]) -> Option<Candidate> {
    let (trial, first_new) = with_lenses(bench, drawer, way, xs);
    let eval = Evaluation::of(&trial);
    let report = &eval.report;
    if report.trace_failure.is_some() {
        return None;
    }
    let aims = report.aims.clone();
    let met = aims.iter().filter(|a| a.met).count();
    let miss = aims.iter().map(|a| a.miss).sum();
    let screen_fig = frame.screen.and_then(|i| report.screens.iter().find(|s| s.part == bench.parts[i].name));
    let rms_on_axis_um = screen_fig
        .and_then(|s| s.rms_spot_um)
        .or_else(|| report.screens.iter().rev().find(|s| s.after_last_part).and_then(|s| s.rms_spot_um));
    let plane = screen_fig.map(|s| s.at_mm).or_else(|| report.images.last().filter(|i| i.real).and_then(|i| i.at_mm));
    let rms_off_axis_um = eval.analysis().zip(eval.compiled()).zip(plane).and_then(|((a, c), z)| {
        let w = a.primary();
        let pupils = w.pupils.as_ref().ok()?;
        lumenrail_optics::spot::SkewSpot::converged(&w.seq, c.object, pupils, 1.0, z)
            .map(|s| s.at_plane(z).rms_mm * 1e3)
    });
    let mut parts: Vec<Placed> = way
        .iter()
        .enumerate()
        .map(|(j, l)| Placed {
            item: l.item,
            label: drawer.items[l.item].label.clone(),
            turned: l.turned,
            at_mm: trial.parts[first_new + j].at_mm,
        })
        .collect();
    parts.sort_by(|a, b| a.at_mm.total_cmp(&b.at_mm));
    Some(Candidate {
        parts,
        met,
        miss,
        aims,
        rms_on_axis_um,
        rms_off_axis_um,
        off_axis_transmission: report.off_axis_area_transmission,
        total_length_mm: crate::aims::total_length_mm(&trial, report),
    })
}

/// Golden-section search for the least of `f` on [a, b], to `tol`.
fn golden(f: &mut dyn FnMut(f64) -> f64, mut a: f64, mut b: f64, tol: f64) -> f64 {
    let r = 0.5 * (5f64.sqrt() - 1.0);
    let mut c = b - r * (b - a);
    let mut d = a + r * (b - a);
    let (mut fc, mut fd) = (f(c), f(d));
    while (b - a).abs() > tol {
        if fc <= fd {
            b = d;
            d = c;
            fd = fc;
            c = b - r * (b - a);
            fc = f(c);
        } else {
            a = c;
            c = d;
            fc = fd;
            d = a + r * (b - a);
            fd = f(d);
        }
    }
    0.5 * (a + b)
}

/// A part name not yet on `bench`, from `label`.
fn fresh_name(bench: &Bench, label: &str) -> String {
    if bench.part(label).is_none() {
        return label.to_string();
    }
    (2..).map(|k| format!("{label} ({k})")).find(|n| bench.part(n).is_none()).expect("some name is free")
}

/// `bench` with `candidate`'s lenses placed from `drawer` (each part remembers its drawer item).
pub fn apply(bench: &Bench, drawer: &Drawer, candidate: &Candidate) -> Bench {
    let mut out = bench.clone();
    for p in &candidate.parts {
        let it = &drawer.items[p.item];
        let kind: PartKind = if p.turned { it.part.turned() } else { it.part.clone() };
        let name = fresh_name(&out, &it.label);
        out.parts.push(Part {
            name,
            at_mm: p.at_mm,
            kind,
            carrier_mm: None,
            from_drawer: Some(it.label.clone()),
            coatings: Vec::new(),
        });
    }
    out
}
