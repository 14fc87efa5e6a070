//! Nothing thrown away without asking: with unsaved changes, New, a demo, Open recent and a typed Open ask
//! Save / Discard / Cancel (egui_kittest, as a person clicks them).
#![allow(clippy::float_cmp)] // Positions are copied and saved, never computed: they must come back bit for bit.

use egui_kittest::Harness;
use egui_kittest::kittest::Queryable as _;
use lumenrail_workbench::Workbench;
use lumenrail_workbench::guard::Replacement;

fn edited(demo: &str) -> Harness<'static, Workbench> {
    let mut h = Harness::builder()
        .with_size(egui::vec2(1400.0, 900.0))
        .build_ui_state(|ui, wb: &mut Workbench| wb.ui(ui), Workbench::demo(demo));
    h.run();
    h.state_mut().selected = Some(0);
    h.state_mut().nudge(5.0);
    h.run();
    assert!(h.state().dirty());
    h
}

fn open_demo_from_the_menu(h: &mut Harness<'static, Workbench>, name: &str) {
    h.get_by_label("File").click();
    h.run();
    h.get_by_label("Demo benches").click();
    h.run();
    h.get_by_label(name).click();
    h.run();
}

#[test]
fn a_demo_over_unsaved_changes_asks_and_cancel_keeps_the_edit() {
    let mut h = edited("one-lens-screen");
    let edited_at = h.state().bench.parts[0].at_mm;
    open_demo_from_the_menu(&mut h, "unit-relay");
    let _ = h.get_by_label_contains("has changes that are not saved");
    h.get_by_label("Cancel").click();
    h.run();
    assert!(h.query_by_label_contains("has changes that are not saved").is_none());
    assert_eq!(h.state().bench.parts[0].at_mm, edited_at);
    assert!(h.state().dirty());
}

#[test]
fn discard_goes_ahead_without_saving() {
    let mut h = edited("one-lens-screen");
    open_demo_from_the_menu(&mut h, "unit-relay");
    h.get_by_label("Discard changes").click();
    h.run();
    let _ = h.get_by_label("Relay A");
    assert!(!h.state().dirty());
}

#[test]
fn save_writes_the_file_then_goes_ahead() {
    let path = std::env::temp_dir().join(format!("lumenrail-unsaved-{}.bench.ron", std::process::id()));
    std::fs::write(&path, lumenrail_bench::demos::find("one-lens-screen").unwrap().text).unwrap();
    let mut h = Harness::builder()
        .with_size(egui::vec2(1400.0, 900.0))
        .build_ui_state(|ui, wb: &mut Workbench| wb.ui(ui), Workbench::demo("one-lens-screen"));
    assert!(h.state_mut().open(path.clone()));
    h.state_mut().selected = Some(0);
    h.state_mut().nudge(7.0);
    let moved = h.state().bench.parts[0].at_mm;
    h.run();
    h.state_mut().replace(Replacement::New);
    h.run();
    h.get_by_label("Save").click();
    h.run();
    // The edit is on disk, and the new bench is open.
    let saved = lumenrail_bench::file::load(&path).unwrap().bench;
    assert_eq!(saved.parts.iter().find(|p| p.name == "Projection lens").unwrap().at_mm, moved);
    assert_eq!(h.state().bench.title, "New bench");
    assert!(h.state().path.is_none());
    let _ = std::fs::remove_file(&path);
}

#[test]
fn new_with_nothing_to_save_asks_nothing() {
    let mut h = Harness::builder()
        .with_size(egui::vec2(1400.0, 900.0))
        .build_ui_state(|ui, wb: &mut Workbench| wb.ui(ui), Workbench::demo("one-lens-screen"));
    h.run();
    h.get_by_label("File").click();
    h.run();
    h.get_by_label_contains("New bench").click();
    h.run();
    assert!(h.query_by_label_contains("has changes that are not saved").is_none());
    assert_eq!(h.state().bench.title, "New bench");
}
