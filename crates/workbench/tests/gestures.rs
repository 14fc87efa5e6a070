//! The workbench driven as a person uses it, through the real widgets (egui_kittest, no display): drag a
//! lens, nudge with keys, undo, type into the part sheet, move a screen to best focus.

#![allow(clippy::float_cmp)] // Snapped positions here are whole millimetres, exact in f64, so equality is the check.

use egui::Key;
use egui_kittest::Harness;
use egui_kittest::kittest::Queryable as _;
use lumenrail_bench::report::Report;
use lumenrail_workbench::Workbench;

fn harness(demo: &str) -> Harness<'static, Workbench> {
    let mut h = Harness::builder()
        .with_size(egui::vec2(1400.0, 860.0))
        .build_ui_state(|ui, wb: &mut Workbench| wb.ui(ui), Workbench::demo(demo));
    h.run();
    h
}

/// The readout's final-image line, as a person reads it.
fn final_image_text(h: &Harness<'_, Workbench>) -> String {
    h.get_by_label_contains("Final image").value().unwrap_or_default()
}

fn drag_by(h: &mut Harness<'_, Workbench>, label: &str, dx: f32) {
    let start = h.get_by_label(label).rect().center();
    h.hover_at(start);
    h.run();
    h.drag_at(start);
    h.run();
    for k in 1..=5 {
        h.hover_at(start + egui::vec2(dx * k as f32 / 5.0, 0.0));
        h.run();
    }
    h.drop_at(start + egui::vec2(dx, 0.0));
    h.run();
}

#[test]
fn dragging_a_lens_updates_the_image_to_the_cores_figure() {
    let mut h = harness("one-lens-screen");
    assert!(final_image_text(&h).contains("at 450.000 mm"), "{}", final_image_text(&h));
    let before = h.state().bench.parts[0].at_mm;
    // Leftwards, away from the screen's carrier.
    drag_by(&mut h, "Projection lens", -60.0);
    let wb = h.state();
    let after = wb.bench.parts[0].at_mm;
    assert!(after < before - 10.0, "the lens moved: {before} → {after}");
    assert_eq!(after, after.round(), "1 mm snap");
    // The readout shows what the core computes for the new layout (Gauss: s' = 1/(1/f + 1/s)).
    let s1 = 1.0 / (1.0 / 100.0 - 1.0 / after);
    let expected = Report::of(&wb.bench).images.last().unwrap().at_mm.unwrap();
    assert!((expected - (after + s1)).abs() < 1e-9);
    assert!(final_image_text(&h).contains(&format!("at {expected:.3} mm")), "{}", final_image_text(&h));
    // One drag is one undo step.
    h.state_mut().undo();
    h.run();
    assert_eq!(h.state().bench.parts[0].at_mm, before);
    assert!(final_image_text(&h).contains("at 450.000 mm"));
}

#[test]
fn a_part_stops_against_its_neighbours_carrier() {
    let mut h = harness("one-lens-screen");
    // The lens (carrier 25 mm at 300) dragged far right stops against the screen's carrier (25 mm at 450).
    drag_by(&mut h, "Projection lens", 600.0);
    let at = h.state().bench.parts[0].at_mm;
    assert!((at - (450.0 - 25.0)).abs() < 1e-9, "{at}");
}

#[test]
fn arrow_keys_nudge_the_selected_part_and_undo_restores_the_figures() {
    let mut h = harness("one-lens-screen");
    h.get_by_label("Projection lens").click();
    h.run();
    assert_eq!(h.state().selected, Some(0));
    h.key_press(Key::ArrowLeft);
    h.run();
    assert_eq!(h.state().bench.parts[0].at_mm, 299.0);
    h.key_press_modifiers(egui::Modifiers::SHIFT, Key::ArrowLeft);
    h.run();
    assert_eq!(h.state().bench.parts[0].at_mm, 289.0);
    let moved = final_image_text(&h);
    assert!(!moved.contains("450.000"));
    h.key_press_modifiers(egui::Modifiers::COMMAND, Key::Z);
    h.run();
    assert_eq!(h.state().bench.parts[0].at_mm, 300.0, "nudges merge into one undo step");
    assert!(final_image_text(&h).contains("at 450.000 mm"));
    h.key_press_modifiers(egui::Modifiers::COMMAND | egui::Modifiers::SHIFT, Key::Z);
    h.run();
    assert_eq!(h.state().bench.parts[0].at_mm, 289.0);
}

