//! Nothing thrown away without asking: every action that would replace the bench (New, Open, Open recent,
//! a demo, a dropped file, closing the window) asks Save / Discard / Cancel while the bench has unsaved
//! changes. Saving an untitled bench from the question opens Save As, and the action goes ahead once the
//! bench is saved.

use crate::{PathPrompt, Workbench};
use lumenrail_bench::model::{Bench, ObjectSpec};
use std::path::PathBuf;

/// What would replace the bench in the workbench.
#[derive(Debug, Clone, PartialEq)]
pub enum Replacement {
    /// A new, empty bench.
    New,
    /// A bench chosen in the desktop's file dialog.
    OpenDialog,
    /// The bench file at a path (typed, recent or dropped).
    Open(PathBuf),
    /// A built-in demo, by name.
    Demo(String),
    /// Closing the window.
    Close,
}

impl Replacement {
    fn words(&self) -> String {
        match self {
            Replacement::New => "start a new bench".into(),
            Replacement::OpenDialog => "open another bench".into(),
            Replacement::Open(p) => format!("open {}", p.display()),
            Replacement::Demo(name) => format!("open the demo \"{name}\""),
            Replacement::Close => "close the window".into(),
        }
    }
}

impl Workbench {
    /// Replaces the bench as `r` says, first asking Save / Discard / Cancel if it has unsaved changes.
    pub fn replace(&mut self, r: Replacement) {
        if self.dirty() {
            self.unsaved_question = Some(r);
        } else {
            self.go_ahead(r);
        }
    }

    /// The replacement waiting for the user's answer about unsaved changes, if any.
    pub fn unsaved_question(&self) -> Option<&Replacement> {
        self.unsaved_question.as_ref()
    }

    /// Whether the window may close now (the user has answered, or there was nothing to save).
    pub fn take_close(&mut self) -> bool {
        std::mem::take(&mut self.close_now)
    }

    pub(crate) fn go_ahead(&mut self, r: Replacement) {
        match r {
            Replacement::New => {
                let bench = Bench {
                    format: 1,
                    title: "New bench".into(),
                    rail_length_mm: 1000.0,
                    wavelengths_nm: vec![486.1327, 587.5618, 656.2725],
                    primary_wavelength: 1,
                    wavelength_weights: Vec::new(),
                    object: ObjectSpec::Point { at_mm: 0.0, height_mm: 5.0 },
                    parts: Vec::new(),
                    aims: Vec::new(),
                    laser: None,
                    tolerances: Vec::new(),
                };
                self.replace_document(Workbench::new(bench, None));
            }
            Replacement::OpenDialog => {
                match rfd::FileDialog::new().add_filter("bench", &["ron"]).set_title("Open bench").pick_file() {
                    Some(p) => {
                        self.open(p);
                    }
                    None => self.status = crate::actions::NO_OPEN_DIALOG.into(),
                }
            }
            Replacement::Open(p) => {
                self.open(p);
            }
            Replacement::Demo(name) => self.replace_document(Workbench::demo(&name)),
            Replacement::Close => self.close_now = true,
        }
    }

    /// Saves the bench, through Save As when it has no file yet; then `after` goes ahead. Returns whether
    /// the bench was saved at once (Save As by a typed path finishes later, in its prompt).
    pub(crate) fn save_then(&mut self, after: Option<Replacement>) -> bool {
        match self.path.clone() {
            Some(p) => self.save_over(p, after),
            None => self.save_elsewhere(after),
        }
    }

    /// Saves under a new name: the desktop's Save As dialog, else a typed path; then `after` goes ahead.
    /// Returns whether the bench was saved at once.
    pub(crate) fn save_elsewhere(&mut self, after: Option<Replacement>) -> bool {
        let name = self
            .path
            .as_ref()
            .and_then(|p| p.file_name())
            .map_or_else(|| "bench.bench.ron".into(), |n| n.to_string_lossy().into_owned());
        let dialog =
            rfd::FileDialog::new().add_filter("bench", &["ron"]).set_file_name(&name).set_title("Save bench as");
        match dialog.save_file() {
            Some(p) => self.save_over(p, after),
            None => {
                // No desktop dialog (or it was cancelled): ask for a path, and go ahead once saved.
                self.after_save = after;
                let current = self.path.as_ref().map_or(name, |p| p.display().to_string());
                self.path_prompt = Some((PathPrompt::SaveAs, current));
                false
            }
        }
    }

    /// The Save / Discard / Cancel question, when one is waiting.
    pub(crate) fn unsaved_ui(&mut self, ctx: &egui::Context) {
        let Some(r) = self.unsaved_question.clone() else { return };
        let mut answer = None;
        egui::Modal::new(egui::Id::unique("unsaved-question")).show(ctx, |ui| {
            ui.set_max_width(420.0);
            ui.heading("Unsaved changes");
            ui.label(format!(
                "\"{}\" has changes that are not saved. Save them before you {}?",
                self.bench.title,
                r.words()
            ));
            ui.horizontal(|ui| {
                if ui.button("Save").clicked() {
                    answer = Some(Answer::Save);
                }
                if ui.button("Discard changes").clicked() {
                    answer = Some(Answer::Discard);
                }
                if ui.button("Cancel").clicked() {
                    answer = Some(Answer::Cancel);
                }
            });
        });
        match answer {
            Some(Answer::Save) => {
                self.unsaved_question = None;
                self.save_then(Some(r));
            }
            Some(Answer::Discard) => {
                self.unsaved_question = None;
                self.autosave_clear();
                self.go_ahead(r);
            }
            Some(Answer::Cancel) => self.unsaved_question = None,
            None => {}
        }
    }
}

enum Answer {
    Save,
    Discard,
    Cancel,
}
