//! The mount sheet: what the machine shop needs to make a bench's mounts, projected from the bench's one
//! [`Evaluation`].
//!
//! For each part in rail order: its carrier's reference position from the datum (rail 0), every vertex
//! position, the spacing to the part before (vertex to vertex, and reference to reference), and for each
//! surface the clear aperture that the traced light needs there beside the part's diameter, with the
//! sags at the clear aperture and at the full diameter (for seats and retaining rings); the centre and
//! edge thickness of each lens; and the assembly's overall length.
//!
//! Nothing is compiled or evaluated again: the positions and shapes come from the bench, and the clear
//! apertures from rays traced through the sequences and pupils that the evaluation already holds. At
//! every listed wavelength, from the on-axis object point and from the off-axis point (the full field),
//! [`RIM_RAYS`] rays evenly spaced round the rim of the real stop ([`rim_around`]) and the chief ray are
//! traced exactly in 3-D ([`skew::through_step`]); a surface's clear aperture is
//! 2 × (the largest distance from the axis at which those rays meet it) + 2 × the margin. The stop's
//! disc maps inside the curve its rim traces on any later surface (the map is continuous and one to one
//! away from a caustic), so the rim and the chief ray bound the whole pupil's footprint. A ray that meets
//! a clear aperture outside the part's radius stops there (that light is clipped): it counts at that
//! surface, whose clear aperture then exceeds the part's diameter and the sheet warns, and not beyond.
//! A screen does not block light: its clear aperture is the footprint at its plane, over every crossing.
//!
//! Lengths are millimetres in the struct (and in its JSON); [`length`] converts for display in inches
//! (25.4 mm per inch exactly).

use crate::compile;
use crate::evaluation::Evaluation;
use crate::model::{ObjectSpec, Part, PartKind, SurfaceSpec};
use crate::report::fixed;
use lumenrail_optics::pupil::StopAt;
use lumenrail_optics::sampling::{SkewAimer, rim_around};
use lumenrail_optics::skew::{self, SkewRay};
use lumenrail_optics::system::Sequence;
use serde::Serialize;
use std::fmt::Write as _;

/// Millimetres per inch, exactly (the international inch).
pub const MM_PER_INCH: f64 = 25.4;

/// The margin added to each side of the light's footprint for a clear aperture, mm: common practice (a
/// seat or retaining ring kept half a millimetre clear of the light), not a figure of optics.
pub const DEFAULT_MARGIN_MM: f64 = 0.5;

/// Rays traced round the rim of the stop for each object point at each wavelength (the chief ray comes
/// on top). The rim's footprint on a surface is a smooth closed curve; between neighbouring rays 2π/64
/// apart a circle's chord falls short of the arc by R(1 − cos(π/64)) ≈ 1.2e-3 R at most, and the
/// largest radius of an on-axis bundle or of the meridional extreme of an off-axis one is met by a ray
/// exactly (the top and bottom rays, φ = 0 and π, are in the set).
pub const RIM_RAYS: usize = 64;

/// A length in mm for display: in inches (`mm / 25.4`) when `inch`, else unchanged.
pub fn length(mm: f64, inch: bool) -> f64 {
    if inch { mm / MM_PER_INCH } else { mm }
}

/// The unit's short name for display: "in" or "mm".
pub fn unit(inch: bool) -> &'static str {
    if inch { "in" } else { "mm" }
}

/// Which point of each carrier is its reference position on the sheet.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Datum {
    /// The middle of the carrier (common practice for a rail carrier's index mark).
    #[default]
    CarrierCentre,
    /// The carrier's edge towards the rail's datum (−z).
    CarrierLeftEdge,
    /// The carrier's edge away from the datum (+z).
    CarrierRightEdge,
}

