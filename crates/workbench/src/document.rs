//! The document and its history: opening, saving, applying edits as undo steps, and recomputing the
//! bench's one evaluation (and the rail scene projected from it) after every change.

use crate::scene::Scene;
use crate::{Workbench, plots, rail, sheet};
use lumenrail_bench::demos;
use lumenrail_bench::evaluation::Evaluation;
use lumenrail_bench::file;
use lumenrail_bench::model::{Bench, ObjectSpec, Part, PartKind};
use std::path::PathBuf;

/// One change to the bench document.
#[derive(Debug, Clone, PartialEq)]
pub enum Edit {
    /// Move part `index` to a rail position.
    Move {
        /// Index in `bench.parts`.
        index: usize,
        /// New rail position, mm.
        at_mm: f64,
    },
    /// Replace part `index`.
    Replace {
        /// Index in `bench.parts`.
        index: usize,
        /// The new part.
        part: Part,
    },
    /// Add a part.
    Add(Part),
    /// Remove part `index`.
    Remove(usize),
    /// Change what is not a part: title, rail length, object and wavelengths (the parts stay).
    Settings(Box<BenchSettings>),
    /// Replace the bench's aims.
    Aims(Vec<lumenrail_bench::model::Aim>),
    /// Add several parts at once (an arrangement).
    AddParts(Vec<Part>),
}

/// Everything on a bench that is not a part: what the bench settings sheet edits.
#[derive(Debug, Clone, PartialEq)]
pub struct BenchSettings {
    /// The title.
    pub title: String,
    /// Usable rail length, mm.
    pub rail_length_mm: f64,
    /// The object.
    pub object: ObjectSpec,
    /// Wavelengths, nm.
    pub wavelengths_nm: Vec<f64>,
    /// Index of the primary wavelength.
    pub primary_wavelength: usize,
    /// The wavelengths' relative weights (empty: equal).
    pub wavelength_weights: Vec<f64>,
}

impl BenchSettings {
    /// The settings of `bench`.
    pub fn of(bench: &Bench) -> BenchSettings {
        BenchSettings {
            title: bench.title.clone(),
            rail_length_mm: bench.rail_length_mm,
            object: bench.object,
            wavelengths_nm: bench.wavelengths_nm.clone(),
            primary_wavelength: bench.primary_wavelength,
            wavelength_weights: bench.wavelength_weights.clone(),
        }
    }

    /// `bench` with these settings.
    pub fn applied_to(&self, bench: &Bench) -> Bench {
        Bench {
            title: self.title.clone(),
            rail_length_mm: self.rail_length_mm,
            object: self.object,
            wavelengths_nm: self.wavelengths_nm.clone(),
            primary_wavelength: self.primary_wavelength,
            wavelength_weights: self.wavelength_weights.clone(),
            ..bench.clone()
        }
    }
}

/// Undo and redo stacks of whole-bench snapshots (a bench is a few hundred bytes).
#[derive(Debug, Clone, Default)]
pub(crate) struct History {
    pub(crate) undo: Vec<Bench>,
    pub(crate) redo: Vec<Bench>,
}

impl Workbench {
    /// A workbench on `bench`.
    pub fn new(bench: Bench, path: Option<PathBuf>) -> Workbench {
        let evaluation = Evaluation::of(&bench);
        let scene = Scene::of(&evaluation);
        Workbench {
            saved: Some(bench.clone()),
            bench,
            path,
            history: History::default(),
            merge_key: None,
            evaluation,
            scene,
            selected: None,
            snap_mm: 1.0,
            exaggeration: 0.0,
            locked: Vec::new(),
            view: rail::RailView::default(),
            sheet: sheet::SheetState::default(),
            status: String::new(),
            show_safety: false,
            show_keys: false,
            path_prompt: None,
            drawing_size: "1200x520".into(),
            lab_choice: (lumenrail_bench::lab::Lab::Displacement, lumenrail_export::lab::Paper::A4),
            drawer: crate::drawer::DrawerPanel::default(),
            arranger: crate::arranger::ArrangerPanel::default(),
            left: crate::LeftPage::default(),
            mount: crate::mount::MountWindow::default(),
            tolerance: crate::tolerance::ToleranceWindow::default(),
            inch: false,
            revision: 0,
            recent: Vec::new(),
            views: plots::ViewsPanel::default(),
            unsaved_question: None,
            after_save: None,
            close_now: false,
            typing: false,
            show_start: false,
            settings: crate::settings::SettingsSheet::default(),
            on_disk: None,
            disk_conflict: None,
            save_failure: None,
            autosave: None,
            recovery_offer: None,
            background: Default::default(),
        }
    }

