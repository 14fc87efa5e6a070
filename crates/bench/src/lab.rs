//! Lab sheets and their answer keys: the printable handout of one of our measurement labs for a bench
//! (parts list, procedure, a blank table for readings, the cautions that apply) and the instructor's key,
//! computed from the bench's one evaluation.
//!
//! The labs and their published methods:
//!
//! - **Displacement (Bessel) method.** Object and screen a fixed distance D apart, D > 4f: a lens gives a
//!   sharp image at two positions d apart, and f = (D² − d²)/(4D) (F. W. Bessel; e.g. Hecht, *Optics*; a
//!   standard teaching-lab method). For a thick lens with principal planes h apart (h = H′ − H) the
//!   positions come from the reduced length D − h: the lens's front principal plane lies ½((D − h) ±
//!   √((D − h)² − 4(D − h)f)) from the object, the method needs D > 4f + h, and the simple formula's answer
//!   exceeds the true f by exactly (h/4)(1 + d²/(D(D − h))) (derived: f = ((D − h)² − d²)/(4(D − h))).
//! - **Autocollimation.** A flat mirror behind the lens returns the light; the returned image is sharp on the
//!   object's own plane when the object sits at the lens's front focal point. The distance measured, object
//!   to lens vertex, is the front focal length; the true focal length differs by the vertex-to-principal-plane
//!   distance (f − FFL = H − V).
//! - **Magnification from image size.** m = h′/h measured on the screen, against the report's
//!   magnification; for a bench a person looks through, the magnifying power against a scale at 250 mm.
//!
//! Nothing here traces or compiles: every figure is the evaluation's (the lens's own first order, the
//! report's images and instrument figures).

use crate::evaluation::Evaluation;
use crate::model::{ObjectSpec, PartKind};
use crate::report::{WarningKind, fixed};
use serde::Serialize;

/// Which lab.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Lab {
    /// Focal length by the displacement (Bessel) method.
    Displacement,
    /// Focal length by autocollimation with a flat mirror.
    Autocollimation,
    /// Magnification from image size (or magnifying power for a viewing bench).
    Magnification,
}

impl Lab {
    /// Every lab, as the command line and the menu list them.
    pub const ALL: [Lab; 3] = [Lab::Displacement, Lab::Autocollimation, Lab::Magnification];

    /// The word the command line takes.
    pub fn word(self) -> &'static str {
        match self {
            Lab::Displacement => "displacement",
            Lab::Autocollimation => "autocollimation",
            Lab::Magnification => "magnification",
        }
    }

    /// The lab by its word.
    pub fn from_word(word: &str) -> Option<Lab> {
        Lab::ALL.into_iter().find(|l| l.word() == word)
    }

    /// The sheet's heading.
    pub fn heading(self) -> &'static str {
        match self {
            Lab::Displacement => "Focal length by the displacement method",
            Lab::Autocollimation => "Focal length by autocollimation",
            Lab::Magnification => "Magnification from image size",
        }
    }
}

/// Why a lab sheet cannot be made for a bench.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub enum LabError {
    /// The bench cannot be traced.
    #[error("the bench cannot be traced: {0}")]
    Untraced(String),
    /// Something the lab needs is missing from the bench.
    #[error("the {lab} lab needs {what}")]
    Needs {
        /// The lab's word.
        lab: &'static str,
        /// What is missing, in plain words.
        what: String,
    },
    /// The bench is laid out so that the lab cannot work.
    #[error("{0}")]
    Impossible(String),
}

/// One part in the parts list.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PartLine {
    /// The part's name.
    pub name: String,
    /// What it is.
    pub kind: String,
    /// Its rail position as the bench has it, mm.
    pub at_mm: f64,
    /// Its own focal length, mm (lenses and curved mirrors).
    pub focal_mm: Option<f64>,
    /// Its diameter, mm.
    pub diameter_mm: f64,
}

/// One line of the answer key: what, and its value with unit.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Answer {
    /// What the figure is.
    pub label: String,
    /// The value as printed (with its unit).
    pub value: String,
}