impl Datum {
    /// What a person reads: "carrier centre", "carrier left edge", "carrier right edge".
    pub fn words(self) -> &'static str {
        match self {
            Datum::CarrierCentre => "carrier centre",
            Datum::CarrierLeftEdge => "carrier left edge",
            Datum::CarrierRightEdge => "carrier right edge",
        }
    }

    /// The datum for the command line's word: `centre`, `left` or `right`.
    pub fn from_word(word: &str) -> Option<Datum> {
        match word {
            "centre" => Some(Datum::CarrierCentre),
            "left" => Some(Datum::CarrierLeftEdge),
            "right" => Some(Datum::CarrierRightEdge),
            _ => None,
        }
    }

    /// The reference position of a carrier spanning `from_mm`..`to_mm`.
    pub fn of_span(self, from_mm: f64, to_mm: f64) -> f64 {
        match self {
            Datum::CarrierCentre => 0.5 * (from_mm + to_mm),
            Datum::CarrierLeftEdge => from_mm,
            Datum::CarrierRightEdge => to_mm,
        }
    }
}

/// What the user chooses for a mount sheet.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct MountOptions {
    /// Which point of each carrier is its reference position (default: the centre).
    pub datum: Datum,
    /// Added to each side of the light's footprint for a clear aperture, mm (default
    /// [`DEFAULT_MARGIN_MM`], common practice).
    pub margin_mm: f64,
}

impl Default for MountOptions {
    fn default() -> Self {
        MountOptions { datum: Datum::default(), margin_mm: DEFAULT_MARGIN_MM }
    }
}

/// The mount sheet of one bench revision.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct MountSheet {
    /// The bench's title.
    pub title: String,
    /// Which point of each carrier is its reference position.
    pub datum: Datum,
    /// The margin added to each side of the light's footprint, mm.
    pub margin_mm: f64,
    /// The rail's usable length from the datum, mm.
    pub rail_length_mm: f64,
    /// The wavelengths the clear apertures were traced at, nm.
    pub wavelengths_nm: Vec<f64>,
    /// Rays traced round the stop's rim per object point per wavelength (plus the chief ray).
    pub rim_rays: usize,
    /// The parts, in rail order.
    pub parts: Vec<MountPart>,
    /// The first vertex of any part but a screen, mm from the datum (`None`: only screens).
    pub first_vertex_mm: Option<f64>,
    /// The last vertex of any part but a screen, mm from the datum.
    pub last_vertex_mm: Option<f64>,
    /// The assembly's length from its first vertex to its last (screens left out), mm.
    pub vertex_length_mm: Option<f64>,
    /// The object's rail position, mm (`None`: a distant object).
    pub object_at_mm: Option<f64>,
    /// The last screen's rail position, mm (`None`: no screen).
    pub last_screen_at_mm: Option<f64>,
    /// From the object to the last screen, mm (`None` without both).
    pub object_to_last_screen_mm: Option<f64>,
    /// Everything the shop should look at: clear apertures larger than their parts, lens edges that
    /// vanish, light that could not be traced.
    pub warnings: Vec<MountWarning>,
}

/// Something on the mount sheet that needs a look.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct MountWarning {
    /// The part concerned, by name (`None`: the bench as a whole).
    pub part: Option<String>,
    /// What it says, in plain words, lengths in mm ([`MountWarning::words`] gives it in inches).
    pub message: String,
    /// The message's words and lengths, for showing it in either unit.
    #[serde(skip)]
    pieces: Vec<Piece>,
}

/// A piece of a warning: words, or a length in mm shown in the display's unit.
#[derive(Debug, Clone, PartialEq)]
enum Piece {
    Words(String),
    Length(f64),
}

impl MountWarning {
    /// A warning about `part` from its pieces.
    fn new(part: Option<&str>, pieces: Vec<Piece>) -> MountWarning {
        let mut w = MountWarning { part: part.map(str::to_string), message: String::new(), pieces };
        w.message = w.words(false);
        w
    }

    /// A warning of words alone.
    fn plain(part: Option<&str>, message: String) -> MountWarning {
        MountWarning::new(part, vec![Piece::Words(message)])
    }

    /// What it says, with its lengths in mm or (`inch`) inches.
    pub fn words(&self, inch: bool) -> String {
        let mut t = String::new();
        for p in &self.pieces {
            match p {
                Piece::Words(w) => t.push_str(w),
                Piece::Length(mm) => {
                    let _ = write!(t, "{} {}", fixed(length(*mm, inch), if inch { 4 } else { 3 }), unit(inch));
                }
            }
        }
        t
    }
}

