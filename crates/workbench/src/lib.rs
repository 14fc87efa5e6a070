//! The Lumenrail desktop workbench: the rail view (the bench drawn to scale, where parts are dragged), the
//! part sheet, the readout, the views panel and the edit history.
//!
//! [`Workbench::ui`] draws everything into an `egui::Ui`, so the whole workbench runs headless in tests;
//! [`app::WorkbenchApp`] wraps it for a window. Every edit is an [`Edit`] applied to the bench document
//! (`document`); the bench's one evaluation is recomputed from the document after each, and every panel
//! projects it. Menus, shortcuts and Help come from one list of actions ([`actions`]).

pub mod actions;
pub mod app;
pub mod arranger;
mod background;
mod dialogs;
pub mod disk;
mod document;
pub mod drawer;
pub mod guard;
mod lab;
mod menus;
pub mod mount;
pub mod plots;
mod rail;
mod readout;
pub mod recovery;
mod settings;
mod sheet;
pub mod tolerance;

pub use dialogs::{GETTING_STARTED, SAFETY};
use document::History;
pub use document::{BenchSettings, Edit};
use lumenrail_bench::evaluation::Evaluation;
use lumenrail_bench::model::Bench;
pub use lumenrail_export::scene;
use scene::Scene;
use std::path::PathBuf;

/// Snap steps offered for dragging and nudging, mm (0 = off).
pub const SNAP_STEPS_MM: [f64; 5] = [0.0, 0.5, 1.0, 5.0, 10.0];

/// The workbench: the document, its report and scene, and the view state.
pub struct Workbench {
    /// The bench being edited.
    pub bench: Bench,
    /// Where it was opened from or last saved to.
    pub path: Option<PathBuf>,
    /// The bench as its file holds it (None: not saved anywhere in this form, e.g. a restored copy).
    saved: Option<Bench>,
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
    /// The user's stock of parts beside the bench (kept when another bench is opened).
    pub drawer: drawer::DrawerPanel,
    /// The aims panel and the arranger.
    pub arranger: arranger::ArrangerPanel,
    /// Which page the left panel shows.
    pub left: LeftPage,
    /// The mount sheet window.
    pub mount: mount::MountWindow,
    /// Lengths on the rail's ruler and the sheets shown in inches (display only; files stay in mm).
    pub inch: bool,
    /// The tolerance window.
    pub tolerance: tolerance::ToleranceWindow,
    /// The size the drawing export lays the rail out for, `WIDTHxHEIGHT` (pixels for PNG, points for SVG).
    pub(crate) drawing_size: String,
    /// The lab and paper the lab sheet prompt last used.
    pub(crate) lab_choice: (lumenrail_bench::lab::Lab, lumenrail_export::lab::Paper),
    /// Counts changes to the bench, so that a frame can tell whether it changed while being drawn.
    revision: u64,
    /// Recently opened or saved files, newest first (kept by the window's settings).
    pub recent: Vec<PathBuf>,
    /// The analysis views panel.
    pub views: plots::ViewsPanel,
    /// What waits for the answer to "save the unsaved changes?".
    pub(crate) unsaved_question: Option<guard::Replacement>,
    /// What goes ahead once a typed Save As has saved the bench.
    pub(crate) after_save: Option<guard::Replacement>,
    /// Set when the user has agreed to close the window.
    pub(crate) close_now: bool,
    /// Whether a text field had the keyboard when the last frame began.
    pub(crate) typing: bool,
    /// Whether the getting-started page is open.
    pub(crate) show_start: bool,
    /// The bench settings sheet.
    pub(crate) settings: settings::SettingsSheet,
    /// The bench file's stamp when it was opened or last saved here.
    pub(crate) on_disk: Option<disk::Stamp>,
    /// The save held back because the file changed on disk.
    pub(crate) disk_conflict: Option<disk::Conflict>,
    /// Why the last save failed, while its dialog is open.
    pub(crate) save_failure: Option<String>,
    /// Autosave (None: off, as in tests and screenshots).
    pub(crate) autosave: Option<recovery::Autosave>,
    /// An autosaved bench from an earlier run, offered back.
    pub(crate) recovery_offer: Option<recovery::Found>,
    /// The vignetting integration off the frame.
    pub(crate) background: background::Background,
}

