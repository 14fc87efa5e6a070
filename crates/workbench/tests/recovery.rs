//! Autosave and recovery, driven through the whole window (`eframe::App`) headless: an edit is written to
//! the data folder once the user has been idle, never over the bench's file and not again while nothing
//! changes; saving removes the copy; a copy left by a run that is no longer running is offered at start,
//! and Restore opens it as an unsaved bench of its file, Discard deletes it.
#![allow(clippy::float_cmp)] // Positions are copied and saved, never computed: they must come back bit for bit.

use egui::Key;
use egui_kittest::Harness;
use egui_kittest::kittest::Queryable as _;
use lumenrail_workbench::Workbench;
use lumenrail_workbench::app::WorkbenchApp;
use lumenrail_workbench::disk::Stamp;
use lumenrail_workbench::recovery::{RECOVERY_TITLE, Recovery};
use std::path::{Path, PathBuf};
use std::time::Duration;

/// A process id that is not running (Linux pids stay below 2^22).
const GONE: u32 = 4_000_000_000;

fn demo_file(dir: &Path) -> PathBuf {
    let path = dir.join("projector.bench.ron");
    std::fs::write(&path, lumenrail_bench::demos::find("one-lens-screen").unwrap().text).unwrap();
    path
}

fn window(wb: Workbench) -> Harness<'static, WorkbenchApp> {
    let mut h =
        Harness::builder().with_size(egui::vec2(1400.0, 860.0)).build_eframe(move |cc| WorkbenchApp::new(cc, wb, None));
    // Every figure at once, so that `run` settles (a debug build's slow figures would otherwise go to a
    // background thread and keep the frames coming).
    h.state_mut().workbench.offload_slow_work(false);
    h.run();
    h
}

fn opened(path: &Path, data: &Path, idle: Duration) -> Workbench {
    let mut wb = Workbench::demo("one-lens-screen");
    assert!(wb.open(path.to_path_buf()));
    wb.start_autosave(Recovery::in_dir(data), idle);
    wb
}

#[test]
fn an_edit_is_autosaved_once_idle_and_the_save_removes_the_copy() {
    let dir = tempfile::tempdir().unwrap();
    let path = demo_file(dir.path());
    let original = std::fs::read(&path).unwrap();
    let data = dir.path().join("data");
    let mut h = window(opened(&path, &data, Duration::from_millis(300)));
    let copy = h.state().workbench.autosave_path().unwrap();
    let note = Recovery::in_dir(&data).note_path();
    h.state_mut().workbench.selected = Some(0);
    h.state_mut().workbench.nudge(5.0);
    let edited = std::time::Instant::now();
    h.run();
    // On a loaded machine the frames themselves can outlast the idle time; only a copy written sooner
    // than that is early.
    if edited.elapsed() < Duration::from_millis(250) {
        assert!(!copy.exists(), "written before the user was idle");
    }
    std::thread::sleep(Duration::from_millis(350));
    h.run();
    assert!(copy.exists() && note.exists());
    let saved = lumenrail_bench::file::load(&copy).unwrap().bench;
    assert_eq!(saved, h.state().workbench.bench);
    let note_text = std::fs::read_to_string(&note).unwrap();
    assert!(note_text.contains("projector.bench.ron"), "{note_text}");
    assert_eq!(std::fs::read(&path).unwrap(), original, "the user's file is never written by the autosave");
    // Nothing changed since: no more writes, however long the window stays open.
    std::fs::remove_file(&copy).unwrap();
    std::thread::sleep(Duration::from_millis(350));
    for _ in 0..5 {
        h.run();
    }
    assert!(!copy.exists(), "written again with nothing changed");
    // A save writes the user's file and removes the copy and its note.
    h.state_mut().workbench.autosave_now();
    assert!(copy.exists());
    h.key_press_modifiers(egui::Modifiers::COMMAND, Key::S);
    h.run();
    assert!(!h.state().workbench.dirty());
    assert!(!copy.exists() && !note.exists());
    assert_eq!(lumenrail_bench::file::load(&path).unwrap().bench, h.state().workbench.bench);
}

#[test]
fn discarding_the_changes_removes_the_copy() {
    let dir = tempfile::tempdir().unwrap();
    let path = demo_file(dir.path());
    let data = dir.path().join("data");
    let mut h = window(opened(&path, &data, Duration::ZERO));
    h.state_mut().workbench.selected = Some(0);
    h.state_mut().workbench.nudge(5.0);
    h.run();
    let copy = h.state().workbench.autosave_path().unwrap();
    assert!(copy.exists());
    h.state_mut().workbench.replace(lumenrail_workbench::guard::Replacement::New);
    h.run();
    h.get_by_label("Discard changes").click();
    h.run();
    assert!(!copy.exists());
}

