//! The stray-focus map: where the light that lens surfaces reflect comes to a focus, how strong it is, and
//! the warnings when such a focus lies on a surface, at the laser or on the screen.
//!
//! `lumenrail_optics::stray` does the physics (each reflected path as a sequence of its own, its paraxial
//! foci, a laser's own beam parameter along it); this module chooses the paths of a bench, gives each
//! surface its reflectance (the Fresnel share of bare glass, or the coating the part's `coatings` names),
//! names the surfaces by part, ranks the reflections and words the warnings. It is projected from the
//! evaluation's sequence at the laser's wavelength (else the primary one): nothing is compiled or
//! evaluated at a wavelength again.
//!
//! Reflections are listed for every bench that has lens surfaces (an ideal thin lens has none). The
//! warnings are a laser bench's, where a stray focus can hurt: eyes, coatings, the laser itself.

use crate::evaluation::Traced;
use crate::model::{Bench, Coating, Laser};
use crate::report::fixed;
use lumenrail_optics::beam::{BeamTrace, LaserSource, peak_irradiance_mw_per_mm2};
use lumenrail_optics::paraxial::Object;
use lumenrail_optics::stray::{
    StrayFocus, StrayKind, StrayPath, beam_foci, final_height_mm, fresnel_reflectance, geometric_foci, reflects_stray,
};
use lumenrail_optics::system::Sequence;
use serde::Serialize;

/// A stray focus this close to a surface or to the laser's exit, mm, is warned about ("within a few
/// millimetres").
pub const STRAY_NEAR_MM: f64 = 5.0;

/// A stray focus on a screen is warned about when its peak irradiance there is more than this share of the
/// main beam's.
pub const STRAY_SCREEN_SHARE: f64 = 0.01;

/// Reflections carrying less than this share of the laser's power are listed but not warned about (a
/// reflection off a cemented interface and another surface carries about 4e-6).
pub const STRAY_WARN_POWER: f64 = 1e-5;

/// How many reflections the text report lists (the JSON has them all).
pub const STRAY_TEXT_REFLECTIONS: usize = 8;

/// How many of the strongest reflections the rail marks.
pub const STRAY_MARKS: usize = 5;

/// One surface's reflectance.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SurfaceReflectance {
    /// The surface, as "part (front)", "part (back)" or "part (cemented)" (", on the way back" added for a
    /// crossing after a mirror).
    pub surface: String,
    /// The part's name.
    pub part: String,
    /// Reflectance at normal incidence, %.
    pub reflectance_percent: f64,
    /// Whether the part's coating sets it (false: bare glass, the Fresnel share).
    pub coated: bool,
}

/// A point where one reflection comes to a focus.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct StrayFocusFigures {
    /// Rail position, mm (for a laser, the stray beam's waist; else the paraxial focus).
    pub at_mm: f64,
    /// Where it lies: "towards the source", "towards the screen", "inside L1", "between L1 and L2".
    pub place: String,
    /// The stray beam's 1/e² diameter at its waist, mm (null without a laser: a geometric focus is a
    /// point).
    pub diameter_mm: Option<f64>,
    /// Peak irradiance 2P/(πw₀²) of the stray beam there, W/cm² (null without a laser power).
    pub peak_irradiance_w_per_cm2: Option<f64>,
    /// The nearest surface of the bench (or the laser's exit) to the focus.
    pub nearest: Option<Nearest>,
    /// False when the stray beam converges faster than the paraxial figures hold (a far-field half-angle
    /// w₀/z_R above [`PARAXIAL_HALF_ANGLE_RAD`]): then the true spot is larger, and its peak lower, than
    /// given (aberrations spread it).
    pub paraxial: bool,
}

/// Above this far-field half-angle, rad (about 6°), a stray waist's size and peak are only bounds: the
/// beam converges too fast for paraxial figures (common practice for where the paraxial approximation
/// stops being good to a few percent).
pub const PARAXIAL_HALF_ANGLE_RAD: f64 = 0.1;

/// At most this many stray-focus warnings are given one by one; the rest are counted in one more.
pub const STRAY_WARNINGS_SHOWN: usize = 4;