#[test]
fn typing_a_focal_length_in_the_part_sheet_changes_the_figures() {
    let mut h = harness("one-lens-screen");
    h.get_by_label("Projection lens").click();
    h.run();
    replace_text(&mut h, "focal length (mm)", "120");
    let wb = h.state();
    match &wb.bench.parts[0].kind {
        lumenrail_bench::model::PartKind::ThinLens { focal_mm, .. } => assert_eq!(*focal_mm, 120.0),
        other => panic!("{other:?}"),
    }
    // s = −300, f = 120: s' = 200, image at 500 mm.
    assert!(final_image_text(&h).contains("at 500.000 mm"), "{}", final_image_text(&h));
}

#[test]
fn an_invalid_entry_shows_its_message_and_changes_nothing() {
    let mut h = harness("one-lens-screen");
    h.get_by_label("Projection lens").click();
    h.run();
    replace_text(&mut h, "diameter (mm)", "-3");
    assert_eq!(h.state().bench.parts[0].kind.diameter_mm(), 40.0);
    let msg = h.get_by_label_contains("must be a positive number").value().unwrap_or_default();
    assert!(msg.contains("Projection lens"), "{msg}");
    assert!(final_image_text(&h).contains("at 450.000 mm"));
}

#[test]
fn move_screen_to_best_focus_makes_its_spot_the_best_focus_spot() {
    let mut h = harness("plano-convex-flat-first");
    let screen = h.state().evaluation.report.screens[0].clone();
    assert!(screen.move_to_best_focus_mm.unwrap().abs() > 1.0);
    h.get_by_label("Move Screen to best focus").click();
    h.run();
    let now = &h.state().evaluation.report.screens[0];
    assert!((now.at_mm - screen.best_focus_at_mm.unwrap()).abs() < 1e-12);
    assert!(
        (now.rms_spot_um.unwrap() - screen.best_rms_spot_um.unwrap()).abs() < 1e-6 * screen.best_rms_spot_um.unwrap()
    );
    assert!(now.move_to_best_focus_mm.unwrap().abs() < 1e-9);
}

#[test]
fn every_part_and_figure_reports_itself_by_label() {
    let h = harness("unit-relay");
    for name in ["Relay A", "Field screen", "Relay B", "Camera plane"] {
        let _ = h.get_by_label(name);
    }
    let _ = h.get_by_label_contains("Intermediate image 1 after Relay A");
    let _ = h.get_by_label_contains("Aperture stop: Relay A");
    let _ = h.get_by_label_contains("vignetting");
}

fn replace_text(h: &mut Harness<'_, Workbench>, label: &str, text: &str) {
    h.get_by_label(label).focus();
    h.run();
    h.key_press_modifiers(egui::Modifiers::COMMAND, Key::A);
    h.run();
    h.get_by_label(label).type_text(text);
    h.run();
    h.key_press(Key::Enter);
    h.run();
}

/// Typing a position applies nothing until Enter: the part does not hop to 3, 32 and 320 on the way,
/// and the entry is one undo step. Escape puts the old value back.
#[test]
fn a_typed_value_applies_on_enter_as_one_step_and_escape_restores() {
    let mut h = harness("one-lens-screen");
    h.get_by_label("Projection lens").click();
    h.run();
    let (start, revisions) = (h.state().bench.parts[0].at_mm, h.state().evaluation.report.clone());
    h.get_by_label("position (mm)").focus();
    h.run();
    h.key_press_modifiers(egui::Modifiers::COMMAND, Key::A);
    h.run();
    for digits in ["3", "2", "0"] {
        h.get_by_label("position (mm)").type_text(digits);
        h.run();
        assert_eq!(h.state().bench.parts[0].at_mm, start, "applied while typing");
        assert_eq!(h.state().evaluation.report, revisions, "traced while typing");
    }
    h.key_press(Key::Enter);
    h.run();
    assert_eq!(h.state().bench.parts[0].at_mm, 320.0);
    h.key_press_modifiers(egui::Modifiers::COMMAND, Key::Z);
    h.run();
    assert_eq!(h.state().bench.parts[0].at_mm, start, "one undo step takes the whole entry back");
    assert_eq!(h.state().selected, Some(0), "{}", h.state().status);
    // Escape: the typed text goes, the old value stays.
    h.get_by_label("position (mm)").focus();
    h.run();
    h.key_press_modifiers(egui::Modifiers::COMMAND, Key::A);
    h.run();
    h.get_by_label("position (mm)").type_text("999");
    h.run();
    h.key_press(Key::Escape);
    h.run();
    assert_eq!(h.state().bench.parts[0].at_mm, start);
    assert_eq!(h.get_by_label("position (mm)").value().as_deref(), Some("300"));
}