/// The displacement method's figures for the bench's lens, object and screen.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DisplacementKey {
    /// Object-to-screen distance D, mm.
    pub distance_mm: f64,
    /// The lens's true focal length, mm.
    pub focal_mm: f64,
    /// Principal-plane separation h = H′ − H, mm.
    pub principal_separation_mm: f64,
    /// The lens's vertex rail position for the first sharp image (nearer the object), mm.
    pub first_at_mm: f64,
    /// The vertex rail position for the second, mm.
    pub second_at_mm: f64,
    /// The displacement d between them, mm.
    pub displacement_mm: f64,
    /// The magnification at the first position.
    pub first_magnification: f64,
    /// The magnification at the second.
    pub second_magnification: f64,
    /// The image heights on the screen at the two positions, mm (the object's off-axis point).
    pub image_heights_mm: [f64; 2],
    /// The simple formula's answer (D² − d²)/(4D), mm.
    pub simple_focal_mm: f64,
    /// The simple answer minus the true f, mm.
    pub systematic_error_mm: f64,
}

/// Autocollimation's figures.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct AutocollimationKey {
    /// The lens vertex's rail position that returns a sharp image to the object plane, mm.
    pub lens_at_mm: f64,
    /// The reading: object to lens vertex, mm (the front focal length).
    pub reading_mm: f64,
    /// The lens's true focal length, mm.
    pub focal_mm: f64,
    /// True f minus the reading (vertex to front principal plane), mm.
    pub systematic_error_mm: f64,
}

/// The magnification lab's figures.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct MagnificationKey {
    /// The final image's rail position (the screen's place for a sharp image; null at infinity), mm.
    pub image_at_mm: Option<f64>,
    /// The lateral magnification.
    pub magnification: Option<f64>,
    /// The object's height, mm.
    pub object_height_mm: f64,
    /// The image's height, mm.
    pub image_height_mm: Option<f64>,
    /// For a viewing bench: the magnifying power as arranged (angle ratio against the object at 250 mm).
    pub magnifying_power: Option<f64>,
}

/// The answer key's typed figures.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Key {
    /// Displacement method.
    Displacement(DisplacementKey),
    /// Autocollimation.
    Autocollimation(AutocollimationKey),
    /// Magnification.
    Magnification(MagnificationKey),
}

/// A lab sheet and its answer key.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LabSheet {
    /// Which lab.
    pub lab: Lab,
    /// The bench's title.
    pub bench_title: String,
    /// The parts in rail order.
    pub parts: Vec<PartLine>,
    /// What to do, step by step.
    pub procedure: Vec<String>,
    /// The readings table's column heads.
    pub columns: Vec<String>,
    /// How many blank rows.
    pub rows: usize,
    /// The cautions that apply to this bench.
    pub cautions: Vec<String>,
    /// The key's typed figures.
    pub key: Key,
    /// The key as printed lines.
    pub answers: Vec<Answer>,
    /// Notes for the instructor.
    pub notes: Vec<String>,
}

/// The cautions every lab bench carries (DESIGN.md, Safety).
pub const BENCH_CAUTIONS: [&str; 3] = [
    "Lamps and their housings get hot: let them cool before you touch or move them.",
    "Never look at the sun through any lens or mirror, and never point a lens at the sun.",
    "A lens can focus lamp light or sunlight enough to burn skin or start a fire: keep paper, hands and eyes out of a bright focus.",
];

/// The closing line of every sheet's cautions.
pub const DEFER: &str =
    "Lumenrail plans benches; it does not certify them. Follow your lab's local rules and your instructor.";

fn mm(v: f64) -> String {
    format!("{} mm", fixed(v, 2))
}

fn answer(label: &str, value: String) -> Answer {
    Answer { label: label.to_string(), value }
}

