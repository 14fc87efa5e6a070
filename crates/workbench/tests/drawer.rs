//! The drawer and aims panels as a person uses them: filter the drawer, place an item by its button and
//! by dragging it onto the rail, take a rail part into the drawer, add aims, run the arranger in the
//! background, preview and apply its best candidate as one undo step.

use egui::Key;
use egui_kittest::Harness;
use egui_kittest::kittest::Queryable;
use lumenrail_bench::drawer::{Drawer, DrawerItem};
use lumenrail_bench::model::PartKind;
use lumenrail_workbench::Workbench;

fn harness(wb: Workbench) -> Harness<'static, Workbench> {
    let mut h =
        Harness::builder().with_size(egui::vec2(1400.0, 860.0)).build_ui_state(|ui, wb: &mut Workbench| wb.ui(ui), wb);
    h.run();
    h
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

/// The drawer filtered to focal lengths from 99 to 101 mm shows only f = 100 mm items (focal lengths
/// from each item's own thick trace); Place puts the first mid-rail, remembering its item; undo takes it
/// back; the selected rail part goes into the drawer with Add selected part.
#[test]
fn the_drawer_filters_places_and_takes_parts() {
    let mut h = harness(Workbench::demo("one-lens-screen"));
    h.get_by_label("Drawer").click();
    h.run();
    replace_text(&mut h, "focal length from (mm)", "99");
    replace_text(&mut h, "to (mm)", "101");
    let shown = h.get_all_by_label("Place").count();
    assert!(shown >= 3, "{shown} items of f = 100 mm");
    let before = h.state().bench.parts.len();
    h.get_all_by_label("Place").next().unwrap().click();
    h.run();
    let wb = h.state();
    assert_eq!(wb.bench.parts.len(), before + 1);
    let placed = wb.bench.parts.last().unwrap().clone();
    let item = wb.drawer.drawer.items.iter().find(|it| Some(&it.label) == placed.from_drawer.as_ref()).unwrap();
    let f = item.focal_mm(wb.bench.primary_wavelength_nm().unwrap()).unwrap();
    assert!((f - 100.0).abs() <= 1.0, "{f}");
    assert!((placed.at_mm - 500.0).abs() < 1e-9, "{}", placed.at_mm);
    h.key_press_modifiers(egui::Modifiers::COMMAND, Key::Z);
    h.run();
    assert_eq!(h.state().bench.parts.len(), before);
    // Select the projection lens on the rail, then take it into the drawer.
    h.get_by_label("Projection lens").click();
    h.run();
    let items = h.state().drawer.drawer.items.len();
    h.get_by_label("Add selected part").click();
    h.run();
    let wb = h.state();
    assert_eq!(wb.drawer.drawer.items.len(), items + 1);
    assert_eq!(wb.drawer.drawer.items.last().unwrap().label, "Projection lens");
    assert!(wb.drawer.dirty);
}

/// An item dragged from the drawer and dropped on the rail lands under the pointer.
#[test]
fn a_drawer_item_dragged_onto_the_rail_lands_under_the_pointer() {
    let mut h = harness(Workbench::demo("one-lens-screen"));
    h.get_by_label("Drawer").click();
    h.run();
    let first = h.state().drawer.drawer.items[0].label.clone();
    let source = h.get_all_by_label_contains(&format!("{first} ·")).last().unwrap().rect().center();
    // The rail: from the projection lens (300 mm) and the screen (450 mm) on screen, the x of 200 mm.
    let lens = h.get_by_label("Projection lens").rect().center();
    let screen = h.get_by_label("Screen").rect().center();
    let px_per_mm = (screen.x - lens.x) / 150.0;
    let target = egui::pos2(lens.x - 100.0 * px_per_mm, lens.y + 30.0);
    let before = h.state().bench.parts.len();
    h.drag_at(source);
    h.run();
    for k in 1..=8 {
        h.hover_at(source + (target - source) * (k as f32 / 8.0));
        h.run();
    }
    h.drop_at(target);
    h.run();
    let wb = h.state();
    assert_eq!(wb.bench.parts.len(), before + 1, "{}", wb.status);
    let placed = wb.bench.parts.last().unwrap();
    assert_eq!(placed.from_drawer.as_deref(), Some(first.as_str()));
    // Within a pixel of 200 mm, snapped to the 1 mm step.
    assert!((placed.at_mm - 200.0).abs() <= 1.0 + 1.0 / f64::from(px_per_mm), "{}", placed.at_mm);
}