/// What lies nearest a stray focus.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Nearest {
    /// The part whose surface it is, or "the laser".
    pub what: String,
    /// Its distance from the focus along the rail, mm.
    pub distance_mm: f64,
}

/// One stray reflection: a back-reflection towards the source, or a double reflection towards the
/// screen.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct StrayReflection {
    /// "back" or "double".
    pub kind: &'static str,
    /// The reflecting surfaces in the order the light meets them.
    pub surfaces: Vec<String>,
    /// Share of the source's power it carries: the reflectances times the transmissions it crosses.
    pub power_share: f64,
    /// Where it comes to a focus, in path order.
    pub foci: Vec<StrayFocusFigures>,
    /// Its diameter at the source, mm (a back-reflection; 1/e² for a laser, the paraxial marginal
    /// bundle's otherwise; null for a distant object without a laser).
    pub diameter_at_source_mm: Option<f64>,
    /// The screen a double reflection reaches (the last beyond the last surface).
    pub screen: Option<String>,
    /// Its diameter there, mm.
    pub diameter_at_screen_mm: Option<f64>,
    /// Its peak irradiance on that screen over the main beam's there (null when it focuses to a point on
    /// it, or without a screen).
    pub screen_irradiance_share: Option<f64>,
    /// Its rank key: for a laser, the peak irradiance of its brightest focus per mW of the laser
    /// (W/cm² per mW); otherwise its power share.
    pub strength: f64,
}

impl StrayReflection {
    /// "L1 (back)" or "L1 (back), then L1 (front)".
    pub fn label(&self) -> String {
        self.surfaces.join(", then ")
    }
}

/// The stray-focus map (the report's `stray` key).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct StrayFigures {
    /// The wavelength the reflectances and foci are for, nm (the laser's, else the primary).
    pub wavelength_nm: f64,
    /// Whether the foci are a laser's beam waists (else paraxial foci of the marginal bundle).
    pub laser: bool,
    /// Every reflecting surface, in path order.
    pub surfaces: Vec<SurfaceReflectance>,
    /// Every reflection, strongest first.
    pub reflections: Vec<StrayReflection>,
    /// Why some reflections are not followed (null when every one is).
    pub note: Option<String>,
}

/// The most reflecting surfaces whose reflections are followed (40 give 40 back-reflections and 780
/// pairs; a bench of hundreds of lenses would otherwise take minutes per change).
pub const MAX_STRAY_SURFACES: usize = 40;

/// The word for face `face` of a part with `count` surfaces.
fn face_word(face: usize, count: usize) -> &'static str {
    match (face, count) {
        (0, _) => "front",
        (f, c) if f + 1 == c => "back",
        _ => "cemented",
    }
}

/// What the source is for the stray paths: its ray, its beam and its plane.
struct Source {
    /// The marginal ray at the first vertex plane (y, n·u), and whether it is the stop's real one.
    ray: (f64, f64),
    sized: bool,
    laser: Option<(LaserSource, Option<f64>)>,
    at_mm: Option<f64>,
}