    /// A workbench on a built-in demo.
    pub fn demo(name: &str) -> Workbench {
        let demo = demos::find(name).or_else(|| demos::find(demos::DEFAULT)).expect("the default demo exists");
        let bench = file::parse(demo.name, demo.text).expect("demos are valid").bench;
        let mut wb = Workbench::new(bench, None);
        wb.status = format!("demo \"{}\": {}", demo.name, demo.summary());
        wb
    }

    /// Replaces the document, keeping the view preferences (snap, exaggeration, recent files) and the
    /// autosave, whose copy of the old document goes (it was saved, or its changes discarded).
    pub(crate) fn replace_document(&mut self, next: Workbench) {
        self.autosave_clear();
        let (autosave, offer) = (self.autosave.take(), self.recovery_offer.take());
        let (snap_mm, exaggeration, recent) = (self.snap_mm, self.exaggeration, std::mem::take(&mut self.recent));
        let (shown, tab, grid) = (self.views.shown, self.views.tab, self.views.request.grid);
        let (drawer, left) = (std::mem::take(&mut self.drawer), self.left);
        *self = next;
        (self.drawer, self.left) = (drawer, left);
        (self.snap_mm, self.exaggeration, self.recent) = (snap_mm, exaggeration, recent);
        (self.views.shown, self.views.tab, self.views.request.grid) = (shown, tab, grid);
        (self.autosave, self.recovery_offer) = (autosave, offer);
    }

    /// Opens a bench file; on failure the current bench stays and the status says why.
    pub fn open(&mut self, path: PathBuf) -> bool {
        match file::load(&path) {
            Ok(loaded) => {
                self.replace_document(Workbench::new(loaded.bench, Some(path.clone())));
                self.on_disk = crate::disk::Stamp::of(&path).ok();
                self.status = format!("opened {}", path.display());
                if let Some(w) = loaded.warnings.first() {
                    self.status = w.to_string();
                }
                true
            }
            Err(e) => {
                self.status = e.to_string().lines().next().unwrap_or("").to_string();
                false
            }
        }
    }

    /// Saves to `path` (atomically), whatever is there now; on success it becomes the bench's path and
    /// the autosave copy goes. On failure the status line and a dialog say why, and the bench stays as
    /// it was, unsaved.
    pub fn save_to(&mut self, path: PathBuf) -> bool {
        match file::save(&self.bench, &path) {
            Ok(()) => {
                self.status = format!("saved {}", path.display());
                self.saved = Some(self.bench.clone());
                self.on_disk = crate::disk::Stamp::of(&path).ok();
                self.path = Some(path);
                self.autosave_clear();
                true
            }
            Err(e) => {
                let words = crate::disk::failure_words(&e);
                self.status.clone_from(&words);
                self.save_failure = Some(words);
                false
            }
        }
    }

    /// Whether there are unsaved changes.
    pub fn dirty(&self) -> bool {
        self.saved.as_ref() != Some(&self.bench)
    }

    /// The window title: file name (or the bench's title) and an unsaved mark.
    pub fn title(&self) -> String {
        let name = self
            .path
            .as_ref()
            .and_then(|p| p.file_name())
            .map_or_else(|| self.bench.title.clone(), |n| n.to_string_lossy().into_owned());
        format!("{}{} — Lumenrail", if self.dirty() { "● " } else { "" }, name)
    }

    /// Applies an edit as one undo step (or merged into the last one when `merge` names the same gesture).
    pub fn apply(&mut self, edit: Edit, merge: Option<&str>) {
        let joins = merge.is_some() && merge.map(str::to_string) == self.merge_key;
        if !joins {
            self.history.undo.push(self.bench.clone());
            self.history.redo.clear();
        }
        self.merge_key = merge.map(str::to_string);
        match edit {
            Edit::Move { index, at_mm } => self.bench.parts[index].at_mm = at_mm,
            Edit::Replace { index, part } => self.bench.parts[index] = part,
            Edit::Add(part) => {
                self.bench.parts.push(part);
                self.selected = Some(self.bench.parts.len() - 1);
            }
            Edit::Remove(index) => {
                self.bench.parts.remove(index);
                self.selected = None;
            }
            Edit::Settings(settings) => self.bench = settings.applied_to(&self.bench),
            Edit::Aims(aims) => self.bench.aims = aims,
            Edit::AddParts(parts) => {
                self.bench.parts.extend(parts);
                self.selected = None;
            }
        }
        self.refresh();
    }

