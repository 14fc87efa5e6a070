//! Saves that respect the file: the workbench remembers the bench file's size, modification time and a hash
//! of its bytes when it opens or saves it, and before saving over it checks that it is still what it was.
//! A file changed behind its back is not overwritten silently: the user chooses Reload (after a second
//! question, as it throws away the changes here), Overwrite, or Save elsewhere. A save that fails (a
//! read-only file or folder, a full disk, a missing folder) says why in the status line and in a dialog, and
//! the bench stays open with its unsaved mark: nothing is lost.

use crate::Workbench;
use crate::guard::Replacement;
use serde::{Deserialize, Serialize};
use std::path::{Path, PathBuf};
use std::time::SystemTime;

/// What the workbench knows of a file's state on disk: enough to tell that someone else changed it.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub struct Stamp {
    /// Its size, bytes.
    pub len: u64,
    /// Its modification time, if the file system keeps one.
    pub modified: Option<SystemTime>,
    /// FNV-1a (64 bits) of its bytes: stable from one run and one build to the next, and enough to tell an
    /// edited file from the same one (nobody is trying to forge a match here).
    pub hash: u64,
}

impl Stamp {
    /// The stamp of the file at `path` now (reads the whole file; bench files are small).
    pub fn of(path: &Path) -> std::io::Result<Stamp> {
        let bytes = std::fs::read(path)?;
        let modified = std::fs::metadata(path)?.modified().ok();
        Ok(Stamp { len: bytes.len() as u64, modified, hash: fnv1a(&bytes) })
    }

    /// Whether the file's contents differ from `self`'s (a file only touched, same bytes, is the same).
    pub fn differs(&self, now: &Stamp) -> bool {
        self.len != now.len || self.hash != now.hash
    }
}

/// FNV-1a, 64 bits, of `bytes`.
fn fnv1a(bytes: &[u8]) -> u64 {
    bytes.iter().fold(0xcbf2_9ce4_8422_2325_u64, |h, &b| (h ^ u64::from(b)).wrapping_mul(0x0100_0000_01b3))
}

/// The title of the question asked when the bench's file changed on disk.
pub const CHANGED_TITLE: &str = "The file changed on disk";
/// The title of the dialog shown when a save failed.
pub const NOT_SAVED_TITLE: &str = "Not saved";
/// What the not-saved dialog adds after the reason.
pub const NOTHING_LOST: &str = "Your bench is still open here with all its changes, marked unsaved: nothing is lost. Save it elsewhere with Save as.";
/// The fixed texts of these dialogs (buttons and headings), for the glyph check.
pub const TEXTS: &[&str] = &[
    CHANGED_TITLE,
    NOT_SAVED_TITLE,
    NOTHING_LOST,
    "Reload from disk",
    "Overwrite",
    "Save elsewhere…",
    "Cancel",
    "Reload and discard my changes",
    "Back",
    "OK",
    "Saving now would replace what is there now with this bench.",
];

/// A save held back because the file changed on disk, waiting for the user's choice.
#[derive(Debug, Clone, PartialEq)]
pub struct Conflict {
    /// The bench's file.
    pub path: PathBuf,
    /// What goes ahead once the bench is saved (an action that asked Save / Discard / Cancel).
    pub after: Option<Replacement>,
    /// Whether the user chose Reload and is now asked to confirm it.
    pub confirm_reload: bool,
}

/// Why a save failed, in words for a person, from the error's kind.
pub fn failure_words(e: &lumenrail_bench::file::SaveError) -> String {
    use std::io::ErrorKind as K;
    let why = match e.source.kind() {
        K::PermissionDenied | K::ReadOnlyFilesystem => {
            "the file or its folder is read-only, or you may not write there"
        }
        K::StorageFull | K::QuotaExceeded | K::FileTooLarge => "the disk is full",
        K::NotFound | K::NotADirectory => "its folder does not exist",
        K::IsADirectory => "a folder has that name",
        _ => "the system refused the write",
    };
    format!("not saved: {} ({why}: {})", e.path.display(), e.source)
}

impl Workbench {
    /// The question about the bench's file having changed on disk, when one is waiting.
    pub fn disk_conflict(&self) -> Option<&Conflict> {
        self.disk_conflict.as_ref()
    }

    /// Why the last save failed, while its dialog is open.
    pub fn save_failure(&self) -> Option<&str> {
        self.save_failure.as_deref()
    }

    /// Whether `path` is the bench's own file and its contents changed since it was opened or last saved.
    pub fn changed_on_disk(&self, path: &Path) -> bool {
        if self.path.as_deref() != Some(path) {
            return false;
        }
        let Some(known) = &self.on_disk else { return false };
        // A file that is gone, or cannot be read, has nothing of someone else's to keep: the save says
        // whatever goes wrong.
        Stamp::of(path).is_ok_and(|now| known.differs(&now))
    }