impl StrayFigures {
    /// The stray-focus map of a traced bench (`None` when no lens surface reflects).
    pub fn of(bench: &Bench, traced: &Traced, screens: &[usize]) -> Option<StrayFigures> {
        let analysis = &traced.analysis;
        let wavelength = bench.laser.as_ref().map_or(analysis.seq().wavelength_nm, |l| l.wavelength_nm);
        let w = analysis
            .wavelengths
            .iter()
            .find(|w| (w.seq.wavelength_nm - wavelength).abs() <= 1e-9 * wavelength)
            .unwrap_or_else(|| analysis.primary());
        let seq = &w.seq;
        if !seq.steps.iter().any(reflects_stray) {
            return None;
        }
        let compiled = &traced.compiled;
        let name = |s: usize| {
            let e = seq.steps[s].element;
            let count = bench.parts[e].kind.surface_count();
            let face = compiled.face_of.get(s).copied().unwrap_or(0);
            (bench.parts[e].name.clone(), face, count)
        };
        let reflectance = |s: usize| {
            let (part, face, _) = name(s);
            let coating = bench.part(&part).and_then(|p| p.coatings.get(face).copied());
            match coating {
                Some(Coating::Percent(v)) => 0.01 * v,
                _ => fresnel_reflectance(seq.steps[s].n_before, seq.steps[s].n_after),
            }
        };
        // After a mirror the light crosses a lens again on its way back: that crossing is named apart.
        let surface_name = |s: usize| {
            let (part, face, count) = name(s);
            let back = if seq.steps[s].dir_before < 0.0 { ", on the way back" } else { "" };
            format!("{part} ({}{back})", face_word(face, count))
        };
        let surfaces = (0..seq.steps.len())
            .filter(|&s| reflects_stray(&seq.steps[s]))
            .map(|s| {
                let (part, face, _) = name(s);
                let coated =
                    bench.part(&part).is_some_and(|p| matches!(p.coatings.get(face), Some(Coating::Percent(_))));
                SurfaceReflectance {
                    surface: surface_name(s),
                    part,
                    reflectance_percent: 100.0 * reflectance(s),
                    coated,
                }
            })
            .collect();
        let source = source(bench, traced, w);
        let screen = last_screen(bench, traced, screens);
        let main_at_screen = screen.map(|(_, z)| main_radius_at(seq, traced.beam.as_ref(), &source, z));
        let reflecting: Vec<usize> = (0..seq.steps.len()).filter(|&s| reflects_stray(&seq.steps[s])).collect();
        let followed = &reflecting[..reflecting.len().min(MAX_STRAY_SURFACES)];
        let note = (reflecting.len() > followed.len()).then(|| {
            format!(
                "only the first {} of the {} reflecting surfaces along the light are followed (their pairs grow as the square)",
                followed.len(),
                reflecting.len()
            )
        });
        let backs = followed.iter().filter_map(|&k| StrayPath::back(seq, k));
        let doubles = followed.iter().enumerate().flat_map(|(a, &later)| {
            followed[..a].iter().filter_map(move |&earlier| StrayPath::double(seq, later, earlier))
        });
        let mut reflections: Vec<StrayReflection> = backs
            .chain(doubles)
            .filter_map(|path| {
                let share = path.power_share(seq, reflectance);
                (share > 0.0).then(|| {
                    let ctx = Context { bench, seq, source: &source, name: &surface_name, screen, main_at_screen };
                    reflection(&ctx, &path, share)
                })
            })
            .collect();
        reflections
            .sort_by(|a, b| (!b.foci.is_empty()).cmp(&!a.foci.is_empty()).then(b.strength.total_cmp(&a.strength)));
        Some(StrayFigures {
            wavelength_nm: seq.wavelength_nm,
            laser: source.laser.is_some(),
            surfaces,
            reflections,
            note,
        })
    }

    /// The map's lines in the text report.
    pub fn write_text(&self, t: &mut String) {
        use std::fmt::Write as _;
        let what = if self.laser { "the laser's stray beams (1/e² waists)" } else { "paraxial foci" };
        let _ = writeln!(t, "\nStray reflections at {} nm ({what}), strongest first", fixed(self.wavelength_nm, 1));
        let rs: Vec<String> = self
            .surfaces
            .iter()
            .map(|s| {
                format!("{} {}%{}", s.surface, fixed(s.reflectance_percent, 3), if s.coated { " coated" } else { "" })
            })
            .collect();
        let _ = writeln!(t, "  reflectances: {}", rs.join("; "));
        if let Some(n) = &self.note {
            let _ = writeln!(t, "  ({n})");
        }
        for r in self.reflections.iter().take(STRAY_TEXT_REFLECTIONS) {
            let _ =
                writeln!(t, "  {} reflection from {}: {}% of the power", r.kind, r.label(), share_words(r.power_share));
            for f in &r.foci {
                let _ = writeln!(t, "    focus {}", focus_words(f));
            }
            if r.foci.is_empty() {
                let _ = writeln!(t, "    no real focus (it spreads out)");
            }
            if let Some(d) = r.diameter_at_source_mm {
                let _ = writeln!(t, "    {} mm across at the source", fixed(d, 3));
            }
            if let (Some(s), Some(d)) = (&r.screen, r.diameter_at_screen_mm) {
                let share = r.screen_irradiance_share.map_or_else(
                    || ", a point focus".into(),
                    |v| format!(", {}% of the main beam's peak irradiance", share_words(v)),
                );
                let _ = writeln!(t, "    {} mm across on screen {s}{share}", fixed(d, 3));
            }
        }
        if self.reflections.len() > STRAY_TEXT_REFLECTIONS {
            let more = self.reflections.len() - STRAY_TEXT_REFLECTIONS;
            let _ = writeln!(t, "  ({more} weaker reflections in the JSON report's `stray` key)");
        }
    }

