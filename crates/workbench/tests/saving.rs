//! Saves that respect the file (egui_kittest, as a person presses Ctrl+S and clicks): a file changed
//! behind the workbench's back is not overwritten until the user chooses Reload, Overwrite or Save
//! elsewhere; a save that fails says why, and the bench stays open with its unsaved changes.
#![allow(clippy::float_cmp)] // Positions are copied and saved, never computed: they must come back bit for bit.

use egui::Key;
use egui_kittest::Harness;
use egui_kittest::kittest::Queryable as _;
use lumenrail_workbench::Workbench;
use lumenrail_workbench::disk::{CHANGED_TITLE, NOT_SAVED_TITLE, NOTHING_LOST};
use std::path::{Path, PathBuf};

const OUTSIDE_TITLE: &str = "Changed by another program";

fn demo_text() -> &'static str {
    lumenrail_bench::demos::find("one-lens-screen").unwrap().text
}

fn harness(wb: Workbench) -> Harness<'static, Workbench> {
    let mut h =
        Harness::builder().with_size(egui::vec2(1400.0, 900.0)).build_ui_state(|ui, wb: &mut Workbench| wb.ui(ui), wb);
    h.run();
    h
}

/// The projector opened from `dir`, its lens nudged (unsaved), and the file then changed on disk.
fn changed_behind(dir: &Path) -> (Harness<'static, Workbench>, PathBuf, Vec<u8>) {
    let path = dir.join("projector.bench.ron");
    std::fs::write(&path, demo_text()).unwrap();
    let mut wb = Workbench::demo("one-lens-screen");
    assert!(wb.open(path.clone()));
    let mut h = harness(wb);
    h.state_mut().selected = Some(0);
    h.state_mut().nudge(5.0);
    h.run();
    let outside = demo_text().replace("Slide projector on the physics-lab rail", OUTSIDE_TITLE);
    std::fs::write(&path, &outside).unwrap();
    (h, path, outside.into_bytes())
}

fn press_save(h: &mut Harness<'static, Workbench>) {
    h.key_press_modifiers(egui::Modifiers::COMMAND, Key::S);
    h.run();
}

#[test]
fn a_file_changed_on_disk_is_not_overwritten_until_the_user_chooses() {
    let dir = tempfile::tempdir().unwrap();
    let (mut h, path, outside) = changed_behind(dir.path());
    press_save(&mut h);
    let _ = h.get_by_label(CHANGED_TITLE);
    assert!(h.state().disk_conflict().is_some());
    assert_eq!(std::fs::read(&path).unwrap(), outside, "written before the user chose");
    assert!(h.state().dirty());
    assert!(h.state().status.contains("changed on disk"), "{}", h.state().status);
    // Cancel: still nothing written, still unsaved.
    h.get_by_label("Cancel").click();
    h.run();
    assert!(h.query_by_label(CHANGED_TITLE).is_none());
    assert_eq!(std::fs::read(&path).unwrap(), outside);
    assert!(h.state().dirty());
    // Asked again, Overwrite writes this bench.
    press_save(&mut h);
    h.get_by_label("Overwrite").click();
    h.run();
    assert!(!h.state().dirty());
    assert_eq!(lumenrail_bench::file::load(&path).unwrap().bench, h.state().bench);
    // Now the file is as saved here: the next save asks nothing.
    h.state_mut().nudge(1.0);
    press_save(&mut h);
    assert!(h.query_by_label(CHANGED_TITLE).is_none());
    assert!(!h.state().dirty());
}

#[test]
fn reload_asks_again_then_takes_the_file_from_disk() {
    let dir = tempfile::tempdir().unwrap();
    let (mut h, path, outside) = changed_behind(dir.path());
    let ours = h.state().bench.clone();
    press_save(&mut h);
    h.get_by_label("Reload from disk").click();
    h.run();
    let _ = h.get_by_label_contains("lose the changes");
    // Back: the first question again, nothing lost.
    h.get_by_label("Back").click();
    h.run();
    assert_eq!(h.state().bench, ours);
    h.get_by_label("Reload from disk").click();
    h.run();
    h.get_by_label("Reload and discard my changes").click();
    h.run();
    assert!(h.query_by_label(CHANGED_TITLE).is_none());
    assert_eq!(h.state().bench.title, OUTSIDE_TITLE);
    assert!(!h.state().dirty());
    assert_eq!(std::fs::read(&path).unwrap(), outside);
}

