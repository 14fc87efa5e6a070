//! The part sheet: edits the selected part, one field at a time. A typed value is applied on Enter or when
//! the field loses focus, as one undo step, and Escape restores the old value. An entry that does not
//! parse, or that validation refuses, shows its reason beside the field in the warning colour and is not
//! applied (never clamped).

use crate::{Edit, Workbench};
use lumenrail_bench::model::{Coating, EyeModel, MaterialSpec, Part, PartKind, SurfaceSpec};
use lumenrail_bench::report::fixed;
use lumenrail_bench::validate::{Severity, validate};
use lumenrail_optics::library;
use std::collections::BTreeMap;

/// The text in each field of the sheet, kept while the user types.
#[derive(Debug, Clone, Default)]
pub(crate) struct SheetState {
    /// The part the texts belong to, and the part as it was when they were filled.
    for_part: Option<(usize, Part)>,
    texts: BTreeMap<&'static str, String>,
    /// A field's complaint: (field key, message).
    error: Option<(&'static str, String)>,
}

fn number(v: f64) -> String {
    format!("{v}")
}

fn surface_text(s: &SurfaceSpec) -> String {
    match s {
        SurfaceSpec::Flat => "flat".into(),
        SurfaceSpec::Radius(r) => number(*r),
        SurfaceSpec::Conic { radius, .. } => number(*radius),
    }
}

/// The editable fields of a part: (key as in the bench file, label with unit).
fn fields(kind: &PartKind) -> Vec<(&'static str, &'static str)> {
    let mut f = vec![("name", "name"), ("at_mm", "position (mm)")];
    f.extend(match kind {
        PartKind::ThinLens { .. } => vec![("focal_mm", "focal length (mm)"), ("diameter_mm", "diameter (mm)")],
        PartKind::Singlet { front, back, .. } => {
            let mut v = vec![("front", "front radius (mm or flat)")];
            if matches!(front, SurfaceSpec::Conic { .. }) {
                v.push(("front_conic", "front conic constant"));
            }
            v.push(("back", "back radius (mm or flat)"));
            if matches!(back, SurfaceSpec::Conic { .. }) {
                v.push(("back_conic", "back conic constant"));
            }
            v.extend([("thickness_mm", "centre thickness (mm)"), ("diameter_mm", "diameter (mm)")]);
            v
        }
        PartKind::Doublet { .. } => vec![
            ("front", "front radius (mm or flat)"),
            ("middle", "cemented radius (mm or flat)"),
            ("back", "back radius (mm or flat)"),
            ("thickness1_mm", "first thickness (mm)"),
            ("thickness2_mm", "second thickness (mm)"),
            ("diameter_mm", "diameter (mm)"),
        ],
        PartKind::Mirror { .. } => vec![("surface", "radius (mm or flat)"), ("diameter_mm", "diameter (mm)")],
        PartKind::Iris { .. } => vec![("diameter_mm", "opening diameter (mm)")],
        PartKind::Screen { .. } => vec![("diameter_mm", "diameter (mm)")],
        PartKind::Eye { .. } => vec![
            ("pupil_mm", "pupil diameter (mm)"),
            ("refraction_d", "refractive error (D; negative: myopic)"),
            ("accommodation_d", "accommodation (D)"),
            ("amplitude_d", "accommodation range (D, blank: the eye's full)"),
            ("vertex_mm", "spectacle plane (mm before the cornea, blank: 12)"),
        ],
    });
    let glass_fields = |m: &MaterialSpec, index: &'static str, nd: &'static str, vd: &'static str| match m {
        MaterialSpec::Index(_) => vec![(index, "refractive index")],
        MaterialSpec::Abbe { .. } => vec![(nd, "nd"), (vd, "Vd")],
        _ => vec![],
    };
    // What each glass surface reflects, for the stray-focus map (blank: bare glass, its Fresnel share).
    f.extend(match kind {
        PartKind::Singlet { .. } => vec![
            (COATING_KEYS[0], "front reflectance (%, blank: bare)"),
            (COATING_KEYS[1], "back reflectance (%, blank: bare)"),
        ],
        PartKind::Doublet { .. } => vec![
            (COATING_KEYS[0], "front reflectance (%, blank: bare)"),
            (COATING_KEYS[1], "cemented reflectance (%, blank: bare)"),
            (COATING_KEYS[2], "back reflectance (%, blank: bare)"),
        ],
        _ => vec![],
    });
    match kind {
        PartKind::Singlet { material, .. } => f.extend(glass_fields(material, "n1", "nd1", "vd1")),
        PartKind::Doublet { material1, material2, .. } => {
            f.extend(glass_fields(material1, "n1", "nd1", "vd1"));
            f.extend(glass_fields(material2, "n2", "nd2", "vd2"));
        }
        _ => {}
    }
    f.push(("carrier_mm", "carrier width (mm, blank: none)"));
    f
}