/// The copy a run that was killed would have left: the projector with its lens moved.
fn leave_copy(data: &Path, path: Option<&Path>) -> lumenrail_bench::model::Bench {
    let mut bench = lumenrail_bench::demos::find("one-lens-screen")
        .map(|d| d.text)
        .map(|t| lumenrail_bench::file::parse("demo", t).unwrap().bench)
        .unwrap();
    bench.parts[0].at_mm = 323.5;
    let stamp = path.map(|p| Stamp::of(p).unwrap());
    Recovery::for_process(data, GONE).write(&bench, path, stamp).unwrap();
    bench
}

#[test]
fn a_copy_left_by_a_run_that_died_is_offered_and_restored_as_unsaved() {
    let dir = tempfile::tempdir().unwrap();
    let path = demo_file(dir.path());
    let data = dir.path().join("data");
    let left = leave_copy(&data, Some(&path));
    let mut wb = Workbench::demo("one-lens-screen");
    wb.start_autosave(Recovery::in_dir(&data), Duration::from_secs(5));
    let mut h = window(wb);
    let _ = h.get_by_label(RECOVERY_TITLE);
    let _ = h.get_by_label_contains("less than a minute ago");
    let _ = h.get_by_label_contains(&format!("It belongs to the file {}", path.display()));
    h.get_by_label("Restore").click();
    h.run();
    assert!(h.query_by_label(RECOVERY_TITLE).is_none());
    let wb = &h.state().workbench;
    assert_eq!(wb.bench, left);
    assert!(wb.dirty());
    assert_eq!(wb.path.as_deref(), Some(path.as_path()));
    assert!(wb.title().starts_with("● projector.bench.ron"), "{}", wb.title());
    // The dead run's copy is gone; this run holds the bench now.
    assert!(!Recovery::for_process(&data, GONE).bench_path().exists());
    assert!(wb.autosave_path().unwrap().exists());
    // Save writes the original file, and the copy goes.
    h.key_press_modifiers(egui::Modifiers::COMMAND, Key::S);
    h.run();
    assert_eq!(lumenrail_bench::file::load(&path).unwrap().bench.parts[0].at_mm, 323.5);
    assert!(!h.state().workbench.dirty());
    assert!(!h.state().workbench.autosave_path().unwrap().exists());
}

#[test]
fn discard_deletes_the_copy_and_keeps_the_bench() {
    let dir = tempfile::tempdir().unwrap();
    let data = dir.path().join("data");
    leave_copy(&data, None);
    let mut wb = Workbench::demo("unit-relay");
    wb.start_autosave(Recovery::in_dir(&data), Duration::from_secs(5));
    let mut h = window(wb);
    let _ = h.get_by_label_contains("It had not been saved to a file yet.");
    h.get_by_label("Discard the copy").click();
    h.run();
    assert!(h.query_by_label(RECOVERY_TITLE).is_none());
    assert!(!Recovery::for_process(&data, GONE).note_path().exists());
    assert!(!h.state().workbench.dirty());
    assert_eq!(h.state().workbench.bench.title, Workbench::demo("unit-relay").bench.title);
    // Asked once: the next start finds nothing.
    assert!(Recovery::in_dir(&data).leftovers().is_empty());
}

#[test]
fn an_untitled_copy_is_restored_unsaved_without_a_file() {
    let dir = tempfile::tempdir().unwrap();
    let data = dir.path().join("data");
    let left = leave_copy(&data, None);
    let mut wb = Workbench::demo("unit-relay");
    wb.start_autosave(Recovery::in_dir(&data), Duration::from_secs(5));
    let mut h = window(wb);
    h.get_by_label("Restore").click();
    h.run();
    assert_eq!(h.state().workbench.bench, left);
    assert!(h.state().workbench.dirty());
    assert!(h.state().workbench.path.is_none());
}

#[test]
fn a_copy_of_a_running_workbench_is_not_offered() {
    let dir = tempfile::tempdir().unwrap();
    let data = dir.path().join("data");
    let bench = Workbench::demo("unit-relay").bench;
    // This very process is running: its copy is its own, not a leftover.
    Recovery::in_dir(&data).write(&bench, None, None).unwrap();
    Recovery::for_process(&data, 1).write(&bench, None, None).unwrap();
    assert!(Recovery::in_dir(&data).leftovers().is_empty());
}

#[test]
fn closing_with_nothing_unsaved_leaves_no_copy() {
    let dir = tempfile::tempdir().unwrap();
    let path = demo_file(dir.path());
    let data = dir.path().join("data");
    let mut h = window(opened(&path, &data, Duration::from_secs(5)));
    h.state_mut().workbench.selected = Some(0);
    h.state_mut().workbench.nudge(5.0);
    h.state_mut().workbench.autosave_now();
    let copy = h.state().workbench.autosave_path().unwrap();
    assert!(copy.exists());
    // Undone back to the file, and closed before the idle time is up: the copy goes with the window.
    h.key_press_modifiers(egui::Modifiers::COMMAND, Key::Z);
    h.run();
    assert!(!h.state().workbench.dirty());
    h.input_mut().viewports.entry(egui::ViewportId::ROOT).or_default().events.push(egui::ViewportEvent::Close);
    h.run();
    assert!(!copy.exists());
}
