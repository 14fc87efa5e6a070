//! The Lumenrail desktop workbench: the rail view (the bench drawn to scale, where parts are dragged), the
//! part sheet, the readout and the edit history.
//!
//! [`Workbench::ui`] draws everything into an `egui::Ui`, so the whole workbench runs headless in tests;
//! [`app::WorkbenchApp`] wraps it for a window. Every edit is an [`Edit`] applied to the bench document;
//! the report and the drawn rays are recomputed from the document, never patched by hand.

pub mod app;
pub mod plots;
mod rail;
pub mod scene;
mod sheet;

use lumenrail_bench::demos;
use lumenrail_bench::evaluation::Evaluation;
use lumenrail_bench::file;
use lumenrail_bench::model::{Bench, ObjectSpec, Part, PartKind};
use lumenrail_bench::report::fixed;
use scene::Scene;
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
}

/// Undo and redo stacks of whole-bench snapshots (a bench is a few hundred bytes).
#[derive(Debug, Clone, Default)]
struct History {
    undo: Vec<Bench>,
    redo: Vec<Bench>,
}

/// Snap steps offered for dragging and nudging, mm (0 = off).
pub const SNAP_STEPS_MM: [f64; 5] = [0.0, 0.5, 1.0, 5.0, 10.0];

/// The workbench: the document, its report and scene, and the view state.
pub struct Workbench {
    /// The bench being edited.
    pub bench: Bench,
    /// Where it was opened from or last saved to.
    pub path: Option<PathBuf>,
    saved: Bench,
    history: History,
    /// Key of the last merged edit (a drag, or typing in one field): later edits with the same key join its
    /// undo step.
    merge_key: Option<String>,
    /// The one evaluation of the current bench: its report, views and rail drawing are projections of it.
    pub evaluation: Evaluation,
    /// What the rail view draws.
    pub scene: Scene,
    /// The selected part (index into `bench.parts`).
    pub selected: Option<usize>,
    /// Snap step for drags and nudges, mm (0 = off).
    pub snap_mm: f64,
    /// Vertical exaggeration of heights in the rail view.
    pub exaggeration: f32,
    /// Names of locked parts (drags leave them).
    pub locked: Vec<String>,
    pub(crate) view: rail::RailView,
    pub(crate) sheet: sheet::SheetState,
    /// A one-line message for the status bar.
    pub status: String,
    pub(crate) show_safety: bool,
    pub(crate) show_keys: bool,
    pub(crate) path_prompt: Option<(PathPrompt, String)>,
    /// Counts changes to the bench, so that a frame can tell whether it changed while being drawn.
    revision: u64,
    /// Recently opened or saved files, newest first (kept by the window's settings).
    pub recent: Vec<PathBuf>,
    /// The analysis views panel.
    pub views: plots::ViewsPanel,
}

/// What a typed path is for.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum PathPrompt {
    Open,
    SaveAs,
    /// Export a view: as PNG (`true`) or CSV.
    Export(lumenrail_bench::views::ViewKind, bool),
}