    /// Saves to `path`, unless it is the bench's own file and it changed on disk since it was opened or
    /// last saved: then it asks Reload / Overwrite / Save elsewhere and writes nothing. Once saved, `after`
    /// goes ahead. Returns whether the bench was saved now.
    pub(crate) fn save_over(&mut self, path: PathBuf, after: Option<Replacement>) -> bool {
        if self.changed_on_disk(&path) {
            self.status = format!(
                "not saved: {} changed on disk since it was opened or saved here; choose what to do",
                path.display()
            );
            self.disk_conflict = Some(Conflict { path, after, confirm_reload: false });
            return false;
        }
        if self.save_to(path) {
            if let Some(r) = after {
                self.go_ahead(r);
            }
            true
        } else {
            // Kept for Save elsewhere from the not-saved dialog (or a typed path tried again).
            self.after_save = after;
            false
        }
    }

    /// The file-changed question and the not-saved dialog, when one is open.
    pub(crate) fn disk_ui(&mut self, ctx: &egui::Context) {
        self.conflict_ui(ctx);
        let Some(message) = self.save_failure.clone() else { return };
        let mut close = false;
        let mut elsewhere = false;
        egui::Modal::new(egui::Id::unique("save-failed")).show(ctx, |ui| {
            ui.set_max_width(460.0);
            ui.heading(NOT_SAVED_TITLE);
            ui.label(&message);
            ui.label(NOTHING_LOST);
            ui.horizontal(|ui| {
                elsewhere = ui.button("Save elsewhere…").clicked();
                close = ui.button("OK").clicked();
            });
        });
        if close || elsewhere {
            self.save_failure = None;
        }
        if close {
            // The action that waited for the save (closing, opening another bench) does not go ahead.
            self.after_save = None;
        }
        if elsewhere {
            let after = self.after_save.take();
            self.save_elsewhere(after);
        }
    }

    fn conflict_ui(&mut self, ctx: &egui::Context) {
        let Some(c) = self.disk_conflict.clone() else { return };
        enum Choice {
            Reload,
            ReloadNow,
            Overwrite,
            Elsewhere,
            Back,
            Cancel,
        }
        let mut choice = None;
        egui::Modal::new(egui::Id::unique("file-changed")).show(ctx, |ui| {
            ui.set_max_width(460.0);
            ui.heading(CHANGED_TITLE);
            if c.confirm_reload {
                ui.label(format!(
                    "Reload {} as it is on disk now, and lose the changes to \"{}\" that are not saved?",
                    c.path.display(),
                    self.bench.title
                ));
                ui.horizontal(|ui| {
                    if ui.button("Reload and discard my changes").clicked() {
                        choice = Some(Choice::ReloadNow);
                    }
                    if ui.button("Back").clicked() {
                        choice = Some(Choice::Back);
                    }
                });
            } else {
                ui.label(format!(
                    "{} was changed by someone or something else since it was opened or saved here.",
                    c.path.display()
                ));
                ui.label("Saving now would replace what is there now with this bench.");
                ui.horizontal(|ui| {
                    if ui.button("Reload from disk").clicked() {
                        choice = Some(Choice::Reload);
                    }
                    if ui.button("Overwrite").clicked() {
                        choice = Some(Choice::Overwrite);
                    }
                    if ui.button("Save elsewhere…").clicked() {
                        choice = Some(Choice::Elsewhere);
                    }
                    if ui.button("Cancel").clicked() {
                        choice = Some(Choice::Cancel);
                    }
                });
            }
        });
        match choice {
            None => {}
            Some(Choice::Reload) => {
                if let Some(c) = &mut self.disk_conflict {
                    c.confirm_reload = true;
                }
            }
            Some(Choice::Back) => {
                if let Some(c) = &mut self.disk_conflict {
                    c.confirm_reload = false;
                }
            }
            Some(Choice::ReloadNow) => {
                // What waited for the save does not go ahead: the user chose the file's version instead.
                self.disk_conflict = None;
                self.open(c.path);
            }
            Some(Choice::Overwrite) => {
                self.disk_conflict = None;
                if self.save_to(c.path)
                    && let Some(r) = c.after
                {
                    self.go_ahead(r);
                }
            }
            Some(Choice::Elsewhere) => {
                self.disk_conflict = None;
                self.save_elsewhere(c.after);
            }
            Some(Choice::Cancel) => {
                self.disk_conflict = None;
                self.status = format!("not saved: {} is as the other program left it", c.path.display());
            }
        }
    }
}