fn words(w: impl Into<String>) -> Piece {
    Piece::Words(w.into())
}

/// One part on the mount sheet.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct MountPart {
    /// The part's name.
    pub name: String,
    /// What kind of part: "thin lens", "singlet", "doublet", "mirror", "iris", "screen".
    pub kind: &'static str,
    /// The carrier's width as the bench gives it, mm (`None`: the bench gives none, and the carrier is
    /// taken as the part's own glass, from its first vertex to its last).
    pub carrier_mm: Option<f64>,
    /// The carrier's edge towards the datum, mm from the datum.
    pub carrier_from_mm: f64,
    /// The carrier's edge away from the datum, mm from the datum.
    pub carrier_to_mm: f64,
    /// The carrier's reference position by the sheet's datum, mm from the datum.
    pub reference_mm: f64,
    /// Every vertex, in rail order, mm from the datum.
    pub vertices_mm: Vec<f64>,
    /// This part's first vertex minus the previous part's last vertex, mm (`None` for the first part).
    pub vertex_spacing_mm: Option<f64>,
    /// This part's reference position minus the previous part's, mm (`None` for the first part).
    pub reference_spacing_mm: Option<f64>,
    /// The part's diameter (an iris: its opening), mm.
    pub diameter_mm: f64,
    /// A lens's centre thickness, first vertex to last, mm (`None` for parts that are not lenses of glass).
    pub centre_thickness_mm: Option<f64>,
    /// A lens's edge thickness at its full diameter: the centre thickness minus the first surface's sag
    /// plus the last surface's, mm (`None` when a surface does not reach the diameter).
    pub edge_thickness_mm: Option<f64>,
    /// Each glass element of a lens (one for a singlet, two for a doublet), with its own thicknesses.
    pub elements: Vec<GlassElement>,
    /// The part's surfaces in rail order (a thin lens, iris or screen: its plane).
    pub surfaces: Vec<MountSurface>,
}

/// One glass element of a lens.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct GlassElement {
    /// Centre thickness, mm.
    pub centre_thickness_mm: f64,
    /// Edge thickness at the lens's diameter: centre thickness − front sag + back sag, mm.
    pub edge_thickness_mm: Option<f64>,
}

/// One surface (or plane) of a part on the mount sheet.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct MountSurface {
    /// The vertex, mm from the datum.
    pub vertex_mm: f64,
    /// The surface's shape as the bench spells it, for the surface met from the datum's side.
    pub shape: SurfaceSpec,
    /// The largest distance from the axis at which the traced rays from the on-axis point meet it, mm
    /// (`None`: none meets it).
    pub light_radius_on_axis_mm: Option<f64>,
    /// The same for the off-axis point at the full field, mm.
    pub light_radius_full_field_mm: Option<f64>,
    /// The clear aperture the light needs: 2 × the larger light radius + 2 × the margin, mm (`None`:
    /// the light never reaches the surface, and `no_light` says why).
    pub clear_aperture_mm: Option<f64>,
    /// Why there is no clear aperture (`None` when there is one).
    pub no_light: Option<String>,
    /// The sag at half the clear aperture, mm, signed (+: towards +z), measured from the vertex.
    pub sag_at_clear_aperture_mm: Option<f64>,
    /// The sag at half the part's diameter, mm (`None`: the surface does not reach that far).
    pub sag_at_diameter_mm: Option<f64>,
}

/// The exact sag of a surface at radial height `rho_mm`: z = cρ² / (1 + √(1 − (1+k)c²ρ²)), mm from the
/// vertex (`None` where the surface does not reach that height).
pub fn sag_mm(shape: &SurfaceSpec, rho_mm: f64) -> Option<f64> {
    compile::shape(shape).sag_mm(rho_mm)
}