/// The sheet's keys of a lens's coatings, front first.
const COATING_KEYS: [&str; 3] = ["coating1", "coating2", "coating3"];

/// The glass of slot 1 or 2 of a lens.
fn glass(kind: &PartKind, slot: u8) -> Option<&MaterialSpec> {
    match (kind, slot) {
        (PartKind::Singlet { material, .. }, 1) | (PartKind::Doublet { material1: material, .. }, 1) => Some(material),
        (PartKind::Doublet { material2, .. }, 2) => Some(material2),
        _ => None,
    }
}

fn glass_text(m: Option<&MaterialSpec>, what: char) -> String {
    match (m, what) {
        (Some(MaterialSpec::Index(n)), 'n') => number(*n),
        (Some(MaterialSpec::Abbe { nd, .. }), 'd') => number(*nd),
        (Some(MaterialSpec::Abbe { vd, .. }), 'v') => number(*vd),
        _ => String::new(),
    }
}

fn field_text(p: &Part, key: &str) -> String {
    let conic = |s: &SurfaceSpec| match s {
        SurfaceSpec::Conic { conic, .. } => number(*conic),
        _ => "0".into(),
    };
    match (&p.kind, key) {
        (_, "name") => p.name.clone(),
        (_, "at_mm") => number(p.at_mm),
        (_, "carrier_mm") => p.carrier_mm.map_or_else(String::new, number),
        (_, "diameter_mm") => number(p.kind.diameter_mm()),
        (PartKind::ThinLens { focal_mm, .. }, "focal_mm") => number(*focal_mm),
        (PartKind::Singlet { front, .. } | PartKind::Doublet { front, .. }, "front") => surface_text(front),
        (PartKind::Singlet { back, .. } | PartKind::Doublet { back, .. }, "back") => surface_text(back),
        (PartKind::Singlet { front, .. }, "front_conic") => conic(front),
        (PartKind::Singlet { back, .. }, "back_conic") => conic(back),
        (PartKind::Doublet { middle, .. }, "middle") => surface_text(middle),
        (PartKind::Singlet { thickness_mm, .. }, "thickness_mm") => number(*thickness_mm),
        (PartKind::Doublet { thickness1_mm, .. }, "thickness1_mm") => number(*thickness1_mm),
        (PartKind::Doublet { thickness2_mm, .. }, "thickness2_mm") => number(*thickness2_mm),
        (PartKind::Mirror { surface, .. }, "surface") => surface_text(surface),
        (PartKind::Eye { pupil_mm, .. }, "pupil_mm") => number(*pupil_mm),
        (PartKind::Eye { refraction_d, .. }, "refraction_d") => number(*refraction_d),
        (PartKind::Eye { accommodation_d, .. }, "accommodation_d") => number(*accommodation_d),
        (PartKind::Eye { amplitude_d, .. }, "amplitude_d") => amplitude_d.map_or_else(String::new, number),
        (PartKind::Eye { vertex_mm, .. }, "vertex_mm") => vertex_mm.map_or_else(String::new, number),
        (k, "n1") => glass_text(glass(k, 1), 'n'),
        (k, "nd1") => glass_text(glass(k, 1), 'd'),
        (k, "vd1") => glass_text(glass(k, 1), 'v'),
        (k, "n2") => glass_text(glass(k, 2), 'n'),
        (k, "nd2") => glass_text(glass(k, 2), 'd'),
        (k, "vd2") => glass_text(glass(k, 2), 'v'),
        (_, key) if COATING_KEYS.contains(&key) => {
            let face = COATING_KEYS.iter().position(|k| *k == key).unwrap_or(0);
            match p.coatings.get(face) {
                Some(Coating::Percent(v)) => number(*v),
                _ => String::new(),
            }
        }
        _ => String::new(),
    }
}