impl LabSheet {
    /// The sheet of `lab` for an evaluated bench.
    pub fn of(e: &Evaluation, lab: Lab) -> Result<LabSheet, LabError> {
        if !e.report.traced() || e.traced.is_none() {
            return Err(LabError::Untraced(e.report.trace_failure.clone().unwrap_or_default()));
        }
        let bench = &e.bench;
        let parts = bench
            .rail_order()
            .into_iter()
            .map(|i| {
                let p = &bench.parts[i];
                PartLine {
                    name: p.name.clone(),
                    kind: p.kind.word().to_string(),
                    at_mm: p.at_mm,
                    focal_mm: e.part_first_order[i].and_then(|f| f.efl_mm),
                    diameter_mm: p.kind.diameter_mm(),
                }
            })
            .collect();
        let mut cautions: Vec<String> = BENCH_CAUTIONS.iter().map(|s| s.to_string()).collect();
        cautions.extend(
            e.report
                .warnings
                .iter()
                .filter(|w| w.kind == WarningKind::Caution && !w.message.contains("aimed at the sun"))
                .map(|w| w.message.clone()),
        );
        cautions.push(DEFER.into());
        let (procedure, columns, rows, key, answers, notes) = match lab {
            Lab::Displacement => displacement(e)?,
            Lab::Autocollimation => autocollimation(e)?,
            Lab::Magnification => magnification(e)?,
        };
        Ok(LabSheet {
            lab,
            bench_title: bench.title.clone(),
            parts,
            procedure,
            columns,
            rows,
            cautions,
            key,
            answers,
            notes,
        })
    }
}

type Parts = (Vec<String>, Vec<String>, usize, Key, Vec<Answer>, Vec<String>);

/// The lens under test: the first lens in rail order, its index, focal length and principal-plane offsets
/// from its first vertex (H − V, H′ − V).
fn lens(e: &Evaluation, lab: Lab) -> Result<(usize, f64, f64, f64), LabError> {
    let bench = &e.bench;
    let i = bench
        .rail_order()
        .into_iter()
        .find(|&i| {
            matches!(
                bench.parts[i].kind,
                PartKind::ThinLens { .. } | PartKind::Singlet { .. } | PartKind::Doublet { .. }
            )
        })
        .ok_or(LabError::Needs { lab: lab.word(), what: "a lens".into() })?;
    let fo = e.part_first_order[i].ok_or(LabError::Needs { lab: lab.word(), what: "a lens with power".into() })?;
    let at = bench.parts[i].at_mm;
    match (fo.efl_mm, fo.front_principal_at_mm, fo.back_principal_at_mm) {
        (Some(f), Some(h1), Some(h2)) => Ok((i, f, h1 - at, h2 - at)),
        _ => Err(LabError::Needs { lab: lab.word(), what: "a lens with a focal length".into() }),
    }
}

fn point_object(e: &Evaluation, lab: Lab) -> Result<(f64, f64), LabError> {
    match e.bench.object {
        ObjectSpec::Point { at_mm, height_mm } => Ok((at_mm, height_mm)),
        ObjectSpec::Distant { .. } => Err(LabError::Needs {
            lab: lab.word(),
            what: "an object on the rail (a lit object, not a distant scene)".into(),
        }),
    }
}