    /// The warnings of a laser bench's map: (part concerned, message), strongest first.
    pub fn warnings(&self) -> Vec<(Option<String>, String)> {
        let mut out = Vec::new();
        if !self.laser {
            return out;
        }
        for r in self.reflections.iter().filter(|r| r.power_share >= STRAY_WARN_POWER) {
            for f in &r.foci {
                if let Some(Nearest { what, distance_mm: d }) = &f.nearest
                    && *d <= STRAY_NEAR_MM
                {
                    let on = if what == "the laser" {
                        "the laser's exit: light fed back into a laser can unsettle it or damage it".to_string()
                    } else {
                        format!("a surface of \"{what}\": a focused stray beam can damage a coating or cement")
                    };
                    out.push((
                        (what != "the laser").then(|| what.clone()),
                        format!(
                            "stray focus: the {} reflection from {} ({}% of the power) focuses at {} mm, {} mm from {on}",
                            r.kind,
                            r.label(),
                            share_words(r.power_share),
                            fixed(f.at_mm, 3),
                            fixed(*d, 2)
                        ),
                    ));
                }
            }
            if let (Some(s), Some(_)) = (&r.screen, r.diameter_at_screen_mm) {
                // No share: the stray light comes to a point on the screen.
                if r.screen_irradiance_share.is_none_or(|v| v > STRAY_SCREEN_SHARE) {
                    let how = r.screen_irradiance_share.map_or_else(
                        || "focused to a point".to_string(),
                        |v| format!("at {}% of the main beam's peak irradiance", share_words(v)),
                    );
                    out.push((
                        Some(s.clone()),
                        format!(
                            "stray focus: the double reflection from {} lands on screen \"{s}\" {how} (more than {}%)",
                            r.label(),
                            fixed(100.0 * STRAY_SCREEN_SHARE, 0)
                        ),
                    ));
                }
            }
        }
        if out.len() > STRAY_WARNINGS_SHOWN {
            let more = out.len() - STRAY_WARNINGS_SHOWN;
            out.truncate(STRAY_WARNINGS_SHOWN);
            out.push((
                None,
                format!("stray focus: {more} more stray foci lie near a surface, the laser or on the screen (the stray-focus map lists them)"),
            ));
        }
        out
    }

    /// The foci of the strongest [`STRAY_MARKS`] reflections, for the rail: (rank from 1, rail position,
    /// what reflects).
    pub fn marks(&self) -> Vec<(usize, f64, String)> {
        self.reflections
            .iter()
            .take(STRAY_MARKS)
            .enumerate()
            .flat_map(|(k, r)| {
                r.foci.iter().map(move |f| (k + 1, f.at_mm, format!("{} reflection from {}", r.kind, r.label())))
            })
            .collect()
    }
}

/// A share as a percentage: two decimals from 0.1 %, else three significant digits (shares span decades).
pub fn share_words(share: f64) -> String {
    let pc = 100.0 * share;
    if pc >= 0.1 { fixed(pc, 2) } else { format!("{pc:.2e}") }
}

/// A focus in words: place, size, irradiance.
pub fn focus_words(f: &StrayFocusFigures) -> String {
    let size = f.diameter_mm.map_or_else(String::new, |d| format!(", {} mm across", fixed(d, 4)));
    let peak = f.peak_irradiance_w_per_cm2.map_or_else(String::new, |p| format!(", peak {p:.3e} W/cm²"));
    let near =
        f.nearest.as_ref().map_or_else(String::new, |n| format!(" ({} mm from {})", fixed(n.distance_mm, 2), n.what));
    let bound = if f.paraxial {
        ""
    } else {
        " [converges faster than paraxial figures hold: the true spot is larger, its peak lower]"
    };
    format!("at {} mm {}{size}{peak}{near}{bound}", fixed(f.at_mm, 3), f.place)
}