fn parse_number(text: &str, label: &str) -> Result<f64, String> {
    text.trim().replace(',', ".").parse::<f64>().map_err(|_| format!("{label}: \"{text}\" is not a number"))
}

fn parse_surface(text: &str, old: &SurfaceSpec, conic_text: Option<&str>, label: &str) -> Result<SurfaceSpec, String> {
    let t = text.trim();
    if t.eq_ignore_ascii_case("flat") || t.eq_ignore_ascii_case("inf") {
        return Ok(SurfaceSpec::Flat);
    }
    let radius = parse_number(t, label)?;
    Ok(match (old, conic_text) {
        (SurfaceSpec::Conic { .. }, Some(k)) => {
            SurfaceSpec::Conic { radius, conic: parse_number(k, "conic constant")? }
        }
        _ => SurfaceSpec::Radius(radius),
    })
}

/// The part the texts describe, or the first complaint: (field key, message).
fn part_from(old: &Part, texts: &BTreeMap<&'static str, String>) -> Result<Part, (&'static str, String)> {
    let get = |k: &'static str| texts.get(k).cloned().unwrap_or_default();
    let num = |k: &'static str, label: &str| parse_number(&get(k), label).map_err(|e| (k, e));
    let surf = |k: &'static str, old: &SurfaceSpec, conic: Option<&'static str>| {
        parse_surface(&get(k), old, conic.map(|c| texts.get(c).map_or("0", String::as_str)), k).map_err(|e| (k, e))
    };
    let material = |m: &MaterialSpec, slot: u8| -> Result<MaterialSpec, (&'static str, String)> {
        let (kn, kd, kv) = if slot == 1 { ("n1", "nd1", "vd1") } else { ("n2", "nd2", "vd2") };
        Ok(match m {
            MaterialSpec::Index(_) => MaterialSpec::Index(num(kn, "refractive index")?),
            MaterialSpec::Abbe { .. } => MaterialSpec::Abbe { nd: num(kd, "nd")?, vd: num(kv, "Vd")? },
            other => other.clone(),
        })
    };
    let mut p = old.clone();
    p.name = get("name").trim().to_string();
    p.at_mm = num("at_mm", "position")?;
    let carrier = get("carrier_mm");
    p.carrier_mm = if carrier.trim().is_empty() { None } else { Some(num("carrier_mm", "carrier width")?) };
    let optional = |k: &'static str, label: &str| -> Result<Option<f64>, (&'static str, String)> {
        let t = get(k);
        if t.trim().is_empty() { Ok(None) } else { parse_number(&t, label).map(Some).map_err(|e| (k, e)) }
    };
    if let PartKind::Eye { model, .. } = &old.kind {
        p.kind = PartKind::Eye {
            model: *model,
            pupil_mm: num("pupil_mm", "pupil diameter")?,
            refraction_d: num("refraction_d", "refractive error")?,
            accommodation_d: num("accommodation_d", "accommodation")?,
            amplitude_d: optional("amplitude_d", "accommodation range")?,
            vertex_mm: optional("vertex_mm", "spectacle plane")?,
        };
        return Ok(p);
    }
    let d = num("diameter_mm", "diameter")?;
    p.kind = match &old.kind {
        PartKind::ThinLens { .. } => PartKind::ThinLens { focal_mm: num("focal_mm", "focal length")?, diameter_mm: d },
        PartKind::Singlet { front, back, .. } => PartKind::Singlet {
            front: surf("front", front, Some("front_conic"))?,
            back: surf("back", back, Some("back_conic"))?,
            thickness_mm: num("thickness_mm", "thickness")?,
            diameter_mm: d,
            material: material(glass(&old.kind, 1).expect("a singlet has a glass"), 1)?,
        },
        PartKind::Doublet { front, middle, back, material1, material2, .. } => PartKind::Doublet {
            front: surf("front", front, None)?,
            middle: surf("middle", middle, None)?,
            back: surf("back", back, None)?,
            thickness1_mm: num("thickness1_mm", "first thickness")?,
            thickness2_mm: num("thickness2_mm", "second thickness")?,
            material1: material1.clone(),
            material2: material2.clone(),
            diameter_mm: d,
        },
        PartKind::Mirror { surface, .. } => {
            PartKind::Mirror { surface: surf("surface", surface, None)?, diameter_mm: d }
        }
        PartKind::Iris { .. } => PartKind::Iris { diameter_mm: d },
        PartKind::Screen { .. } => PartKind::Screen { diameter_mm: d },
        PartKind::Eye { .. } => old.kind.clone(),
    };
    let faces = p.kind.surface_count();
    if faces > 0 {
        let mut coatings = Vec::with_capacity(faces);
        for &key in &COATING_KEYS[..faces] {
            let text = get(key);
            coatings.push(if text.trim().is_empty() {
                Coating::Bare
            } else {
                Coating::Percent(num(key, "reflectance")?)
            });
        }
        // All bare is what a part without coatings means: the file stays as it was.
        p.coatings = if coatings.iter().all(|c| *c == Coating::Bare) { Vec::new() } else { coatings };
    }
    Ok(p)
}

