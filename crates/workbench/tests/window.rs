//! The window around the workbench, driven headless through the whole `eframe::App`: a dropped bench file
//! opens, and closing with unsaved changes asks first.

use egui_kittest::Harness;
use egui_kittest::kittest::Queryable as _;
use lumenrail_workbench::Workbench;
use lumenrail_workbench::app::WorkbenchApp;
use std::path::{Path, PathBuf};
use std::sync::Arc;

#[derive(Debug)]
struct Dropped(PathBuf);

impl egui::DroppedFile for Dropped {
    fn path(&self) -> &Path {
        &self.0
    }
    fn bytes(&self) -> Result<Vec<u8>, String> {
        std::fs::read(&self.0).map_err(|e| e.to_string())
    }
}

fn app(demo: &str) -> Harness<'static, WorkbenchApp> {
    let mut h = Harness::builder()
        .with_size(egui::vec2(1400.0, 860.0))
        .build_eframe(|cc| WorkbenchApp::new(cc, Workbench::demo(demo), None));
    // Every figure at once, so that `run` settles (see tests/heavy.rs for the window's background work).
    h.state_mut().workbench.offload_slow_work(false);
    h.run();
    h
}

#[test]
fn a_dropped_bench_file_opens() {
    let path = std::env::temp_dir().join(format!("lumenrail-drop-{}.bench.ron", std::process::id()));
    std::fs::write(&path, lumenrail_bench::demos::find("unit-relay").unwrap().text).unwrap();
    let mut h = app("one-lens-screen");
    h.input_mut().dropped_files.push(Arc::new(Dropped(path.clone())));
    h.run();
    assert_eq!(h.state().workbench.path.as_deref(), Some(path.as_path()));
    let _ = h.get_by_label("Relay A");
    let _ = std::fs::remove_file(&path);
}

#[test]
fn closing_with_unsaved_changes_asks_first() {
    let mut h = app("one-lens-screen");
    h.state_mut().workbench.selected = Some(0);
    h.state_mut().workbench.nudge(5.0);
    h.run();
    assert!(h.state().workbench.dirty());
    let id = egui::ViewportId::ROOT;
    h.input_mut().viewports.entry(id).or_default().events.push(egui::ViewportEvent::Close);
    h.run();
    let _ = h.get_by_label_contains("has changes that are not saved");
    let _ = h.get_by_label("Save");
    h.get_by_label("Cancel").click();
    h.run();
    assert!(h.query_by_label_contains("has changes that are not saved").is_none());
    assert!(h.state().workbench.dirty());
    // Asked again, Discard lets the window close.
    h.input_mut().viewports.entry(id).or_default().events.push(egui::ViewportEvent::Close);
    h.run();
    h.get_by_label("Discard changes").click();
    h.run();
    assert!(h.query_by_label_contains("has changes that are not saved").is_none());
}

/// Closing with an unsaved drawer (a part taken into it) asks about the drawer first; Cancel keeps it,
/// Discard lets the window close when the bench has nothing unsaved.
#[test]
fn closing_with_an_unsaved_drawer_asks_first() {
    let mut h = app("one-lens-screen");
    h.state_mut().workbench.selected = Some(0);
    h.state_mut().workbench.add_selected_to_drawer();
    h.run();
    assert!(h.state().workbench.drawer.dirty && !h.state().workbench.dirty());
    let id = egui::ViewportId::ROOT;
    h.input_mut().viewports.entry(id).or_default().events.push(egui::ViewportEvent::Close);
    h.run();
    let _ = h.get_by_label("The drawer has unsaved changes");
    let _ = h.get_by_label("Save drawer as…");
    h.get_by_label("Cancel").click();
    h.run();
    assert!(h.query_by_label("The drawer has unsaved changes").is_none());
    assert!(h.state().workbench.drawer.dirty);
    h.input_mut().viewports.entry(id).or_default().events.push(egui::ViewportEvent::Close);
    h.run();
    h.get_by_label("Discard the drawer's changes").click();
    h.run();
    assert!(!h.state().workbench.drawer.dirty);
    assert!(h.query_by_label("The drawer has unsaved changes").is_none());
}