/// What the stray paths start from.
fn source(bench: &Bench, traced: &Traced, w: &lumenrail_optics::analysis::Wavelength) -> Source {
    let object = traced.compiled.object;
    let (ray, sized) = match &w.pupils {
        Ok(p) => ((p.marginal_start.y_mm, p.marginal_start.nu), true),
        Err(_) => (object.axial_ray_start(&w.seq), false),
    };
    let laser = bench.laser.as_ref().map(|l: &Laser| {
        (
            LaserSource {
                wavelength_nm: l.wavelength_nm,
                waist_radius_mm: 0.5 * l.waist_diameter_mm,
                waist_at_mm: l.waist_at_mm,
                m_squared: l.m_squared,
            },
            l.power_mw,
        )
    });
    let at_mm = match (bench.laser.as_ref(), object) {
        (Some(l), _) => Some(l.at_mm),
        (None, Object::Finite { z_mm, .. }) => Some(z_mm),
        (None, Object::Distant { .. }) => None,
    };
    Source { ray, sized: sized || laser.is_some(), laser, at_mm }
}

/// The last screen beyond the last surface along the light: (name, rail position).
fn last_screen<'a>(bench: &'a Bench, traced: &Traced, screens: &[usize]) -> Option<(&'a str, f64)> {
    let last_z = traced.compiled.system.surfaces.last()?.vertex_z_mm;
    let dir = traced.compiled.final_direction;
    screens
        .iter()
        .map(|&i| (bench.parts[i].name.as_str(), bench.parts[i].at_mm))
        .filter(|&(_, z)| (z - last_z) * dir > 0.0)
        .max_by(|a, b| (a.1 * dir).total_cmp(&(b.1 * dir)))
}

/// The main beam's radius at rail position `z` beyond the last surface, mm: the laser's 1/e² radius,
/// else the paraxial marginal ray's height.
fn main_radius_at(seq: &Sequence, beam: Option<&BeamTrace>, source: &Source, z: f64) -> Option<f64> {
    match (beam, source.laser) {
        (Some(b), Some(_)) => Some(b.radius_at(seq.steps.len(), z)),
        _ => final_height_mm(seq, source.ray.0, source.ray.1, z).map(f64::abs).filter(|_| source.sized),
    }
}

/// What every reflection of one bench shares.
struct Context<'a> {
    bench: &'a Bench,
    seq: &'a Sequence,
    source: &'a Source,
    name: &'a dyn Fn(usize) -> String,
    screen: Option<(&'a str, f64)>,
    main_at_screen: Option<Option<f64>>,
}