/// The part turned round (see [`PartKind::turned`]); its coatings turn with it (the back one first).
pub(crate) fn flipped(p: &Part) -> Part {
    Part { kind: p.kind.turned(), coatings: p.coatings.iter().rev().copied().collect(), ..p.clone() }
}

/// Validates the bench with `candidate` as part `index`; returns the first error the change brings, as
/// (field, message), preferring those that name this part (a duplicate name is reported on the later part).
fn refusal(wb: &Workbench, index: usize, candidate: &Part) -> Option<(&'static str, String)> {
    let before: Vec<String> =
        validate(&wb.bench).into_iter().filter(|f| f.severity == Severity::Error).map(|f| f.message).collect();
    let mut bench = wb.bench.clone();
    bench.parts[index] = candidate.clone();
    let mut new: Vec<_> = validate(&bench)
        .into_iter()
        .filter(|f| f.severity == Severity::Error && !before.contains(&f.message))
        .collect();
    new.sort_by_key(|f| f.part != Some(index));
    // An error reported on another part (the later of two with one name, or of two overlapping lenses) is
    // shown beside the same field of this part.
    // The file's one `coatings` list is the sheet's reflectance fields: shown beside the first.
    new.into_iter().next().map(|f| {
        let field = match f.field {
            Some("coatings") => COATING_KEYS[0],
            other => other.unwrap_or("at_mm"),
        };
        (field, f.message)
    })
}