impl Workbench {
    /// A workbench on `bench`.
    pub fn new(bench: Bench, path: Option<PathBuf>) -> Workbench {
        let evaluation = Evaluation::of(&bench);
        let scene = Scene::of(&evaluation);
        Workbench {
            saved: bench.clone(),
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
            revision: 0,
            recent: Vec::new(),
            views: plots::ViewsPanel::default(),
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

    /// Replaces the document, keeping the view preferences (snap, exaggeration, recent files).
    fn replace_document(&mut self, next: Workbench) {
        let (snap_mm, exaggeration, recent) = (self.snap_mm, self.exaggeration, std::mem::take(&mut self.recent));
        let (shown, tab, grid) = (self.views.shown, self.views.tab, self.views.request.grid);
        *self = next;
        (self.snap_mm, self.exaggeration, self.recent) = (snap_mm, exaggeration, recent);
        (self.views.shown, self.views.tab, self.views.request.grid) = (shown, tab, grid);
    }

    /// Opens a bench file; on failure the current bench stays and the status says why.
    pub fn open(&mut self, path: PathBuf) -> bool {
        match file::load(&path) {
            Ok(loaded) => {
                self.replace_document(Workbench::new(loaded.bench, Some(path.clone())));
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

    /// Saves to `path` (atomically); on success it becomes the bench's path.
    pub fn save_to(&mut self, path: PathBuf) -> bool {
        match file::save(&self.bench, &path) {
            Ok(()) => {
                self.status = format!("saved {}", path.display());
                self.saved = self.bench.clone();
                self.path = Some(path);
                true
            }
            Err(e) => {
                self.status = e.to_string();
                false
            }
        }
    }

    /// Whether there are unsaved changes.
    pub fn dirty(&self) -> bool {
        self.bench != self.saved
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
        self.evaluation = Evaluation::of(&self.bench);
        self.scene = Scene::of(&self.evaluation);
    }

    /// Whether part `index` is locked.
    pub fn is_locked(&self, index: usize) -> bool {
        self.locked.contains(&self.bench.parts[index].name)
    }

    /// A fresh name for a new part of this kind word.
    fn fresh_name(&self, word: &str) -> String {
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
        Part { name: self.fresh_name(word), at_mm: (0.5 * self.bench.rail_length_mm).round(), kind, carrier_mm: None }
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
    }

    /// Draws the whole workbench: menu bar, readout, part sheet, rail view and status line.
    pub fn ui(&mut self, ui: &mut egui::Ui) {
        self.keys_ui(ui);
        let revision = self.revision;
        egui::Panel::top("menu").show(ui, |ui| self.menu_ui(ui));
        egui::Panel::bottom("status").show(ui, |ui| {
            ui.horizontal(|ui| {
                ui.label(&self.status);
            });
        });
        egui::Panel::right("readout").default_size(340.0).show(ui, |ui| {
            egui::ScrollArea::vertical().show(ui, |ui| self.readout_ui(ui));
        });
        egui::Panel::left("sheet").default_size(280.0).show(ui, |ui| {
            egui::ScrollArea::vertical().show(ui, |ui| sheet::sheet_ui(self, ui));
        });
        if self.views.shown {
            egui::Panel::bottom("views").resizable(true).default_size(330.0).min_size(200.0).show(ui, |ui| {
                plots::panel_ui(self, ui);
            });
        }
        egui::CentralPanel::default().show(ui, |ui| rail::rail_ui(self, ui));
        self.windows_ui(ui.ctx());
        if self.revision != revision {
            // A drag or an entry changed the bench after the readout was drawn: draw the frame again, so
            // that rays, images and figures on screen always belong to the same layout.
            ui.ctx().request_discard("the bench changed while the frame was drawn");
        }
    }

    fn keys_ui(&mut self, ui: &mut egui::Ui) {
        let typing = ui.ctx().memory(|m| m.focused().is_some());
        let (undo, redo, left, right, shift) = ui.input(|i| {
            let m = i.modifiers;
            (
                m.command && !m.shift && i.key_pressed(egui::Key::Z),
                m.command && (m.shift && i.key_pressed(egui::Key::Z) || i.key_pressed(egui::Key::Y)),
                !m.command && i.key_pressed(egui::Key::ArrowLeft),
                !m.command && i.key_pressed(egui::Key::ArrowRight),
                m.shift,
            )
        });
        if typing {
            return;
        }
        if undo {
            self.undo();
        }
        if redo {
            self.redo();
        }
        let steps = if shift { 10.0 } else { 1.0 };
        if left {
            self.nudge(-steps);
        }
        if right {
            self.nudge(steps);
        }
    }

    fn menu_ui(&mut self, ui: &mut egui::Ui) {
        egui::MenuBar::new().ui(ui, |ui| {
            ui.menu_button("File", |ui| {
                if ui.button("New bench").clicked() {
                    let bench = Bench {
                        format: 1,
                        title: "New bench".into(),
                        rail_length_mm: 1000.0,
                        wavelengths_nm: vec![486.1327, 587.5618, 656.2725],
                        primary_wavelength: 1,
                        object: ObjectSpec::Point { at_mm: 0.0, height_mm: 5.0 },
                        parts: Vec::new(),
                    };
                    self.replace_document(Workbench::new(bench, None));
                }
                if ui.button("Open…").clicked() {
                    ui.close();
                    match rfd::FileDialog::new().add_filter("bench", &["ron"]).set_title("Open bench").pick_file() {
                        Some(p) => {
                            self.open(p);
                        }
                        None => self.status = "no file chosen (if no dialog appeared, use File → Open by path…)".into(),
                    }
                }
                if ui.button("Open by path…").clicked() {
                    self.path_prompt = Some((PathPrompt::Open, String::new()));
                }
                let recent = self.recent.clone();
                ui.add_enabled_ui(!recent.is_empty(), |ui| {
                    ui.menu_button("Recent files", |ui| {
                        for p in recent {
                            if ui.button(p.display().to_string()).clicked() {
                                self.open(p);
                            }
                        }
                    });
                });
                ui.menu_button("Demo benches", |ui| {
                    for d in demos::DEMOS {
                        if ui.button(d.name).on_hover_text(d.summary()).clicked() {
                            self.replace_document(Workbench::demo(d.name));
                        }
                    }
                });
                let save = ui.add_enabled(self.path.is_some(), egui::Button::new("Save"));
                if save.clicked()
                    && let Some(p) = self.path.clone()
                {
                    self.save_to(p);
                }
                if ui.button("Save as…").clicked() {
                    ui.close();
                    let name = self
                        .path
                        .as_ref()
                        .and_then(|p| p.file_name())
                        .map_or_else(|| "bench.bench.ron".into(), |n| n.to_string_lossy().into_owned());
                    let dialog = rfd::FileDialog::new()
                        .add_filter("bench", &["ron"])
                        .set_file_name(name)
                        .set_title("Save bench as");
                    match dialog.save_file() {
                        Some(p) => {
                            self.save_to(p);
                        }
                        None => self.status = "not saved (if no dialog appeared, use File → Save as by path…)".into(),
                    }
                }
                if ui.button("Save as by path…").clicked() {
                    let current =
                        self.path.as_ref().map_or_else(|| "bench.bench.ron".into(), |p| p.display().to_string());
                    self.path_prompt = Some((PathPrompt::SaveAs, current));
                }
                ui.separator();
                for (png, what) in [(false, "CSV"), (true, "PNG")] {
                    if ui.button(format!("Export view {what} by path…")).clicked() {
                        let kind = self.views.tab;
                        self.path_prompt = Some((PathPrompt::Export(kind, png), self.export_path(kind, png)));
                    }
                }
            });
            ui.menu_button("Edit", |ui| {
                if ui.add_enabled(!self.history.undo.is_empty(), egui::Button::new("Undo (Ctrl+Z)")).clicked() {
                    self.undo();
                }
                if ui.add_enabled(!self.history.redo.is_empty(), egui::Button::new("Redo (Ctrl+Shift+Z)")).clicked() {
                    self.redo();
                }
                ui.separator();
                ui.menu_button("Add part", |ui| {
                    for word in ["thin lens", "singlet", "doublet", "mirror", "iris", "screen"] {
                        if ui.button(word).clicked() {
                            let part = self.new_part(word);
                            self.apply(Edit::Add(part), None);
                        }
                    }
                });
                if let Some(i) = self.selected {
                    if ui.button("Duplicate part").clicked() {
                        let mut p = self.bench.parts[i].clone();
                        p.name = self.fresh_name(&p.name);
                        p.at_mm += 20.0;
                        self.apply(Edit::Add(p), None);
                    }
                    if ui.button("Remove part").clicked() {
                        self.apply(Edit::Remove(i), None);
                    }
                }
            });
            ui.menu_button("View", |ui| {
                if ui.button("Fit bench").clicked() {
                    self.view.fit();
                }
                ui.checkbox(&mut self.views.shown, "Analysis views (spot, fan, sweep, colour, field)");
                ui.add(egui::Slider::new(&mut self.exaggeration, 0.0..=200.0).text("height ×").logarithmic(true));
                ui.label("0 = automatic");
                ui.horizontal(|ui| {
                    ui.label("snap");
                    for s in SNAP_STEPS_MM {
                        let label = if s == 0.0 { "off".to_string() } else { format!("{s} mm") };
                        ui.selectable_value(&mut self.snap_mm, s, label);
                    }
                });
            });
            ui.menu_button("Help", |ui| {
                if ui.button("Safety").clicked() {
                    self.show_safety = true;
                }
                if ui.button("Keyboard shortcuts").clicked() {
                    self.show_keys = true;
                }
            });
        });
    }

    fn windows_ui(&mut self, ctx: &egui::Context) {
        egui::Window::new("Safety").open(&mut self.show_safety).show(ctx, |ui| {
            ui.label(SAFETY);
        });
        egui::Window::new("Keyboard shortcuts").open(&mut self.show_keys).show(ctx, |ui| {
            for (k, what) in [
                ("Left / Right arrow", "nudge the selected part one snap step (1 mm with snap off)"),
                ("Shift + Left / Right", "nudge ten steps"),
                ("Alt while dragging", "let a part pass its neighbour's carrier"),
                ("Ctrl+Z", "undo"),
                ("Ctrl+Shift+Z or Ctrl+Y", "redo"),
                ("scroll", "zoom around the pointer; drag empty rail to pan"),
            ] {
                ui.horizontal(|ui| {
                    ui.strong(k);
                    ui.label(what);
                });
            }
        });
        let mut close = false;
        if let Some((kind, text)) = &mut self.path_prompt {
            let (title, what, verb) = match kind {
                PathPrompt::Open => ("Open bench file", "Path of the .bench.ron file:", "Open"),
                PathPrompt::SaveAs => ("Save bench as", "Path of the .bench.ron file:", "Save"),
                PathPrompt::Export(_, true) => ("Export view", "Path of the PNG picture:", "Export"),
                PathPrompt::Export(_, false) => ("Export view", "Path of the CSV table:", "Export"),
            };
            let mut go = false;
            egui::Window::new(title).collapsible(false).show(ctx, |ui| {
                let label = ui.label(what);
                let r = ui.text_edit_singleline(text).labelled_by(label.id);
                go = r.lost_focus() && ui.input(|i| i.key_pressed(egui::Key::Enter));
                ui.horizontal(|ui| {
                    go |= ui.button(verb).clicked();
                    close |= ui.button("Cancel").clicked();
                });
            });
            if go {
                let (kind, path) = (*kind, PathBuf::from(text.trim()));
                close = match kind {
                    PathPrompt::Open => self.open(path),
                    PathPrompt::SaveAs => self.save_to(path),
                    PathPrompt::Export(view, png) => self.export_view(view, png, &path),
                };
            }
        }
        if close {
            self.path_prompt = None;
        }
    }

    fn readout_ui(&mut self, ui: &mut egui::Ui) {
        let r = &self.evaluation.report;
        let mut select = None;
        let mut to_best_focus = None;
        ui.heading("Readout");
        ui.label(&r.title);
        if let Some(why) = &r.trace_failure {
            ui.colored_label(egui::Color32::from_rgb(200, 60, 40), format!("Cannot trace: {why}"));
        }
        let mm = |v: Option<f64>| v.map_or_else(|| "—".to_string(), |v| format!("{} mm", fixed(v, 3)));
        if let Some(img) = r.images.last() {
            let at = img.at_mm.map_or_else(|| "at infinity".to_string(), |z| format!("at {z:.3} mm"));
            let m = img.magnification.map_or_else(String::new, |m| format!(", m = {m:.4}"));
            ui.strong(format!(
                "Final image {at}: {}, {}{m}",
                if img.real { "real" } else { "virtual" },
                if img.erect { "erect" } else { "inverted" }
            ));
            for (k, img) in r.images.iter().enumerate().take(r.images.len() - 1) {
                let at = img.at_mm.map_or_else(|| "at infinity".to_string(), |z| format!("at {z:.3} mm"));
                let m = img.magnification.map_or_else(String::new, |m| format!(", m = {m:.4}"));
                ui.label(format!(
                    "Intermediate image {} after {}: {at}, {}{m}",
                    k + 1,
                    img.after_part,
                    if img.real { "real" } else { "virtual" }
                ));
            }
        }
        ui.separator();
        let f = &r.first_order;
        ui.label(format!("EFL {}   BFL {}", mm(f.efl_mm), mm(f.bfl_mm)));
        if let Some(n) = f.f_number {
            ui.label(format!("f-number {n:.2}"));
        }
        if let Some(s) = &r.stop {
            ui.label(format!("Aperture stop: {} ({:.2} mm)", s.part, s.diameter_mm));
            ui.label(format!(
                "Entrance pupil {} ({} across)",
                s.entrance_pupil_at_mm.map_or_else(|| "at infinity".into(), |z| format!("at {z:.2} mm")),
                mm(s.entrance_pupil_diameter_mm)
            ));
            ui.label(format!(
                "Exit pupil {} ({} across)",
                s.exit_pupil_at_mm.map_or_else(|| "at infinity".into(), |z| format!("at {z:.2} mm")),
                mm(s.exit_pupil_diameter_mm)
            ));
        }
        if let Some(af) = &r.afocal {
            ui.label(format!(
                "Afocal: angular magnification {:.3}, exit pupil {}, eye relief {}",
                af.angular_magnification,
                mm(af.exit_pupil_diameter_mm),
                mm(af.eye_relief_mm)
            ));
        }
        let ab = &r.aberrations;
        if let (Some(nw), Some(airy)) = (ab.working_f_number, ab.airy_radius_um) {
            ui.label(format!("Working f-number {nw:.2}, Airy radius {airy:.2} µm"));
        }
        ui.label(format!(
            "Marginal LSA {}, colour focal shift {}",
            mm(ab.marginal_lsa_mm),
            mm(ab.chromatic_focal_shift_mm)
        ));
        if let Some(fd) = &r.field {
            let point = match self.bench.object {
                ObjectSpec::Point { height_mm, .. } => format!("{height_mm} mm off axis"),
                ObjectSpec::Distant { field_deg, .. } => format!("{field_deg} deg off axis"),
            };
            ui.label(format!(
                "Foci of the point {point}, from the paraxial image: tangential {}, sagittal {} (astigmatism {})",
                mm(Some(fd.tangential_focus_mm)),
                mm(Some(fd.sagittal_focus_mm)),
                mm(Some(fd.astigmatism_mm)),
            ));
            let pc = fd.distortion_percent.map_or_else(|| "—".to_string(), |d| format!("{}%", fixed(d, 4)));
            ui.label(format!("Distortion {pc}, lateral colour {}", mm(fd.lateral_colour_mm)));
        }
        for s in &r.screens {
            ui.separator();
            let um = |v: Option<f64>| v.map_or_else(|| "—".to_string(), |v| format!("{v:.2} µm"));
            ui.label(format!(
                "Screen {}: RMS spot {}, geometric {}",
                s.part,
                um(s.rms_spot_um),
                um(s.geometric_spot_um)
            ));
            if let Some(best) = s.best_focus_at_mm {
                ui.label(format!(
                    "Best focus of {} at {best:.3} mm (RMS {}), {} away",
                    s.part,
                    um(s.best_rms_spot_um),
                    mm(s.move_to_best_focus_mm)
                ));
                if let Some(index) = self.bench.parts.iter().position(|p| p.name == s.part)
                    && ui.button(format!("Move {} to best focus", s.part)).clicked()
                {
                    to_best_focus = Some(index);
                }
            }
        }
        if !r.warnings.is_empty() {
            ui.separator();
            ui.strong("Warnings");
            for w in &r.warnings {
                let part = w.part.as_ref().and_then(|name| self.bench.parts.iter().position(|p| &p.name == name));
                ui.horizontal_wrapped(|ui| {
                    ui.label("•");
                    match part {
                        // A warning about a part selects it when clicked, so the rail shows which one.
                        Some(i) => {
                            if ui.link(&w.message).on_hover_text("select the part").clicked() {
                                select = Some(i);
                            }
                        }
                        None => {
                            ui.label(&w.message);
                        }
                    }
                });
            }
        }
        if let Some(index) = to_best_focus {
            self.move_screen_to_best_focus(index);
        }
        if select.is_some() {
            self.selected = select;
        }
    }
}

/// The safety cautions shown in the Help menu.
pub const SAFETY: &str = "Lumenrail plans benches; it does not certify them.\n\n\
• Lasers: every laser has a hazard class (IEC 60825-1; ANSI Z136). Lenses gather a beam, so a bench can make a \
low-class beam hazardous. Keep beams below eye level, end them on beam stops, align at low power. Class 3B and 4 \
work needs a laser safety officer and the eyewear that officer names.\n\
• Stray reflections: every glass surface reflects some light (about 4% uncoated) and curved ones focus it.\n\
• The sun: never look at the sun through any optic; a lens in sunlight can start a fire.\n\
• Lamps get hot, burn skin and char nearby material; some emit UV.\n\
• Local rules and manufacturers' instructions come first. Eyes and eyewear: an eye-care professional.";