    /// Ends a merged gesture, so that the next edit starts a new undo step.
    pub fn end_gesture(&mut self) {
        self.merge_key = None;
    }

    /// Undoes the last edit.
    pub fn undo(&mut self) {
        if let Some(b) = self.history.undo.pop() {
            self.history.redo.push(std::mem::replace(&mut self.bench, b));
            self.after_history();
        }
    }

    /// Redoes the last undone edit.
    pub fn redo(&mut self) {
        if let Some(b) = self.history.redo.pop() {
            self.history.undo.push(std::mem::replace(&mut self.bench, b));
            self.after_history();
        }
    }

    fn after_history(&mut self) {
        self.merge_key = None;
        if self.selected.is_some_and(|i| i >= self.bench.parts.len()) {
            self.selected = None;
        }
        self.sheet = sheet::SheetState::default();
        self.refresh();
    }

    /// Recomputes the report and the scene from the bench.
    pub fn refresh(&mut self) {
        self.revision += 1;
        self.evaluation = self.evaluate();
        self.scene = Scene::of(&self.evaluation);
        // The idle time counts from the edit's end, after its evaluation (which a loaded machine can make
        // long).
        self.autosave_touch();
    }

    /// Whether part `index` is locked.
    pub fn is_locked(&self, index: usize) -> bool {
        self.locked.contains(&self.bench.parts[index].name)
    }

    /// A fresh name for a new part of this kind word.
    pub(crate) fn fresh_name(&self, word: &str) -> String {
        (1..).map(|k| format!("{word} {k}")).find(|n| self.bench.part(n).is_none()).expect("names are endless")
    }

    /// A new part of the kind `word` in the middle of the rail.
    pub fn new_part(&self, word: &str) -> Part {
        use lumenrail_bench::model::{MaterialSpec, SurfaceSpec};
        let kind = match word {
            "thin lens" => PartKind::ThinLens { focal_mm: 100.0, diameter_mm: 25.4 },
            "singlet" => PartKind::Singlet {
                front: SurfaceSpec::Radius(51.7),
                back: SurfaceSpec::Flat,
                thickness_mm: 4.0,
                diameter_mm: 25.4,
                material: MaterialSpec::Named("517642".into()),
            },
            "doublet" => PartKind::Doublet {
                front: SurfaceSpec::Radius(44.77),
                middle: SurfaceSpec::Radius(-44.77),
                back: SurfaceSpec::Radius(-821.6),
                thickness1_mm: 6.0,
                thickness2_mm: 3.0,
                material1: MaterialSpec::Named("517642".into()),
                material2: MaterialSpec::Named("620364".into()),
                diameter_mm: 25.0,
            },
            "mirror" => PartKind::Mirror { surface: SurfaceSpec::Flat, diameter_mm: 25.4 },
            "iris" => PartKind::Iris { diameter_mm: 10.0 },
            _ => PartKind::Screen { diameter_mm: 50.0 },
        };
        let word = kind.word();
        Part {
            name: self.fresh_name(word),
            at_mm: (0.5 * self.bench.rail_length_mm).round(),
            kind,
            carrier_mm: None,
            from_drawer: None,
            coatings: Vec::new(),
        }
    }

    /// Moves screen `index` to the best-focus plane of the report.
    pub fn move_screen_to_best_focus(&mut self, index: usize) {
        let name = &self.bench.parts[index].name;
        if let Some(z) =
            self.evaluation.report.screens.iter().find(|s| &s.part == name).and_then(|s| s.best_focus_at_mm)
        {
            self.apply(Edit::Move { index, at_mm: z }, None);
        }
    }

    /// Nudges the selected part by `steps` snap steps (1 mm when snapping is off).
    pub fn nudge(&mut self, steps: f64) {
        let Some(i) = self.selected else { return };
        if self.is_locked(i) {
            self.status = format!("\"{}\" is locked", self.bench.parts[i].name);
            return;
        }
        let step = if self.snap_mm > 0.0 { self.snap_mm } else { 1.0 };
        let at = self.bench.parts[i].at_mm + steps * step;
        self.apply(Edit::Move { index: i, at_mm: at }, Some("nudge"));
        self.status = format!(
            "nudged \"{}\" {} mm to {} mm (step {} mm: the snap step, or 1 mm with snap off)",
            self.bench.parts[i].name,
            lumenrail_bench::report::fixed(steps * step, 3),
            lumenrail_bench::report::fixed(at, 3),
            lumenrail_bench::report::fixed(step, 3)
        );
    }
}