/// A value out of range is shown with its reason in the field's place, not clamped and not applied.
#[test]
fn an_out_of_range_value_says_why_and_is_not_clamped() {
    let mut h = harness("one-lens-screen");
    h.get_by_label("Projection lens").click();
    h.run();
    replace_text(&mut h, "position (mm)", "5000");
    assert_eq!(h.state().bench.parts[0].at_mm, 300.0);
    let msg = h.get_by_label_contains("not applied").value().unwrap_or_default();
    assert!(msg.contains("rail"), "{msg}");
    assert_eq!(h.get_by_label("position (mm)").value().as_deref(), Some("5000"));
}

#[test]
fn renaming_a_part_and_refusing_a_duplicate_name() {
    let mut h = harness("one-lens-screen");
    h.get_by_label("Projection lens").click();
    h.run();
    replace_text(&mut h, "name", "Condenser");
    assert_eq!(h.state().bench.parts[0].name, "Condenser");
    let _ = h.get_by_label("Condenser");
    replace_text(&mut h, "name", "Screen");
    assert_eq!(h.state().bench.parts[0].name, "Condenser", "a duplicate name is not applied");
    let _ = h.get_by_label_contains("names must be unique");
}

#[test]
fn a_glass_given_by_nd_and_vd_changes_the_focal_length_by_the_lensmaker() {
    let mut h = harness("plano-convex-curved-first");
    h.get_by_label("Plano-convex f100").click();
    h.run();
    h.get_by_label("glass").click();
    h.run();
    h.get_by_label("by nd and Vd").click();
    h.run();
    assert!(matches!(
        &h.state().bench.parts[0].kind,
        lumenrail_bench::model::PartKind::Singlet { material: lumenrail_bench::model::MaterialSpec::Abbe { .. }, .. }
    ));
    replace_text(&mut h, "nd", "1.6");
    // Plano-convex: f = R/(n − 1) = 51.7/0.6 (lensmaker's equation).
    let efl = h.state().evaluation.report.first_order.efl_mm.unwrap();
    assert!((efl - 51.7 / 0.6).abs() < 1e-9, "{efl}");
}

#[test]
fn the_help_menu_shows_the_safety_cautions_and_the_shortcuts() {
    let mut h = harness("one-lens-screen");
    h.get_by_label("Help").click();
    h.run();
    h.get_by_label("Safety").click();
    h.run();
    let _ = h.get_by_label_contains("laser safety officer");
    let mut h = harness("one-lens-screen");
    h.get_by_label("Help").click();
    h.run();
    h.get_by_label_contains("Getting started").click();
    h.run();
    let _ = h.get_by_label_contains("A first session");
    let mut h = harness("one-lens-screen");
    h.get_by_label("Help").click();
    h.run();
    h.get_by_label("Keyboard shortcuts").click();
    h.run();
    // Help lists every action that has a shortcut, with the keys from the one list of actions.
    for a in lumenrail_workbench::actions::ACTIONS.iter().filter(|a| !a.keys.is_empty()) {
        let _ = h.get_by_label(a.label);
        let _ = h.get_by_label(&a.action.keys_text());
    }
}

/// Delete removes the selected part as one undo step, Ctrl+Z brings it back, Escape clears the
/// selection: the keys come from the same list as the menus.
#[test]
fn delete_undo_and_escape_act_on_the_selected_part() {
    let mut h = harness("one-lens-screen");
    h.get_by_label("Projection lens").click();
    h.run();
    assert!(h.state().selected.is_some());
    let parts = h.state().bench.parts.len();
    h.key_press(egui::Key::Delete);
    h.run();
    assert_eq!(h.state().bench.parts.len(), parts - 1);
    assert!(h.query_by_label("Projection lens").is_none());
    h.key_press_modifiers(egui::Modifiers::COMMAND, egui::Key::Z);
    h.run();
    assert_eq!(h.state().bench.parts.len(), parts);
    h.get_by_label("Projection lens").click();
    h.run();
    assert!(h.state().selected.is_some());
    h.key_press(egui::Key::Escape);
    h.run();
    assert_eq!(h.state().selected, None);
}