#[test]
fn save_elsewhere_asks_for_another_path_and_leaves_the_file() {
    let dir = tempfile::tempdir().unwrap();
    let (mut h, path, outside) = changed_behind(dir.path());
    press_save(&mut h);
    h.get_by_label("Save elsewhere…").click();
    h.run();
    // No desktop dialog here: the typed Save As prompt opens.
    let _ = h.get_by_label("Path of the .bench.ron file:");
    assert_eq!(std::fs::read(&path).unwrap(), outside);
    assert!(h.state().dirty());
}

#[test]
fn a_file_only_touched_is_saved_without_asking() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("projector.bench.ron");
    std::fs::write(&path, demo_text()).unwrap();
    let mut wb = Workbench::demo("one-lens-screen");
    assert!(wb.open(path.clone()));
    let mut h = harness(wb);
    h.state_mut().selected = Some(0);
    h.state_mut().nudge(5.0);
    std::thread::sleep(std::time::Duration::from_millis(20));
    std::fs::write(&path, demo_text()).unwrap(); // the same bytes, a new modification time
    press_save(&mut h);
    assert!(h.query_by_label(CHANGED_TITLE).is_none());
    assert!(!h.state().dirty());
}

/// What a failed save must leave: a message in the status line and a dialog, the bench as it was with its
/// unsaved mark.
fn assert_kept_unsaved(h: &Harness<'static, Workbench>, edited: &lumenrail_bench::model::Bench, why: &str) {
    let status = &h.state().status;
    assert!(status.starts_with("not saved:") && status.contains(why), "{status}");
    let _ = h.get_by_label(NOT_SAVED_TITLE);
    let _ = h.get_by_label(NOTHING_LOST);
    // The reason is in the status line and in the dialog.
    assert_eq!(h.query_all_by_label_contains(why).count(), 2);
    assert!(h.state().dirty());
    assert!(h.state().title().starts_with("● "));
    assert_eq!(&h.state().bench, edited);
}

#[test]
fn a_save_into_a_folder_that_cannot_exist_says_why_and_keeps_the_bench_unsaved() {
    let dir = tempfile::tempdir().unwrap();
    let not_a_folder = dir.path().join("plain-file");
    std::fs::write(&not_a_folder, "not a folder").unwrap();
    let bench = Workbench::demo("one-lens-screen").bench;
    let mut h = harness(Workbench::new(bench, Some(not_a_folder.join("projector.bench.ron"))));
    h.state_mut().selected = Some(0);
    h.state_mut().nudge(5.0);
    h.run();
    let edited = h.state().bench.clone();
    press_save(&mut h);
    assert_kept_unsaved(&h, &edited, "its folder does not exist");
    h.get_by_label("OK").click();
    h.run();
    assert!(h.query_by_label(NOT_SAVED_TITLE).is_none());
    assert!(h.state().dirty());
}

#[cfg(unix)]
#[test]
fn a_read_only_folder_says_why_and_keeps_the_bench_unsaved() {
    use std::os::unix::fs::PermissionsExt as _;
    let dir = tempfile::tempdir().unwrap();
    let folder = dir.path().join("read-only");
    std::fs::create_dir(&folder).unwrap();
    let path = folder.join("projector.bench.ron");
    std::fs::write(&path, demo_text()).unwrap();
    let mut wb = Workbench::demo("one-lens-screen");
    assert!(wb.open(path.clone()));
    let mut h = harness(wb);
    h.state_mut().selected = Some(0);
    h.state_mut().nudge(5.0);
    h.run();
    let edited = h.state().bench.clone();
    std::fs::set_permissions(&folder, std::fs::Permissions::from_mode(0o555)).unwrap();
    let probe = folder.join("probe");
    let chmod_works = std::fs::write(&probe, b"").is_err();
    let _ = std::fs::remove_file(&probe);
    if chmod_works {
        press_save(&mut h);
        assert_kept_unsaved(&h, &edited, "read-only");
        assert_eq!(std::fs::read_to_string(&path).unwrap(), demo_text(), "the old file is as it was");
    } else {
        eprintln!("skipped the read-only assertion: this user (root?) writes into a 0o555 folder anyway");
    }
    std::fs::set_permissions(&folder, std::fs::Permissions::from_mode(0o755)).unwrap();
}