fn displacement(e: &Evaluation) -> Result<Parts, LabError> {
    let lab = Lab::Displacement;
    let (object_at, object_h) = point_object(e, lab)?;
    let (i, f, h1, h2) = lens(e, lab)?;
    let bench = &e.bench;
    let screen = bench
        .rail_order()
        .into_iter()
        .rev()
        .find(|&j| matches!(bench.parts[j].kind, PartKind::Screen { .. }))
        .ok_or(LabError::Needs { lab: lab.word(), what: "a screen".into() })?;
    let d_total = bench.parts[screen].at_mm - object_at;
    let h = h2 - h1;
    let reduced = d_total - h;
    if f <= 0.0 {
        return Err(LabError::Impossible(format!(
            "\"{}\" diverges (f = {} mm): the displacement method needs a converging lens",
            bench.parts[i].name,
            fixed(f, 2)
        )));
    }
    let disc = reduced * reduced - 4.0 * reduced * f;
    if disc.is_nan() || disc <= 0.0 {
        return Err(LabError::Impossible(format!(
            "object to screen D = {} is not more than 4f + h = {}: no lens position gives a sharp image; move the screen out",
            mm(d_total),
            mm(4.0 * f + h)
        )));
    }
    let d = disc.sqrt();
    let s = [0.5 * (reduced - d), 0.5 * (reduced + d)];
    let at = s.map(|s| object_at + s - h1);
    let m = s.map(|s| -(reduced - s) / s);
    let simple = (d_total * d_total - d * d) / (4.0 * d_total);
    let key = DisplacementKey {
        distance_mm: d_total,
        focal_mm: f,
        principal_separation_mm: h,
        first_at_mm: at[0],
        second_at_mm: at[1],
        displacement_mm: d,
        first_magnification: m[0],
        second_magnification: m[1],
        image_heights_mm: m.map(|m| m * object_h),
        simple_focal_mm: simple,
        systematic_error_mm: simple - f,
    };
    let lens_name = &bench.parts[i].name;
    let screen_name = &bench.parts[screen].name;
    let procedure = vec![
        format!(
            "Fix the object at {} and the screen \"{screen_name}\" at {}: D = {}. Measure D yourself and write it down.",
            mm(object_at),
            mm(bench.parts[screen].at_mm),
            mm(d_total)
        ),
        format!(
            "Slide the lens \"{lens_name}\" from the object towards the screen until the image on the screen is sharp. Read the carrier's position on the rail scale: position 1."
        ),
        "Note the image's height and whether it is inverted.".into(),
        "Keep sliding towards the screen until the image is sharp again, smaller now: position 2. Note its height too."
            .into(),
        "Repeat both settings three times, approaching from either side, and average them.".into(),
        "Compute d = position 2 − position 1 and f = (D² − d²)/(4D). The method works only when D > 4f.".into(),
    ];
    let columns = vec![
        "trial".into(),
        "D (mm)".into(),
        "position 1 (mm)".into(),
        "position 2 (mm)".into(),
        "d (mm)".into(),
        "f (mm)".into(),
    ];
    let answers = vec![
        answer("object to screen D", mm(d_total)),
        answer("true focal length f", mm(f)),
        answer("principal-plane separation h", mm(h)),
        answer("position 1 (lens vertex on the rail)", mm(at[0])),
        answer("position 2 (lens vertex on the rail)", mm(at[1])),
        answer("displacement d", mm(d)),
        answer("magnification at 1, at 2", format!("{}, {}", fixed(m[0], 4), fixed(m[1], 4))),
        answer("image height at 1, at 2", format!("{}, {}", mm(key.image_heights_mm[0]), mm(key.image_heights_mm[1]))),
        answer("simple formula (D² − d²)/(4D)", mm(simple)),
        answer("systematic error (simple − true)", mm(simple - f)),
        answer("(h/4)(1 + d²/(D(D − h)))", mm(h / 4.0 * (1.0 + d * d / (d_total * (d_total - h))))),
    ];
    let notes = vec![
        "The two positions are the lens's first vertex as the rail scale reads it; a carrier's mark may sit elsewhere on the carrier.".into(),
        "For this thick lens the simple formula overstates f by the systematic error above, whatever the students' care.".into(),
    ];
    Ok((procedure, columns, 3, Key::Displacement(key), answers, notes))
}

fn autocollimation(e: &Evaluation) -> Result<Parts, LabError> {
    let lab = Lab::Autocollimation;
    let (object_at, _) = point_object(e, lab)?;
    let (i, f, h1, _) = lens(e, lab)?;
    let bench = &e.bench;
    if !bench.parts.iter().any(|p| matches!(p.kind, PartKind::Mirror { surface: crate::model::SurfaceSpec::Flat, .. }))
    {
        return Err(LabError::Needs { lab: lab.word(), what: "a flat mirror behind the lens".into() });
    }
    if f <= 0.0 {
        return Err(LabError::Impossible(format!(
            "\"{}\" diverges: autocollimation needs a converging lens",
            bench.parts[i].name
        )));
    }
    // The object at the front focal point F = H − f, so the reading from the object to the vertex V is
    // V − F = f − (H − V).
    let reading = f - h1;
    let key = AutocollimationKey {
        lens_at_mm: object_at + reading,
        reading_mm: reading,
        focal_mm: f,
        systematic_error_mm: h1,
    };
    let lens_name = &bench.parts[i].name;
    let procedure = vec![
        format!("Fix the crosshair (the object) at {} and put the flat mirror just behind the lens \"{lens_name}\", facing it.", mm(object_at)),
        "Slide the lens until the crosshair's returned image, beside the crosshair on its own card, is sharp. Tilt the mirror slightly to see it beside the object.".into(),
        "Read the distance from the crosshair to the lens's front vertex: that is the front focal length.".into(),
        "Move the mirror along the rail: the returned image stays sharp (the light between lens and mirror is parallel).".into(),
        "Repeat three times and average.".into(),
    ];
    let columns = vec!["trial".into(), "crosshair (mm)".into(), "lens vertex (mm)".into(), "distance (mm)".into()];
    let answers = vec![
        answer("lens vertex on the rail for a sharp return", mm(key.lens_at_mm)),
        answer("reading: crosshair to vertex (front focal length)", mm(reading)),
        answer("true focal length f", mm(f)),
        answer("systematic error (true − reading)", mm(h1)),
    ];
    let notes = vec![
        "The distance read is a vertex distance; the focal length is measured from the front principal plane, which lies the systematic error above behind the vertex.".into(),
    ];
    Ok((procedure, columns, 3, Key::Autocollimation(key), answers, notes))
}