/// A part's surfaces in rail order: vertex and shape (a thin part: its plane, flat).
pub fn part_surfaces(part: &Part) -> Vec<(f64, SurfaceSpec)> {
    let at = part.at_mm;
    match &part.kind {
        PartKind::Singlet { front, back, thickness_mm, .. } => vec![(at, *front), (at + thickness_mm, *back)],
        PartKind::Doublet { front, middle, back, thickness1_mm, thickness2_mm, .. } => {
            vec![(at, *front), (at + thickness1_mm, *middle), (at + thickness1_mm + thickness2_mm, *back)]
        }
        PartKind::Mirror { surface, .. } => vec![(at, *surface)],
        PartKind::ThinLens { .. } | PartKind::Iris { .. } | PartKind::Screen { .. } | PartKind::Eye { .. } => {
            vec![(at, SurfaceSpec::Flat)]
        }
    }
}

/// The largest light radius met at one surface or plane by each object point, and what stopped rays there.
#[derive(Debug, Clone, Copy, Default)]
struct Tally {
    /// Largest radius from the on-axis point and from the full-field point (`None`: no ray).
    radius: [Option<f64>; 2],
    /// Rays that met it outside the part's radius and stopped there.
    blocked: usize,
    /// Rays that could not get through it (missed the surface, total internal reflection, not finite).
    lost: usize,
    /// Rays that arrived there.
    arrived: usize,
}

impl Tally {
    fn record(&mut self, field: usize, r: f64) {
        self.arrived += 1;
        self.radius[field] = Some(self.radius[field].map_or(r, |m: f64| m.max(r)));
    }
}

/// Every rim and chief ray, traced through one sequence, tallied per step and per screen crossing.
struct Footprints {
    steps: Vec<Tally>,
    crossings: Vec<Tally>,
}

impl Footprints {
    /// Follows one ray from its launch through `seq`, recording where it meets each surface and each
    /// screen plane, until it is clipped or lost.
    fn follow(&mut self, seq: &Sequence, planes: &[(usize, f64)], stop: Option<usize>, field: usize, ray: SkewRay) {
        let mut ray = ray;
        let mut next_plane = 0;
        for j in 0..=seq.steps.len() {
            while next_plane < planes.len() && planes[next_plane].0 == j {
                let (x, y) = ray.at_plane(planes[next_plane].1);
                let r = x.hypot(y);
                if r.is_finite() {
                    self.crossings[next_plane].record(field, r);
                }
                next_plane += 1;
            }
            let Some(step) = seq.steps.get(j) else { break };
            match skew::through_step(step, j, &ray, false) {
                Ok(next) => {
                    ray = next;
                    let r = ray.x_mm.hypot(ray.y_mm);
                    self.steps[j].record(field, r);
                    if Some(j) != stop && r > step.semi_aperture_mm {
                        self.steps[j].blocked += 1;
                        return;
                    }
                }
                // Missed, total internal reflection or not finite (apertures are checked above, not here).
                Err(_) => {
                    self.steps[j].lost += 1;
                    return;
                }
            }
        }
    }
}