/// What a typed path is for.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum PathPrompt {
    Open,
    SaveAs,
    /// Export a view: as PNG (`true`) or CSV.
    Export(lumenrail_bench::views::ViewKind, bool),
    /// Export the rail drawing as SVG.
    Drawing,
    /// Open a drawer file.
    OpenDrawer,
    /// Save the drawer.
    SaveDrawer,
    /// Export the mount sheet (CSV, SVG or DXF by the name).
    MountSheet,
    /// Write a lab sheet (and its answer key beside it) for this lab on this paper.
    LabSheet(lumenrail_bench::lab::Lab, lumenrail_export::lab::Paper),
}

/// The pages of the left panel.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum LeftPage {
    /// The selected part's sheet.
    #[default]
    Part,
    /// The drawer: the stock of parts.
    Drawer,
    /// The aims and the arranger.
    Aims,
}

impl Workbench {
    /// Draws the whole workbench: menu bar, readout, part sheet, rail view and status line.
    pub fn ui(&mut self, ui: &mut egui::Ui) {
        // Figures integrated off the frame arrive before anything is drawn.
        self.background_step(ui.ctx());
        self.keys_ui(ui);
        let revision = self.revision;
        egui::Panel::top("menu").show(ui, |ui| self.menu_ui(ui));
        egui::Panel::bottom("status").show(ui, |ui| {
            ui.horizontal(|ui| {
                ui.label(&self.status);
            });
        });
        // Side panels keep a width of their own (the user may drag it) and scroll inside: long messages wrap
        // instead of widening them.
        egui::Panel::right("readout").resizable(true).default_size(340.0).min_size(240.0).max_size(560.0).show(
            ui,
            |ui| {
                egui::ScrollArea::vertical().auto_shrink([false, false]).show(ui, |ui| self.readout_ui(ui));
            },
        );
        egui::Panel::left("sheet").resizable(true).default_size(290.0).min_size(220.0).max_size(480.0).show(ui, |ui| {
            ui.horizontal(|ui| {
                for (page, word) in [(LeftPage::Part, "Part"), (LeftPage::Drawer, "Drawer"), (LeftPage::Aims, "Aims")] {
                    ui.selectable_value(&mut self.left, page, word);
                }
            });
            ui.separator();
            egui::ScrollArea::vertical().auto_shrink([false, false]).show(ui, |ui| match self.left {
                LeftPage::Part => sheet::sheet_ui(self, ui),
                LeftPage::Drawer => drawer::drawer_ui(self, ui),
                LeftPage::Aims => arranger::aims_ui(self, ui),
            });
        });
        if self.views.shown {
            egui::Panel::bottom("views").resizable(true).default_size(330.0).min_size(200.0).show(ui, |ui| {
                plots::panel_ui(self, ui);
            });
        }
        egui::CentralPanel::default().show(ui, |ui| rail::rail_ui(self, ui));
        self.windows_ui(ui.ctx());
        self.settings_ui(ui.ctx());
        self.mount_ui(ui.ctx());
        self.tolerance_ui(ui.ctx());
        self.drawer_question_ui(ui.ctx());
        self.unsaved_ui(ui.ctx());
        self.disk_ui(ui.ctx());
        self.recovery_ui(ui.ctx());
        self.autosave_step(ui.ctx());
        self.typing |= ui.ctx().memory(|m| m.focused().is_some());
        if self.revision != revision {
            // A drag or an entry changed the bench after the readout was drawn: draw the frame again, so
            // that rays, images and figures on screen always belong to the same layout.
            ui.ctx().request_discard("the bench changed while the frame was drawn");
        }
    }
}