fn magnification(e: &Evaluation) -> Result<Parts, LabError> {
    let lab = Lab::Magnification;
    let (_, object_h) = point_object(e, lab)?;
    let r = &e.report;
    let image = r.images.last().ok_or(LabError::Needs { lab: lab.word(), what: "a lens".into() })?;
    let viewing = r.instrument.as_ref();
    let key = MagnificationKey {
        image_at_mm: image.at_mm,
        magnification: image.magnification,
        object_height_mm: object_h,
        image_height_mm: image.height_mm,
        magnifying_power: viewing.and_then(|v| v.magnifying_power_as_arranged),
    };
    let (procedure, columns, mut answers) = if let Some(v) = viewing {
        let procedure = vec![
            "Set a millimetre scale 250 mm from your eye, beside the instrument, and the object under the lens.".into(),
            "Look through the lens with one eye and at the bare scale with the other; relax and let the two views overlap.".into(),
            "Count how many scale divisions one division of the object covers: that is the magnifying power.".into(),
            "Repeat with the image at the near point (move the object until the image is sharpest at 250 mm).".into(),
        ];
        let columns =
            vec!["trial".into(), "object divisions".into(), "scale divisions".into(), "magnifying power".into()];
        let mut a = Vec::new();
        if let Some(m) = v.magnifying_power_as_arranged {
            a.push(answer("magnifying power as arranged", format!("{}x", fixed(m, 3))));
        }
        if let Some(m) = v.magnifying_power_relaxed {
            a.push(answer("magnifying power, eye relaxed (250/f)", format!("{}x", fixed(m, 3))));
        }
        if let Some(m) = v.magnifying_power_near_point {
            a.push(answer("magnifying power, image at 250 mm (250/f + 1)", format!("{}x", fixed(m, 3))));
        }
        if let Some(m) = v.overall_magnification {
            a.push(answer("overall magnification (objective x eyepiece)", format!("{}x", fixed(m, 3))));
        }
        if let Some(m) = v.angular_magnification {
            a.push(answer("angular magnification", format!("{}x", fixed(m, 3))));
        }
        (procedure, columns, a)
    } else {
        let screen = image.at_mm.filter(|_| image.real).ok_or(LabError::Impossible(
            "the final image is not real: no screen can catch it (use a viewing bench for magnifying power)".into(),
        ))?;
        let procedure = vec![
            format!("Measure the object's height h (the lit object is {} tall from the axis).", mm(object_h.abs())),
            "Move the screen until the image is sharp and read its position.".into(),
            "Measure the image's height h' on the screen; note whether it is inverted (then h' is negative).".into(),
            "Compute m = h'/h and compare with -s'/s from the object and image distances to the lens.".into(),
        ];
        let columns = vec!["trial".into(), "screen (mm)".into(), "h (mm)".into(), "h' (mm)".into(), "m = h'/h".into()];
        (procedure, columns, vec![answer("sharp image (screen position)", mm(screen))])
    };
    if let Some(m) = image.magnification {
        answers.push(answer("lateral magnification m", fixed(m, 4)));
    }
    if let Some(h) = image.height_mm {
        answers.push(answer("image height h'", mm(h)));
    }
    Ok((procedure, columns, 3, Key::Magnification(key), answers, Vec::new()))
}