/// One reflection's figures.
fn reflection(ctx: &Context<'_>, path: &StrayPath, share: f64) -> StrayReflection {
    let source = ctx.source;
    let (kind, reflecting) = match path.kind {
        StrayKind::Back { surface } => ("back", vec![surface]),
        StrayKind::Double { later, earlier } => ("double", vec![later, earlier]),
    };
    let (beam, foci): (Option<BeamTrace>, Vec<StrayFocus>) = match source.laser.and_then(|(l, _)| beam_foci(path, l)) {
        Some((b, f)) => (Some(b), f),
        None => (None, geometric_foci(path, source.ray.0, source.ray.1)),
    };
    let power_mw = source.laser.and_then(|(_, p)| p);
    let radius_at = |z: f64| {
        match &beam {
            Some(b) => Some(b.radius_at(path.seq.steps.len(), z)),
            None => final_height_mm(&path.seq, source.ray.0, source.ray.1, z).map(f64::abs).filter(|_| source.sized),
        }
        .filter(|r| r.is_finite())
    };
    let figures: Vec<StrayFocusFigures> = foci
        .iter()
        .map(|f| StrayFocusFigures {
            at_mm: f.at_mm,
            place: place(ctx, path, f),
            diameter_mm: f.waist_radius_mm.map(|w| 2.0 * w),
            peak_irradiance_w_per_cm2: power_mw
                .zip(f.waist_radius_mm)
                .map(|(p, w)| 0.1 * peak_irradiance_mw_per_mm2(p * share, w)),
            nearest: nearest(ctx, f.at_mm),
            paraxial: f.waist_radius_mm.zip(f.rayleigh_range_mm).is_none_or(|(w, z)| w / z <= PARAXIAL_HALF_ANGLE_RAD),
        })
        .collect();
    let strength = if source.laser.is_some() {
        // A waist beyond the paraxial range counts at the size it would have at that range's edge (w₀θ is
        // the beam's own constant), so that no artefact of a too-small waist ranks first.
        let effective = |f: &StrayFocus| {
            let (w, z) = (f.waist_radius_mm?, f.rayleigh_range_mm?);
            Some(w.max(w * (w / z) / PARAXIAL_HALF_ANGLE_RAD))
        };
        foci.iter().filter_map(effective).map(|w| 0.1 * peak_irradiance_mw_per_mm2(share, w)).fold(0.0, f64::max)
    } else {
        share
    };
    let mut r = StrayReflection {
        kind,
        surfaces: reflecting.iter().map(|&s| (ctx.name)(s)).collect(),
        power_share: share,
        foci: figures,
        diameter_at_source_mm: None,
        screen: None,
        diameter_at_screen_mm: None,
        screen_irradiance_share: None,
        strength,
    };
    match path.kind {
        StrayKind::Back { .. } => {
            r.diameter_at_source_mm = source.at_mm.and_then(radius_at).map(|v| 2.0 * v);
        }
        StrayKind::Double { .. } => {
            if let Some((name, z)) = ctx.screen {
                r.screen = Some(name.to_string());
                let ghost = radius_at(z);
                r.diameter_at_screen_mm = ghost.map(|v| 2.0 * v);
                r.screen_irradiance_share = match (ghost, ctx.main_at_screen.flatten()) {
                    (Some(g), Some(m)) if g > 0.0 => Some(share * (m / g).powi(2)).filter(|v| v.is_finite()),
                    _ => None,
                };
            }
        }
    }
    r
}

/// Where a focus lies along its path, in words.
fn place(ctx: &Context<'_>, path: &StrayPath, f: &StrayFocus) -> String {
    if f.final_space {
        return match path.kind {
            StrayKind::Back { .. } => "towards the source".into(),
            StrayKind::Double { .. } => "towards the screen".into(),
        };
    }
    let part = |p: usize| ctx.seq.steps[path.origin[p].0].element;
    let (a, b) = (part(f.after_step), part(f.after_step + 1));
    let name = |e: usize| ctx.bench.parts[e].name.clone();
    // Indices are relative to the air around the bench, which is 1.
    let in_glass = (path.seq.steps[f.after_step].n_after - 1.0).abs() > 1e-12;
    if a == b && in_glass { format!("inside {}", name(a)) } else { format!("between {} and {}", name(a), name(b)) }
}

/// The nearest surface vertex of the bench or the laser's exit to `z`, and its distance, mm.
fn nearest(ctx: &Context<'_>, z: f64) -> Option<Nearest> {
    // The closest surface first, by distance alone; only the winner's name is copied.
    let surface = ctx
        .seq
        .steps
        .iter()
        .filter(|s| !s.is_aperture_only())
        .map(|s| ((z - s.z_mm).abs(), s.element))
        .fold(None, |best: Option<(f64, usize)>, c| if best.is_none_or(|b| c.0 < b.0) { Some(c) } else { best });
    let laser = ctx.bench.laser.as_ref().map(|l| (z - l.at_mm).abs());
    match (surface, laser) {
        (Some((d, _)), Some(dl)) if dl < d => Some(Nearest { what: "the laser".into(), distance_mm: dl }),
        (None, Some(dl)) => Some(Nearest { what: "the laser".into(), distance_mm: dl }),
        (Some((d, element)), _) => Some(Nearest { what: ctx.bench.parts[element].name.clone(), distance_mm: d }),
        (None, None) => None,
    }
}