/// Draws the part sheet for the selected part.
pub(crate) fn sheet_ui(wb: &mut Workbench, ui: &mut egui::Ui) {
    ui.heading("Part sheet");
    let Some(index) = wb.selected.filter(|&i| i < wb.bench.parts.len()) else {
        ui.label("Click a part on the rail to edit it.");
        return;
    };
    let part = wb.bench.parts[index].clone();
    // Refill the texts when another part is selected or the part changed elsewhere (a drag, an undo).
    if wb.sheet.for_part.as_ref() != Some(&(index, part.clone())) {
        let keep_error = wb.sheet.for_part.as_ref().is_some_and(|(i, _)| *i == index) && wb.sheet.error.is_some();
        if !keep_error {
            wb.sheet.texts = fields(&part.kind).into_iter().map(|(k, _)| (k, field_text(&part, k))).collect();
            wb.sheet.error = None;
        }
        wb.sheet.for_part = Some((index, part.clone()));
    }
    ui.label(format!("{} \"{}\"", part.kind.word(), part.name));
    // A typed value is checked as it is typed, but applied only on Enter or when the field loses focus,
    // as one undo step; Escape puts the old value back.
    let mut commit: Option<&'static str> = None;
    egui::Grid::new("sheet-grid").num_columns(2).show(ui, |ui| {
        for (key, label) in fields(&part.kind) {
            let name = ui.label(label);
            let text = wb.sheet.texts.entry(key).or_default();
            let r = ui
                .add(egui::TextEdit::singleline(text).desired_width(130.0).id_salt(("sheet", key)))
                .labelled_by(name.id);
            if r.changed() {
                wb.sheet.error = match part_from(&part, &wb.sheet.texts) {
                    Err(e) => Some(e),
                    Ok(candidate) => refusal(wb, index, &candidate),
                };
            }
            if r.lost_focus() {
                if ui.input(|i| i.key_pressed(egui::Key::Escape)) {
                    wb.sheet.texts.insert(key, field_text(&part, key));
                    wb.sheet.error = None;
                } else {
                    commit = Some(key);
                }
            }
            ui.end_row();
            if let Some((k, msg)) = &wb.sheet.error
                && *k == key
            {
                ui.label("");
                ui.add(
                    egui::Label::new(
                        egui::RichText::new(format!("not applied: {msg}")).color(ui.visuals().warn_fg_color),
                    )
                    .wrap(),
                );
                ui.end_row();
            }
        }
    });
    if commit.is_some() {
        match part_from(&part, &wb.sheet.texts) {
            Err(e) => wb.sheet.error = Some(e),
            Ok(candidate) if candidate == part => wb.sheet.error = None,
            Ok(candidate) => match refusal(wb, index, &candidate) {
                Some(e) => wb.sheet.error = Some(e),
                None => {
                    wb.sheet.error = None;
                    wb.sheet.for_part = Some((index, candidate.clone()));
                    // A locked part stays locked under its new name.
                    for l in &mut wb.locked {
                        if *l == part.name {
                            l.clone_from(&candidate.name);
                        }
                    }
                    wb.apply(Edit::Replace { index, part: candidate }, None);
                }
            },
        }
    }
    material_ui(wb, ui, index);
    own_figures_ui(wb, ui, index);
    if matches!(part.kind, PartKind::Eye { .. }) {
        eye_model_ui(wb, ui, index);
        corrector_ui(wb, ui, &part);
    }
    ui.horizontal(|ui| {
        if matches!(part.kind, PartKind::Singlet { .. } | PartKind::Doublet { .. }) && ui.button("Flip lens").clicked()
        {
            wb.apply(Edit::Replace { index, part: flipped(&part) }, None);
        }
        let locked = wb.is_locked(index);
        if ui.selectable_label(locked, if locked { "Locked" } else { "Lock" }).clicked() {
            if locked {
                wb.locked.retain(|n| n != &part.name);
            } else {
                wb.locked.push(part.name.clone());
            }
        }
    });
}

/// The eye part's schematic eye, chosen from the two published models; the choice is one undo step.
fn eye_model_ui(wb: &mut Workbench, ui: &mut egui::Ui, index: usize) {
    let PartKind::Eye { model, .. } = wb.bench.parts[index].kind else { return };
    let name = |m: EyeModel| match m {
        EyeModel::Gullstrand => "Gullstrand's exact schematic eye (six surfaces)",
        EyeModel::Reduced => "Emsley's reduced eye (one surface, 60 D)",
    };
    let mut chosen = model;
    egui::ComboBox::from_label("eye model").selected_text(name(model)).show_ui(ui, |ui| {
        for m in [EyeModel::Gullstrand, EyeModel::Reduced] {
            ui.selectable_value(&mut chosen, m, name(m));
        }
    });
    if chosen != model {
        let mut part = wb.bench.parts[index].clone();
        if let PartKind::Eye { model, .. } = &mut part.kind {
            *model = chosen;
        }
        wb.apply(Edit::Replace { index, part }, None);
    }
}

/// A lens's or mirror's own first-order figures, alone in air at the bench's primary wavelength (from the
/// bench's evaluation).
fn own_figures_ui(wb: &Workbench, ui: &mut egui::Ui, index: usize) {
    let part = &wb.bench.parts[index];
    if matches!(part.kind, PartKind::Iris { .. } | PartKind::Screen { .. }) {
        return;
    }
    let primary = wb.bench.primary_wavelength_nm().unwrap_or(0.0);
    ui.separator();
    ui.label(format!("On its own, at the bench's primary wavelength ({primary} nm):"));
    let Some(f) = wb.evaluation.part_first_order.get(index).copied().flatten() else {
        ui.label("no figures: the light does not reach it, or it has no power");
        return;
    };
    let mm = |v: Option<f64>| v.map_or_else(|| "—".to_string(), |v| format!("{} mm", fixed(v, 3)));
    ui.label(format!("EFL {}   BFL {}   FFL {}", mm(f.efl_mm), mm(f.bfl_mm), mm(f.ffl_mm)));
    ui.label(format!("principal planes at {} and {}", mm(f.front_principal_at_mm), mm(f.back_principal_at_mm)));
}