impl MountSheet {
    /// The mount sheet of `evaluation`'s bench, with the datum and margin of `options`.
    pub fn of(evaluation: &Evaluation, options: &MountOptions) -> MountSheet {
        let bench = &evaluation.bench;
        let margin = options.margin_mm;
        let mut warnings = Vec::new();
        let order = bench.rail_order();

        // The light's footprints, at every wavelength the evaluation holds.
        let mut light = Light::none(evaluation);
        if let (Some(analysis), Some(compiled)) = (evaluation.analysis(), evaluation.compiled()) {
            let planes: Vec<(usize, f64)> =
                compiled.screen_crossings.iter().map(|c| (c.surfaces_before, bench.parts[c.part].at_mm)).collect();
            let mut fp = Footprints {
                steps: vec![Tally::default(); analysis.seq().steps.len()],
                crossings: vec![Tally::default(); planes.len()],
            };
            for w in &analysis.wavelengths {
                let nm = fixed(w.seq.wavelength_nm, 1);
                let pupils = match &w.pupils {
                    Ok(p) => p,
                    Err(e) => {
                        warnings.push(MountWarning::plain(None, format!("at {nm} nm: {e}")));
                        continue;
                    }
                };
                let stop = match pupils.stop {
                    StopAt::Surface(i) => Some(i),
                    StopAt::Beam => None,
                };
                for (field, fraction, point) in [(0, 0.0, "on-axis point"), (1, 1.0, "full-field point")] {
                    let aimer = match SkewAimer::new(&w.seq, compiled.object, pupils, fraction) {
                        Ok(a) => a,
                        Err(e) => {
                            let message = format!("at {nm} nm no ray from the {point} could be aimed at the stop: {e}");
                            warnings.push(MountWarning::plain(None, message));
                            continue;
                        }
                    };
                    fp.follow(&w.seq, &planes, stop, field, aimer.chief_ray());
                    let mut unaimed = 0;
                    for ray in rim_around(&aimer, RIM_RAYS) {
                        match ray {
                            Some(ray) => fp.follow(&w.seq, &planes, stop, field, ray),
                            None => unaimed += 1,
                        }
                    }
                    if unaimed > 0 {
                        let message = format!(
                            "at {nm} nm {unaimed} of the {RIM_RAYS} rays round the stop's rim from the {point} could \
                             not be aimed; the clear apertures stand for the rest"
                        );
                        warnings.push(MountWarning::plain(None, message));
                    }
                }
            }
            light = Light::from(evaluation, analysis.seq(), fp);
        }

        let mut parts: Vec<MountPart> = Vec::with_capacity(order.len());
        for &i in &order {
            let part = &bench.parts[i];
            let (carrier_from_mm, carrier_to_mm) = part.carrier_span_mm().unwrap_or((part.at_mm, part.end_mm()));
            let reference_mm = options.datum.of_span(carrier_from_mm, carrier_to_mm);
            let faces = part_surfaces(part);
            let vertices_mm: Vec<f64> = faces.iter().map(|f| f.0).collect();
            let prev = parts.last();
            let vertex_spacing_mm = prev.map(|p| vertices_mm[0] - p.vertices_mm[p.vertices_mm.len() - 1]);
            let reference_spacing_mm = prev.map(|p| reference_mm - p.reference_mm);
            let diameter_mm = part.kind.diameter_mm();
            let semi = 0.5 * diameter_mm;
            let who = format!("{} ({})", part.name, part.kind.word());
            let mut surfaces = Vec::with_capacity(faces.len());
            for (s, &(vertex_mm, shape)) in faces.iter().enumerate() {
                let (radius, no_light) = light.of(i, s);
                let on = radius.map(|r| r[0]);
                let full = radius.map(|r| r[1]);
                let widest = radius.and_then(|[a, b]| match (a, b) {
                    (Some(a), Some(b)) => Some(a.max(b)),
                    (a, b) => a.or(b),
                });
                let clear_aperture_mm = widest.map(|r| 2.0 * r + 2.0 * margin);
                let sag_at_diameter_mm = sag_mm(&shape, semi);
                let sag_at_clear_aperture_mm = clear_aperture_mm.and_then(|ca| sag_mm(&shape, 0.5 * ca));
                let face = if faces.len() > 1 { format!("surface {} of {who}", s + 1) } else { who.clone() };
                if let (Some(r), Some(ca)) = (widest, clear_aperture_mm) {
                    let screen = matches!(part.kind, PartKind::Screen { .. });
                    if r > semi {
                        let what = if screen {
                            "the light is wider than the screen"
                        } else {
                            "the part clips it (vignetting), or its mount would"
                        };
                        warnings.push(MountWarning::new(
                            Some(&part.name),
                            vec![
                                words(format!("{face}: the light needs a clear aperture of ")),
                                Piece::Length(ca),
                                words(" but the part is "),
                                Piece::Length(diameter_mm),
                                words(format!(" across: {what}")),
                            ],
                        ));
                    } else if ca > diameter_mm && !matches!(part.kind, PartKind::Iris { .. } | PartKind::Screen { .. })
                    {
                        warnings.push(MountWarning::new(
                            Some(&part.name),
                            vec![
                                words(format!("{face}: the clear aperture with its ")),
                                Piece::Length(margin),
                                words(" margin, "),
                                Piece::Length(ca),
                                words(", is larger than the part's diameter "),
                                Piece::Length(diameter_mm),
                                words(": the seat or retaining ring would clip the light"),
                            ],
                        ));
                    }
                }
                if sag_at_diameter_mm.is_none() {
                    warnings.push(MountWarning::new(
                        Some(&part.name),
                        vec![
                            words(format!("{face}: the surface does not reach the part's diameter ")),
                            Piece::Length(diameter_mm),
                        ],
                    ));
                }
                surfaces.push(MountSurface {
                    vertex_mm,
                    shape,
                    light_radius_on_axis_mm: on.flatten(),
                    light_radius_full_field_mm: full.flatten(),
                    clear_aperture_mm,
                    no_light,
                    sag_at_clear_aperture_mm,
                    sag_at_diameter_mm,
                });
            }
            let mut elements = Vec::new();
            let thicknesses: Vec<f64> = match &part.kind {
                PartKind::Singlet { thickness_mm, .. } => vec![*thickness_mm],
                PartKind::Doublet { thickness1_mm, thickness2_mm, .. } => vec![*thickness1_mm, *thickness2_mm],
                _ => vec![],
            };
            for (e, &t) in thicknesses.iter().enumerate() {
                let (front, back) = (surfaces[e].sag_at_diameter_mm, surfaces[e + 1].sag_at_diameter_mm);
                let edge = front.zip(back).map(|(f, b)| t - f + b);
                elements.push(GlassElement { centre_thickness_mm: t, edge_thickness_mm: edge });
            }
            let (centre_thickness_mm, edge_thickness_mm) = if thicknesses.is_empty() {
                (None, None)
            } else {
                let t = part.kind.thickness_mm();
                let (first, last) = (&surfaces[0], &surfaces[surfaces.len() - 1]);
                (Some(t), first.sag_at_diameter_mm.zip(last.sag_at_diameter_mm).map(|(f, b)| t - f + b))
            };
            for (e, el) in elements.iter().enumerate() {
                if let Some(et) = el.edge_thickness_mm.filter(|&et| et <= 0.0) {
                    let which = if elements.len() > 1 { format!("element {} of ", e + 1) } else { String::new() };
                    warnings.push(MountWarning::new(
                        Some(&part.name),
                        vec![
                            words(format!("{which}{who}: the edge thickness at the diameter is ")),
                            Piece::Length(et),
                            words(": the surfaces meet before the edge"),
                        ],
                    ));
                }
            }
            parts.push(MountPart {
                name: part.name.clone(),
                kind: part.kind.word(),
                carrier_mm: part.carrier_mm,
                carrier_from_mm,
                carrier_to_mm,
                reference_mm,
                vertices_mm,
                vertex_spacing_mm,
                reference_spacing_mm,
                diameter_mm,
                centre_thickness_mm,
                edge_thickness_mm,
                elements,
                surfaces,
            });
        }

        let optics: Vec<&MountPart> = parts.iter().filter(|p| p.kind != "screen").collect();
        let first_vertex_mm = optics.iter().map(|p| p.vertices_mm[0]).reduce(f64::min);
        let last_vertex_mm = optics.iter().map(|p| p.vertices_mm[p.vertices_mm.len() - 1]).reduce(f64::max);
        let vertex_length_mm = first_vertex_mm.zip(last_vertex_mm).map(|(a, b)| b - a);
        let object_at_mm = match bench.object {
            ObjectSpec::Point { at_mm, .. } => Some(at_mm),
            ObjectSpec::Distant { .. } => None,
        };
        let last_screen_at_mm = order
            .iter()
            .rev()
            .find(|&&i| matches!(bench.parts[i].kind, PartKind::Screen { .. }))
            .map(|&i| bench.parts[i].at_mm);
        let object_to_last_screen_mm = object_at_mm.zip(last_screen_at_mm).map(|(o, s)| s - o);
        warnings.extend(light.warnings);
        MountSheet {
            title: bench.title.clone(),
            datum: options.datum,
            margin_mm: margin,
            rail_length_mm: bench.rail_length_mm,
            wavelengths_nm: evaluation
                .analysis()
                .map_or_else(Vec::new, |a| a.wavelengths.iter().map(|w| w.seq.wavelength_nm).collect()),
            rim_rays: RIM_RAYS,
            parts,
            first_vertex_mm,
            last_vertex_mm,
            vertex_length_mm,
            object_at_mm,
            last_screen_at_mm,
            object_to_last_screen_mm,
            warnings,
        }
    }