#[test]
fn the_readout_belongs_to_the_layout_on_screen_in_the_same_frame() {
    let mut h = harness("one-lens-screen");
    let start = h.get_by_label("Projection lens").rect().center();
    h.hover_at(start);
    h.run();
    h.drag_at(start);
    h.run();
    h.hover_at(start - egui::vec2(30.0, 0.0));
    h.step(); // one frame only
    let wb = h.state();
    let expected = Report::of(&wb.bench).images.last().unwrap().at_mm.unwrap();
    assert!((wb.bench.parts[0].at_mm - 300.0).abs() > 1.0, "the lens moved in this frame");
    assert!(final_image_text(&h).contains(&format!("at {expected:.3} mm")), "{}", final_image_text(&h));
}

#[test]
fn save_by_path_and_reopen_keeps_the_edit() {
    let path = std::env::temp_dir().join(format!("lumenrail-gui-{}.bench.ron", std::process::id()));
    let _ = std::fs::remove_file(&path);
    let mut h = harness("one-lens-screen");
    h.get_by_label("Projection lens").click();
    h.run();
    h.key_press(Key::ArrowLeft);
    h.run();
    assert!(h.state().dirty() && h.state().title().starts_with("● "));
    h.get_by_label("File").click();
    h.run();
    h.get_by_label("Save as by path…").click();
    h.run();
    // Enter in the path field saves, as the Save button would.
    replace_text(&mut h, "Path of the .bench.ron file:", path.to_str().unwrap());
    assert!(path.exists(), "{}", h.state().status);
    assert!(!h.state().dirty());
    // Reopen it in a fresh workbench, as a person would after restarting.
    let mut again = harness("magnifier");
    again.get_by_label("File").click();
    again.run();
    again.get_by_label("Open by path…").click();
    again.run();
    replace_text(&mut again, "Path of the .bench.ron file:", path.to_str().unwrap());
    assert_eq!(again.state().bench.part("Projection lens").unwrap().at_mm, 299.0, "{}", again.state().status);
    assert!(final_image_text(&again).contains(&format!("at {:.3} mm", 299.0 + 1.0 / (1.0 / 100.0 - 1.0 / 299.0))));
    let _ = std::fs::remove_file(&path);
}

/// Any sequence of edits leaves a workbench that draws without panicking and shows no NaN: parts of
/// every kind added, moved anywhere along the rail (onto each other too), flipped and removed.
#[test]
fn random_edits_never_break_the_workbench() {
    let mut h = harness("one-lens-screen");
    let mut seed: u64 = 0x5eed_1e45;
    let mut next = move || {
        seed = seed.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
        (seed >> 33) as f64 / (1u64 << 31) as f64
    };
    let kinds = ["thin lens", "singlet", "doublet", "mirror", "iris", "screen"];
    for step in 0..120 {
        let wb = h.state_mut();
        let r = next();
        let n = wb.bench.parts.len();
        if r < 0.3 || n == 0 {
            let part = wb.new_part(kinds[(next() * kinds.len() as f64) as usize % kinds.len()]);
            wb.apply(lumenrail_workbench::Edit::Add(part), None);
        } else if r < 0.85 {
            let i = (next() * n as f64) as usize % n;
            let at = next() * wb.bench.rail_length_mm;
            wb.apply(lumenrail_workbench::Edit::Move { index: i, at_mm: at }, None);
        } else if r < 0.92 {
            wb.undo();
        } else {
            let i = (next() * n as f64) as usize % n;
            wb.apply(lumenrail_workbench::Edit::Remove(i), None);
        }
        // Every analysis view is drawn in turn while the bench is being mangled.
        wb.views.tab = lumenrail_bench::views::ViewKind::ALL[step % lumenrail_bench::views::ViewKind::ALL.len()];
        h.run();
        let text = final_image_text_or_empty(&h);
        assert!(!text.contains("NaN") && !text.contains("inf"), "step {step}: {text}");
        assert!(h.query_by_label_contains("NaN").is_none(), "step {step}: a NaN on screen");
        let views = h.state_mut().views().clone();
        assert!(views_are_finite(&views), "step {step}: {views:?}");
        for ray in &h.state().scene.rays {
            assert!(ray.points.iter().all(|(z, y)| z.is_finite() && y.is_finite()), "step {step}");
        }
    }
}