/// Aims added from the form; the arranger runs in the background (progress bar, then the ranking); the
/// best candidate is the f = 100 mm lens halfway to the screen (Gaussian imaging at m = −1 over 400 mm);
/// hovering previews it, Apply places it as one undo step.
#[test]
fn the_arranger_runs_from_the_aims_panel_and_applies_its_best_candidate() {
    let text = r#"(format: 1, title: "relay", rail_length_mm: 500.0, wavelengths_nm: [587.5618], primary_wavelength: 0,
        object: Point(at_mm: 0.0, height_mm: 1.0), parts: [(name: "Screen", at_mm: 400.0, kind: Screen(diameter_mm: 40.0))])"#;
    let bench = lumenrail_bench::file::parse("t", text).unwrap().bench;
    let mut wb = Workbench::new(bench, None);
    let thin = |label: &str, f: f64| DrawerItem {
        label: label.into(),
        quantity: 1,
        mechanical_diameter_mm: 25.4,
        notes: String::new(),
        part: PartKind::ThinLens { focal_mm: f, diameter_mm: 22.0 },
    };
    wb.drawer.drawer = Drawer { format: 1, title: "small".into(), items: vec![thin("f50", 50.0), thin("f100", 100.0)] };
    let mut h = harness(wb);
    h.get_by_label("Aims").click();
    h.run();
    // A sharp image on the screen (the first kind), then the magnification.
    replace_text(&mut h, "RMS spot at most (µm)", "1");
    h.get_by_label("Add aim").click();
    h.run();
    h.get_by_label("new aim").click();
    h.run();
    h.get_by_label("magnification").click();
    h.run();
    replace_text(&mut h, "magnification", "-1");
    replace_text(&mut h, "± tolerance", "0.001");
    h.get_by_label("Add aim").click();
    h.run();
    assert_eq!(h.state().bench.aims.len(), 2, "{:?}", h.state().bench.aims);
    h.get_by_label("1").click();
    h.run();
    h.get_by_label("Arrange").click();
    // The window keeps drawing while the search runs (a progress bar and Cancel); step frame by frame.
    h.step();
    for _ in 0..1000 {
        if !h.state().arranger.running() {
            break;
        }
        std::thread::sleep(std::time::Duration::from_millis(10));
        h.step();
    }
    h.step();
    h.run();
    let (a, _) = h.state().arranger.result.clone().expect("the search finished");
    assert!(a.candidates[0].meets_all());
    let row = h.get_by_label_contains("1. f100 at 200.0 mm").rect().center();
    h.hover_at(row);
    h.run();
    assert!(h.state().arranger.preview.is_some(), "hovering previews the candidate");
    let parts = h.state().bench.parts.len();
    h.get_all_by_label("Apply").next().unwrap().click();
    h.run();
    let wb = h.state();
    assert_eq!(wb.bench.parts.len(), parts + 1);
    let lens = wb.bench.parts.last().unwrap();
    assert!((lens.at_mm - 200.0).abs() < 1e-9 && lens.from_drawer.as_deref() == Some("f100"));
    assert!(wb.evaluation.report.aims.iter().all(|s| s.met), "{:?}", wb.evaluation.report.aims);
    h.key_press_modifiers(egui::Modifiers::COMMAND, Key::Z);
    h.run();
    assert_eq!(h.state().bench.parts.len(), parts);
}

/// A long search (three lenses from the starter drawer) shows a progress bar and Cancel while the window
/// keeps drawing; Cancel stops it and says so.
#[test]
fn a_long_search_shows_progress_and_cancels() {
    let text = r#"(format: 1, title: "relay", rail_length_mm: 500.0, wavelengths_nm: [587.5618], primary_wavelength: 0,
        object: Point(at_mm: 0.0, height_mm: 1.0), parts: [(name: "Screen", at_mm: 400.0, kind: Screen(diameter_mm: 40.0))],
        aims: [Magnification(value: -1.0, tolerance: 0.01)])"#;
    let bench = lumenrail_bench::file::parse("t", text).unwrap().bench;
    let mut h = harness(Workbench::new(bench, None));
    h.get_by_label("Aims").click();
    h.run();
    h.get_by_label("3").click();
    h.run();
    h.get_by_label("Arrange").click();
    h.step();
    h.step();
    assert!(h.state().arranger.running());
    assert!(h.state().arranger.fraction().is_some(), "the progress bar shows the share done");
    h.get_by_label("Cancel").click();
    for _ in 0..1000 {
        if !h.state().arranger.running() {
            break;
        }
        std::thread::sleep(std::time::Duration::from_millis(10));
        h.step();
    }
    h.step();
    let (a, _) = h.state().arranger.result.clone().expect("the cancelled search reports");
    assert!(a.cancelled);
    assert!(h.state().status.contains("cancelled"), "{}", h.state().status);
}