    /// The sheet as JSON (lengths in mm).
    pub fn to_json(&self) -> String {
        serde_json::to_string_pretty(self).expect("the mount sheet serialises")
    }

    /// The sheet as a text table for a person, lengths in mm or (`inch`) inches.
    pub fn to_text(&self, inch: bool) -> String {
        let u = unit(inch);
        let l = |mm: f64| fixed(length(mm, inch), if inch { 4 } else { 3 });
        let opt = |v: Option<f64>| v.map_or_else(|| "—".to_string(), l);
        let mut t = String::new();
        let _ = writeln!(t, "Mount sheet: {}", self.title);
        let waves: Vec<String> = self.wavelengths_nm.iter().map(|w| fixed(*w, 1)).collect();
        let _ = writeln!(
            t,
            "Lengths in {u}; positions from the datum at rail 0; reference: {}. Clear apertures: the traced \
             light ({} rays round the stop's rim and the chief ray, on axis and at full field, at {} nm) plus a \
             margin of {} {u} each side.",
            self.datum.words(),
            self.rim_rays,
            if waves.is_empty() { "no wavelength".to_string() } else { waves.join(", ") },
            l(self.margin_mm),
        );
        let header = [
            "part",
            "kind",
            "reference",
            "ref. spacing",
            "vertex",
            "vertex spacing",
            "diameter",
            "clear aperture",
            "sag at CA",
            "sag at diameter",
            "centre thick.",
            "edge thick.",
        ];
        let mut rows: Vec<Vec<String>> = vec![header.iter().map(|h| h.to_string()).collect()];
        for p in &self.parts {
            for (s, surface) in p.surfaces.iter().enumerate() {
                let first = s == 0;
                let part_cell = |v: String| if first { v } else { String::new() };
                rows.push(vec![
                    part_cell(p.name.clone()),
                    part_cell(p.kind.to_string()),
                    part_cell(l(p.reference_mm)),
                    part_cell(opt(p.reference_spacing_mm)),
                    l(surface.vertex_mm),
                    if first {
                        opt(p.vertex_spacing_mm)
                    } else {
                        opt(Some(surface.vertex_mm - p.surfaces[s - 1].vertex_mm))
                    },
                    part_cell(l(p.diameter_mm)),
                    opt(surface.clear_aperture_mm),
                    opt(surface.sag_at_clear_aperture_mm),
                    opt(surface.sag_at_diameter_mm),
                    part_cell(opt(p.centre_thickness_mm)),
                    part_cell(opt(p.edge_thickness_mm)),
                ]);
            }
        }
        let widths: Vec<usize> =
            (0..header.len()).map(|c| rows.iter().map(|r| r[c].chars().count()).max().unwrap_or(0)).collect();
        for r in &rows {
            let cells: Vec<String> = r
                .iter()
                .zip(&widths)
                .enumerate()
                .map(|(c, (v, &w))| if c < 2 { format!("{v:<w$}") } else { format!("{v:>w$}") })
                .collect();
            let _ = writeln!(t, "{}", cells.join("  ").trim_end());
        }
        let _ = writeln!(t, "(vertex spacing on a part's later rows: from its previous surface, the centre thickness)");
        let _ = writeln!(
            t,
            "Overall length: first vertex to last vertex {} {u}; object to last screen {} {u}",
            opt(self.vertex_length_mm),
            opt(self.object_to_last_screen_mm)
        );
        for p in &self.parts {
            for (s, surface) in p.surfaces.iter().enumerate() {
                if let Some(why) = &surface.no_light {
                    let _ = writeln!(t, "{} surface {}: no clear aperture: {why}", p.name, s + 1);
                }
            }
        }
        for w in &self.warnings {
            let _ = writeln!(t, "warning: {}", w.words(inch));
        }
        t
    }
}