/// Whether every number of every view is finite (a `None` is allowed: it is shown as a dash or not drawn).
fn views_are_finite(v: &lumenrail_bench::views::Views) -> bool {
    let ok = |x: f64| x.is_finite();
    v.spot.iter().flat_map(|s| &s.series).all(|s| {
        s.rays.iter().all(|r| ok(r.x_mm) && ok(r.y_mm)) && ok(s.rms_mm) && ok(s.geometric_mm) && ok(s.centroid.0)
    }) && v
        .fan
        .iter()
        .flat_map(|f| &f.series)
        .all(|s| s.tangential.iter().chain(&s.sagittal).all(|(p, e)| ok(*p) && ok(*e)))
        && v.sweep
            .iter()
            .flat_map(|s| &s.series)
            .all(|s| s.samples.iter().all(|(z, r)| ok(*z) && ok(*r)) && ok(s.best.1))
        && v.colour
            .iter()
            .flat_map(|c| &c.samples)
            .all(|c| c.focus_at_mm.is_none_or(ok) && c.lateral_colour_mm.is_none_or(ok))
        && v.field
            .iter()
            .flat_map(|f| &f.points)
            .all(|p| ok(p.tangential_mm) && ok(p.sagittal_mm) && p.distortion_percent.is_none_or(ok))
}

fn final_image_text_or_empty(h: &Harness<'_, Workbench>) -> String {
    h.query_by_label_contains("Final image").and_then(|n| n.value()).unwrap_or_default()
}

/// Every fixed text the workbench shows (actions, gestures, safety cautions, status messages) has a glyph
/// in the bundled fonts for each character: no box for a missing one.
#[test]
fn every_fixed_text_has_glyphs_in_the_bundled_fonts() {
    use lumenrail_workbench::actions::{ACTIONS, GESTURES, NO_OPEN_DIALOG, NO_SAVE_DIALOG};
    let ctx = egui::Context::default();
    let mut out = ctx.run_ui(egui::RawInput::default(), |_| {});
    out.textures_delta.clear();
    let mut texts: Vec<String> = vec![
        lumenrail_workbench::SAFETY.into(),
        lumenrail_workbench::GETTING_STARTED.into(),
        NO_OPEN_DIALOG.into(),
        NO_SAVE_DIALOG.into(),
    ];
    let dialogs = lumenrail_workbench::disk::TEXTS.iter().chain(lumenrail_workbench::recovery::TEXTS);
    texts.extend(dialogs.map(|t| (*t).to_string()));
    for a in ACTIONS {
        texts.push(a.label.into());
        texts.push(a.action.keys_text());
    }
    for (g, what) in GESTURES {
        texts.push((*g).into());
        texts.push((*what).into());
    }
    let font = egui::FontId::proportional(14.0);
    ctx.fonts_mut(|f| {
        for t in &texts {
            for c in t.chars().filter(|c| !c.is_whitespace()) {
                assert!(f.has_glyph(&font, c), "no glyph for {c:?} in {t:?}");
            }
        }
    });
}

/// Tab selects the next part along the rail, from the datum outwards, and wraps round.
#[test]
fn tab_walks_the_parts_along_the_rail() {
    let mut h = harness("unit-relay");
    let order: Vec<String> =
        h.state().bench.rail_order().into_iter().map(|i| h.state().bench.parts[i].name.clone()).collect();
    for name in order.iter().chain(order.first()) {
        h.key_press(Key::Tab);
        h.run();
        let selected = h.state().selected.map(|i| h.state().bench.parts[i].name.clone());
        assert_eq!(selected.as_deref(), Some(name.as_str()));
    }
}

/// The part sheet gives a lens's own EFL, BFL and FFL at the primary wavelength: for the only lens of a
/// bench, the bench's own figures (the thick-lens lensmaker's equation, Hecht sec. 6.1, checked in the
/// bench crate's demo tests).
#[test]
fn the_part_sheet_gives_a_lens_its_own_focal_lengths() {
    let mut h = harness("plano-convex-curved-first");
    h.get_by_label("Plano-convex f100").click();
    h.run();
    let f = h.state().evaluation.report.first_order.clone();
    let _ = h.get_by_label_contains("primary wavelength (587.5618 nm)");
    let shown = format!("EFL {:.3} mm   BFL {:.3} mm", f.efl_mm.unwrap(), f.bfl_mm.unwrap());
    let all: Vec<String> = h.query_all_by_label_contains("EFL").filter_map(|n| n.value()).collect();
    assert!(all.iter().any(|t| t.starts_with(&shown)), "{all:?} / {shown}");
}