fn material_ui(wb: &mut Workbench, ui: &mut egui::Ui, index: usize) {
    let part = wb.bench.parts[index].clone();
    let slots: Vec<(&str, MaterialSpec)> = match &part.kind {
        PartKind::Singlet { material, .. } => vec![("glass", material.clone())],
        PartKind::Doublet { material1, material2, .. } => {
            vec![("first glass", material1.clone()), ("second glass", material2.clone())]
        }
        _ => return,
    };
    for (slot, (label, spec)) in slots.into_iter().enumerate() {
        let current = match &spec {
            MaterialSpec::Named(n) => n.clone(),
            MaterialSpec::Index(n) => format!("index {n}"),
            MaterialSpec::Abbe { nd, vd } => format!("nd {nd}, Vd {vd}"),
            MaterialSpec::Sellmeier { .. } => "Sellmeier formula".into(),
        };
        let mut chosen = None;
        egui::ComboBox::from_label(label).selected_text(current).show_ui(ui, |ui| {
            if ui.selectable_label(matches!(spec, MaterialSpec::Index(_)), "by refractive index").clicked() {
                chosen = Some(MaterialSpec::Index(1.5));
            }
            if ui.selectable_label(matches!(spec, MaterialSpec::Abbe { .. }), "by nd and Vd").clicked() {
                chosen = Some(MaterialSpec::Abbe { nd: 1.5168, vd: 64.17 });
            }
            ui.separator();
            for e in library::entries() {
                if ui
                    .selectable_label(matches!(&spec, MaterialSpec::Named(n) if n == e.name), e.name)
                    .on_hover_text(e.description)
                    .clicked()
                {
                    chosen = Some(MaterialSpec::Named(e.name.into()));
                }
            }
        });
        if let Some(m) = chosen {
            let mut p = part.clone();
            match (&mut p.kind, slot) {
                (PartKind::Singlet { material, .. }, _) | (PartKind::Doublet { material1: material, .. }, 0) => {
                    *material = m
                }
                (PartKind::Doublet { material2, .. }, _) => *material2 = m,
                _ => {}
            }
            match refusal(wb, index, &p) {
                Some((_, msg)) => wb.status = msg,
                None => wb.apply(Edit::Replace { index, part: p }, None),
            }
        }
    }
}

/// For an eye: place the drawer's lens nearest the correcting spectacle power at the spectacle plane.
fn corrector_ui(wb: &mut Workbench, ui: &mut egui::Ui, eye: &Part) {
    let Some(fig) = wb.evaluation.report.eye.clone() else { return };
    let Some(power) = fig.spectacle_power_d else { return };
    let tip = format!(
        "the drawer's lens nearest {} D (within {} D), {} mm before the cornea",
        lumenrail_bench::report::fixed(power, 2),
        lumenrail_bench::eye::FOCUS_TOLERANCE_D,
        lumenrail_bench::report::fixed(fig.vertex_mm, 1)
    );
    if ui.button("Place corrector from the drawer").on_hover_text(tip).clicked() {
        let found =
            lumenrail_bench::eye::nearest_corrector(&wb.drawer.drawer, power, lumenrail_bench::eye::FOCUS_TOLERANCE_D);
        match found {
            Some((k, _)) => wb.place_from_drawer(k, eye.at_mm - fig.vertex_mm),
            None => {
                wb.status = format!(
                    "no lens in the drawer lies within {} D of the {} D this eye needs",
                    lumenrail_bench::eye::FOCUS_TOLERANCE_D,
                    lumenrail_bench::report::fixed(power, 2)
                )
            }
        }
    }
}