/// The light radii at each part's surfaces, or why there are none.
struct Light {
    /// For each part (by index in the bench) and each of its surfaces: the radii, or why none.
    by_part: Vec<Vec<Result<[Option<f64>; 2], String>>>,
    warnings: Vec<MountWarning>,
}

impl Light {
    /// No light anywhere, with the reason the evaluation gives.
    fn none(evaluation: &Evaluation) -> Light {
        let why = match &evaluation.report.trace_failure {
            Some(f) => format!("the bench cannot be traced: {f}"),
            None => "the bench cannot be traced".to_string(),
        };
        let by_part = evaluation.bench.parts.iter().map(|p| vec![Err(why.clone()); part_surfaces(p).len()]).collect();
        Light { by_part, warnings: Vec::new() }
    }

    /// The radii from the tallies: each step to its part's surface (the nearest vertex; a lens crossed
    /// twice counts both crossings), each screen crossing to its screen.
    fn from(evaluation: &Evaluation, seq: &Sequence, fp: Footprints) -> Light {
        let bench = &evaluation.bench;
        let compiled = evaluation.compiled().expect("traced");
        let faces: Vec<Vec<(f64, SurfaceSpec)>> = bench.parts.iter().map(part_surfaces).collect();
        let mut tallies: Vec<Vec<Option<Tally>>> = faces.iter().map(|f| vec![None; f.len()]).collect();
        let merge = |slot: &mut Option<Tally>, t: &Tally| {
            let m = slot.get_or_insert_with(Tally::default);
            for f in 0..2 {
                m.radius[f] = match (m.radius[f], t.radius[f]) {
                    (Some(a), Some(b)) => Some(a.max(b)),
                    (a, b) => a.or(b),
                };
            }
            m.arrived += t.arrived;
            m.blocked += t.blocked;
            m.lost += t.lost;
        };
        for (j, step) in seq.steps.iter().enumerate() {
            let part = step.element;
            let s = nearest(&faces[part], step.z_mm);
            merge(&mut tallies[part][s], &fp.steps[j]);
        }
        for (c, crossing) in compiled.screen_crossings.iter().enumerate() {
            merge(&mut tallies[crossing.part][0], &fp.crossings[c]);
        }
        let mut warnings = Vec::new();
        // Where the rays stop along the path, for the reason of surfaces no ray reaches.
        let first_stop = seq.steps.iter().enumerate().find(|(j, _)| fp.steps[*j].blocked + fp.steps[*j].lost > 0);
        let stopped_at = first_stop.map(|(_, s)| bench.parts[s.element].name.clone());
        let mut by_part = Vec::with_capacity(bench.parts.len());
        for (i, part_tallies) in tallies.into_iter().enumerate() {
            let name = &bench.parts[i].name;
            let mut radii = Vec::with_capacity(part_tallies.len());
            for (s, t) in part_tallies.into_iter().enumerate() {
                radii.push(match t {
                    None => Err("the light does not meet this part (it lies beyond a mirror, or behind the object)"
                        .to_string()),
                    Some(t) if t.arrived == 0 => Err(match &stopped_at {
                        Some(p) => format!("no traced ray gets here: they are clipped or lost at {p} before it"),
                        None => "no traced ray gets here".to_string(),
                    }),
                    Some(t) => {
                        if t.lost > 0 {
                            let face = if faces[i].len() > 1 { format!("surface {} of ", s + 1) } else { String::new() };
                            warnings.push(MountWarning::plain(
                                Some(name),
                                format!(
                                    "{face}{name}: {} traced rays miss the surface or are turned back by total internal \
                                     reflection there",
                                    t.lost
                                ),
                            ));
                        }
                        Ok(t.radius)
                    }
                });
            }
            by_part.push(radii);
        }
        Light { by_part, warnings }
    }

    /// The radii at surface `s` of part `i` (each `None` where that point's rays do not arrive), or `None`
    /// and the reason.
    fn of(&self, i: usize, s: usize) -> (Option<[Option<f64>; 2]>, Option<String>) {
        match &self.by_part[i][s] {
            Ok(r) => (Some(*r), None),
            Err(why) => (None, Some(why.clone())),
        }
    }
}

/// The index of the vertex in `faces` nearest to `z_mm`.
fn nearest(faces: &[(f64, SurfaceSpec)], z_mm: f64) -> usize {
    let mut best = 0;
    for (k, f) in faces.iter().enumerate() {
        if (f.0 - z_mm).abs() < (faces[best].0 - z_mm).abs() {
            best = k;
        }
    }
    best
}