/// Dragging empty space pans up and down as well as along the rail, and zooming with the wheel scales
/// heights as well as lengths about the pointer.
#[test]
fn zoom_and_pan_work_in_both_directions() {
    let mut h = harness("camera-meniscus");
    let lens = "Meniscus";
    let before = h.get_by_label(lens).rect();
    // Pan: drag empty space above the lens 40 px down; the lens follows.
    let empty = egui::pos2(before.center().x, before.top() - 20.0);
    h.drag_at(empty);
    h.run();
    h.hover_at(empty + egui::vec2(0.0, 40.0));
    h.run();
    h.drop_at(empty + egui::vec2(0.0, 40.0));
    h.run();
    let panned = h.get_by_label(lens).rect();
    assert!((panned.top() - before.top() - 40.0).abs() < 3.0, "{before:?} -> {panned:?}");
    // Zoom in beside the lens: it grows in width and in height (its top rises; its area runs down to its
    // carrier on the scale, which stays put).
    h.hover_at(egui::pos2(panned.right() + 20.0, panned.top() + 30.0));
    h.run_steps(4);
    for _ in 0..2 {
        h.event(egui::Event::MouseWheel {
            unit: egui::MouseWheelUnit::Point,
            delta: egui::vec2(0.0, 120.0),
            modifiers: egui::Modifiers::NONE,
            phase: egui::TouchPhase::Move,
            source: egui::MouseWheelSource::Wheel,
        });
        // Smooth scrolling spreads a wheel step over several frames.
        h.run_steps(12);
    }
    let zoomed = h.get_by_label(lens).rect();
    assert!(zoomed.top() < panned.top() - 15.0, "{panned:?} -> {zoomed:?}");
    assert!(zoomed.width() > 1.2 * panned.width(), "{panned:?} -> {zoomed:?}");
}

/// The bench settings sheet, opened by clicking the object: the object's height and the wavelengths are
/// edited there and applied together as one undo step; an impossible value says why and changes nothing.
#[test]
fn the_bench_settings_sheet_edits_the_object_and_the_wavelengths() {
    let mut h = harness("one-lens-screen");
    h.get_by_label("object").click();
    h.run();
    let _ = h.get_by_label("Bench settings");
    replace_text(&mut h, "object height, off-axis point (mm)", "6");
    h.get_by_label("single line: d (587.6 nm)").click();
    h.run();
    h.get_by_label("Apply").click();
    h.run();
    let b = h.state().bench.clone();
    assert_eq!(b.object, lumenrail_bench::model::ObjectSpec::Point { at_mm: 0.0, height_mm: 6.0 });
    assert_eq!(b.wavelengths_nm, vec![587.5618]);
    assert_eq!(b.primary_wavelength, 0);
    // m = −0.5, so the final image is 3 mm tall (Gaussian imaging).
    let img = h.state().evaluation.report.images.last().unwrap().clone();
    assert!((img.height_mm.unwrap() + 3.0).abs() < 1e-12, "{img:?}");
    // A rail too short for the parts is refused with the reason.
    replace_text(&mut h, "rail length (mm)", "100");
    h.get_by_label("Apply").click();
    h.run();
    let _ = h.get_by_label_contains("not applied");
    assert_eq!(h.state().bench.rail_length_mm, 1000.0);
    // One undo step takes the applied settings back.
    h.get_by_label("Close").click();
    h.run();
    h.key_press_modifiers(egui::Modifiers::COMMAND, Key::Z);
    h.run();
    assert_eq!(h.state().bench.wavelengths_nm.len(), 3);
}

/// The wavelengths' weights are set in the bench settings sheet, by a named set or typed; a count that
/// does not match the wavelengths is refused with the reason; the readout names the shares.
#[test]
fn the_bench_settings_sheet_sets_the_wavelengths_weights() {
    let mut h = harness("colour-singlet");
    h.get_by_label("Edit").click();
    h.run();
    h.get_by_label("Bench settings…").click();
    h.run();
    h.get_by_label("visible, weighted 1 : 2 : 1").click();
    h.run();
    h.get_by_label("Apply").click();
    h.run();
    assert_eq!(h.state().bench.wavelength_weights, vec![1.0, 2.0, 1.0]);
    assert!(h.state().evaluation.report.to_text().contains("weighted 25% : 50% : 25%"));
    replace_text(&mut h, "weights (one per wavelength; empty: equal)", "1, 3");
    h.get_by_label("Apply").click();
    h.run();
    let _ = h.get_by_label_contains("2 weights for 3 wavelengths");
    assert_eq!(h.state().bench.wavelength_weights, vec![1.0, 2.0, 1.0]);
    // Emptied: equal weights again.
    let field = "weights (one per wavelength; empty: equal)";
    h.get_by_label(field).focus();
    h.run();
    h.key_press_modifiers(egui::Modifiers::COMMAND, Key::A);
    h.run();
    h.key_press(Key::Backspace);
    h.run();
    h.get_by_label("Apply").click();
    h.run();
    assert!(h.state().bench.wavelength_weights.is_empty());
}

/// A clipped field says which part clips it (clicking the warning selects that part) and offers to shrink
/// the field to what passes whole; after that nothing is vignetted.
#[test]
fn a_clipped_field_names_the_part_and_can_be_shrunk_to_what_passes() {
    let text = r#"(format: 1, title: "two irises", rail_length_mm: 400.0, wavelengths_nm: [587.5618], primary_wavelength: 0,
        object: Distant(field_deg: 5.0, beam_diameter_mm: 30.0), parts: [
        (name: "Front iris", at_mm: 100.0, kind: Iris(diameter_mm: 8.0)),
        (name: "Back iris", at_mm: 140.0, kind: Iris(diameter_mm: 10.0)),
        (name: "Lens", at_mm: 150.0, kind: ThinLens(focal_mm: 100.0, diameter_mm: 40.0)),
        (name: "Screen", at_mm: 250.0, kind: Screen(diameter_mm: 40.0))])"#;
    let bench = lumenrail_bench::file::parse("t", text).unwrap().bench;
    let mut h = Harness::builder()
        .with_size(egui::vec2(1400.0, 900.0))
        .build_ui_state(|ui, wb: &mut Workbench| wb.ui(ui), Workbench::new(bench, None));
    h.run();
    h.get_by_label_contains("\"Back iris\" clips it first").click();
    h.run();
    let back = h.state().bench.parts.iter().position(|p| p.name == "Back iris");
    assert_eq!(h.state().selected, back);
    h.get_by_label_contains("Shrink the field to").click();
    h.run();
    let lumenrail_bench::model::ObjectSpec::Distant { field_deg, .. } = h.state().bench.object else { panic!() };
    // The first iris's rim, shifted by 40 tan θ, meets 99.5% of the second's radius (plane geometry).
    let want = ((0.995 * 5.0 - 4.0) / 40.0f64).atan().to_degrees();
    assert!(field_deg <= want && field_deg > want - 2e-3, "{field_deg} vs {want}");
    let r = &h.state().evaluation.report;
    assert_eq!(r.off_axis_area_transmission, Some(1.0));
    assert!(!r.warnings.iter().any(|w| w.message.contains("vignetting")), "{:?}", r.warnings);
}

/// Images are labelled on the rail with their magnification, beyond the arrow's tip, clear of the parts'
/// labels; hovering a label gives the image whole. The unit relay images at m = −1 on the field screen
/// and m = +1 on the camera plane (two 2f–2f stages: Gaussian imaging).
#[test]
fn images_are_labelled_on_the_rail_clear_of_the_parts() {
    let mut h = harness("unit-relay");
    let first = h.get_by_label("image ×-1.00").rect();
    let second = h.get_by_label("image ×1.00").rect();
    assert!(!first.intersects(second));
    for part in ["Relay A", "Field screen", "Relay B", "Camera plane"] {
        let p = h.get_by_label(part).rect();
        // The part's own label sits above its top; the image labels sit by the arrows, on the rail.
        assert!(
            !first.intersects(egui::Rect::from_min_max(p.min - egui::vec2(0.0, 40.0), egui::pos2(p.max.x, p.min.y))),
            "{part}"
        );
    }
    h.hover_at(first.center());
    for _ in 0..4 {
        h.step();
    }
    let _ = h.get_by_label_contains("real image at 200.000 mm, magnification -1.00000");
}
