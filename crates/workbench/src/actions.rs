//! The one list of user actions: each with its label, its keyboard shortcuts and what it does. The menus
//! take their labels and shortcut texts from it, the keyboard is dispatched from it and the Help window
//! lists it, so the three can never disagree.

use crate::guard::Replacement;
use crate::{PathPrompt, Workbench};
use egui::{Key, Modifiers};

/// A user action.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Action {
    /// Start a new, empty bench.
    NewBench,
    /// Open a bench through the desktop's file dialog.
    Open,
    /// Open a bench by a typed path.
    OpenByPath,
    /// Save to the bench's file.
    Save,
    /// Save under a new name through the desktop's file dialog.
    SaveAs,
    /// Save under a typed path.
    SaveAsByPath,
    /// Export the open view's CSV by a typed path.
    ExportCsvByPath,
    /// Export the open view's PNG by a typed path.
    ExportPngByPath,
    /// Export the rail drawing as SVG by a typed path.
    ExportDrawingByPath,
    /// Write a lab sheet and its answer key as PDF by a typed path.
    LabSheetByPath,
    /// Undo the last edit.
    Undo,
    /// Redo the last undone edit.
    Redo,
    /// Duplicate the selected part.
    DuplicatePart,
    /// Remove the selected part (undoable).
    RemovePart,
    /// Clear the selection.
    ClearSelection,
    /// Select the next part along the rail (the first when none is selected).
    NextPart,
    /// Open the bench settings sheet (title, rail, object, wavelengths).
    BenchSettings,
    /// Open the mount sheet window.
    MountSheet,
    /// Open the tolerance window (sensitivities, budget, Monte Carlo).
    ToleranceRun,
    /// Nudge the selected part one step towards the datum.
    NudgeBack,
    /// Nudge the selected part one step away from the datum.
    NudgeForward,
    /// Nudge ten steps towards the datum.
    NudgeBackTen,
    /// Nudge ten steps away from the datum.
    NudgeForwardTen,
    /// Fit the whole bench in the rail view.
    FitBench,
    /// Show or hide the analysis views.
    ToggleViews,
    /// Show the getting-started page.
    GettingStarted,
    /// Show the safety cautions.
    Safety,
    /// Show the keyboard shortcuts.
    Shortcuts,
}

/// A key with the modifiers it needs (Ctrl is the command key: ⌘ on a Mac).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Shortcut {
    /// Whether Ctrl (⌘) is held.
    pub command: bool,
    /// Whether Shift is held.
    pub shift: bool,
    /// The key.
    pub key: Key,
}

impl Shortcut {
    const fn plain(key: Key) -> Shortcut {
        Shortcut { command: false, shift: false, key }
    }

    const fn shift(key: Key) -> Shortcut {
        Shortcut { command: false, shift: true, key }
    }

    const fn ctrl(key: Key) -> Shortcut {
        Shortcut { command: true, shift: false, key }
    }

    const fn ctrl_shift(key: Key) -> Shortcut {
        Shortcut { command: true, shift: true, key }
    }

    /// How the shortcut is written: "Ctrl+Shift+Z", "Left arrow".
    pub fn text(&self) -> String {
        let key = match self.key {
            Key::ArrowLeft => "Left arrow".to_string(),
            Key::ArrowRight => "Right arrow".to_string(),
            k => k.name().to_string(),
        };
        format!("{}{}{key}", if self.command { "Ctrl+" } else { "" }, if self.shift { "Shift+" } else { "" })
    }

    /// Whether it was pressed this frame (the modifiers exactly as given; Alt is free, since it belongs
    /// to dragging).
    pub fn pressed(&self, input: &egui::InputState) -> bool {
        let m: Modifiers = input.modifiers;
        m.command == self.command && m.shift == self.shift && input.key_pressed(self.key)
    }
}

/// Which menu an action appears in.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Menu {
    /// File.
    File,
    /// Edit.
    Edit,
    /// View.
    View,
    /// Help.
    Help,
    /// Keyboard only.
    None,
}

/// One entry of the list.
#[derive(Debug, Clone, Copy)]
pub struct ActionInfo {
    /// The action.
    pub action: Action,
    /// Its menu.
    pub menu: Menu,
    /// Its label in the menu and in Help.
    pub label: &'static str,
    /// Its shortcuts (the first is shown in the menu).
    pub keys: &'static [Shortcut],
}

const fn entry(action: Action, menu: Menu, label: &'static str, keys: &'static [Shortcut]) -> ActionInfo {
    ActionInfo { action, menu, label, keys }
}

/// Every user action, in menu order.
pub const ACTIONS: &[ActionInfo] = &[
    entry(Action::NewBench, Menu::File, "New bench", &[Shortcut::ctrl(Key::N)]),
    entry(Action::Open, Menu::File, "Open…", &[Shortcut::ctrl(Key::O)]),
    entry(Action::OpenByPath, Menu::File, "Open by path…", &[]),
    entry(Action::Save, Menu::File, "Save", &[Shortcut::ctrl(Key::S)]),
    entry(Action::SaveAs, Menu::File, "Save as…", &[Shortcut::ctrl_shift(Key::S)]),
    entry(Action::SaveAsByPath, Menu::File, "Save as by path…", &[]),
    entry(Action::ExportCsvByPath, Menu::File, "Export view CSV by path…", &[]),
    entry(Action::ExportPngByPath, Menu::File, "Export view PNG by path…", &[]),
    entry(Action::ExportDrawingByPath, Menu::File, "Export drawing (SVG, PNG or text) by path…", &[]),
    entry(Action::LabSheetByPath, Menu::File, "Lab sheet and answer key (PDF) by path…", &[]),
    entry(Action::Undo, Menu::Edit, "Undo", &[Shortcut::ctrl(Key::Z)]),
    entry(Action::Redo, Menu::Edit, "Redo", &[Shortcut::ctrl_shift(Key::Z), Shortcut::ctrl(Key::Y)]),
    entry(Action::DuplicatePart, Menu::Edit, "Duplicate part", &[]),
    entry(Action::RemovePart, Menu::Edit, "Remove part", &[Shortcut::plain(Key::Delete)]),
    entry(Action::ClearSelection, Menu::Edit, "Clear selection", &[Shortcut::plain(Key::Escape)]),
    entry(Action::NextPart, Menu::Edit, "Select the next part along the rail", &[Shortcut::plain(Key::Tab)]),
    entry(Action::BenchSettings, Menu::Edit, "Bench settings…", &[]),
    entry(
        Action::NudgeBack,
        Menu::None,
        "Nudge the selected part one snap step left",
        &[Shortcut::plain(Key::ArrowLeft)],
    ),
    entry(
        Action::NudgeForward,
        Menu::None,
        "Nudge the selected part one snap step right",
        &[Shortcut::plain(Key::ArrowRight)],
    ),
    entry(Action::NudgeBackTen, Menu::None, "Nudge ten steps left", &[Shortcut::shift(Key::ArrowLeft)]),
    entry(Action::NudgeForwardTen, Menu::None, "Nudge ten steps right", &[Shortcut::shift(Key::ArrowRight)]),
    entry(Action::FitBench, Menu::View, "Fit bench", &[]),
    entry(Action::MountSheet, Menu::View, "Mount sheet (for the machine shop)", &[]),
    entry(Action::ToleranceRun, Menu::View, "Tolerance run (sensitivities, budget, Monte Carlo)", &[]),
    entry(Action::ToggleViews, Menu::View, "Analysis views (spot, fan, sweep, colour, field)", &[]),
    entry(Action::GettingStarted, Menu::Help, "Getting started", &[Shortcut::plain(Key::F1)]),
    entry(Action::Safety, Menu::Help, "Safety", &[]),
    entry(Action::Shortcuts, Menu::Help, "Keyboard shortcuts", &[]),
];

/// The status line when no Save As dialog appeared (or it was cancelled).
pub const NO_SAVE_DIALOG: &str = "not saved (if no dialog appeared, use File, Save as by path…)";

/// The status line when no Open dialog appeared (or it was cancelled).
pub const NO_OPEN_DIALOG: &str = "no file chosen (if no dialog appeared, use File, Open by path…)";

/// Gestures of the pointer, listed in Help beside the actions.
pub const GESTURES: &[(&str, &str)] = &[
    ("Drag a part", "move it along the rail; it stops against its neighbour's carrier"),
    ("Alt while dragging", "let a part pass its neighbour's carrier"),
    ("Scroll", "zoom around the pointer"),
    ("Drag empty rail", "pan"),
];

impl Action {
    /// The action's entry in [`ACTIONS`].
    pub fn info(self) -> &'static ActionInfo {
        ACTIONS.iter().find(|a| a.action == self).expect("every action is listed")
    }

    /// The shortcut texts joined for a person: "Ctrl+Shift+Z or Ctrl+Y" (empty without shortcuts).
    pub fn keys_text(self) -> String {
        self.info().keys.iter().map(Shortcut::text).collect::<Vec<_>>().join(" or ")
    }
}

impl Workbench {
    /// Whether `action` can be taken now.
    pub fn can(&self, action: Action) -> bool {
        match action {
            Action::Undo => !self.history.undo.is_empty(),
            Action::Redo => !self.history.redo.is_empty(),
            Action::DuplicatePart | Action::RemovePart | Action::ClearSelection => self.selected.is_some(),
            Action::NudgeBack | Action::NudgeForward | Action::NudgeBackTen | Action::NudgeForwardTen => {
                self.selected.is_some()
            }
            Action::NextPart => !self.bench.parts.is_empty(),
            _ => true,
        }
    }

    /// Takes `action` (nothing happens when it cannot be taken now).
    pub fn run(&mut self, action: Action) {
        if !self.can(action) {
            return;
        }
        match action {
            Action::NewBench => self.replace(Replacement::New),
            Action::Open => self.replace(Replacement::OpenDialog),
            Action::OpenByPath => self.path_prompt = Some((PathPrompt::Open, String::new())),
            Action::Save => {
                self.save_then(None);
            }
            Action::SaveAs => {
                let name = self
                    .path
                    .as_ref()
                    .and_then(|p| p.file_name())
                    .map_or_else(|| "bench.bench.ron".into(), |n| n.to_string_lossy().into_owned());
                let dialog =
                    rfd::FileDialog::new().add_filter("bench", &["ron"]).set_file_name(name).set_title("Save bench as");
                match dialog.save_file() {
                    Some(p) => {
                        self.save_over(p, None);
                    }
                    None => self.status = NO_SAVE_DIALOG.into(),
                }
            }
            Action::SaveAsByPath => {
                let current = self.path.as_ref().map_or_else(|| "bench.bench.ron".into(), |p| p.display().to_string());
                self.path_prompt = Some((PathPrompt::SaveAs, current));
            }
            Action::ExportCsvByPath | Action::ExportPngByPath => {
                let png = action == Action::ExportPngByPath;
                let kind = self.views.tab;
                self.path_prompt = Some((PathPrompt::Export(kind, png), self.export_path(kind, png)));
            }
            Action::ExportDrawingByPath => {
                let dir = self.path.as_ref().and_then(|p| p.parent()).map(std::path::Path::to_path_buf);
                let name = dir.unwrap_or_default().join("bench-rail.svg");
                self.path_prompt = Some((PathPrompt::Drawing, name.display().to_string()));
            }
            Action::LabSheetByPath => {
                let dir = self.path.as_ref().and_then(|p| p.parent()).map(std::path::Path::to_path_buf);
                let name = dir.unwrap_or_default().join("lab-sheet.pdf");
                let prompt = PathPrompt::LabSheet(self.lab_choice.0, self.lab_choice.1);
                self.path_prompt = Some((prompt, name.display().to_string()));
            }
            Action::Undo => self.undo(),
            Action::Redo => self.redo(),
            Action::DuplicatePart => {
                if let Some(i) = self.selected {
                    let mut p = self.bench.parts[i].clone();
                    p.name = self.fresh_name(&p.name);
                    p.at_mm += 20.0;
                    self.apply(crate::Edit::Add(p), None);
                }
            }
            Action::RemovePart => {
                if let Some(i) = self.selected {
                    let name = self.bench.parts[i].name.clone();
                    self.apply(crate::Edit::Remove(i), None);
                    self.status = format!("removed \"{name}\" (Ctrl+Z brings it back)");
                }
            }
            Action::ClearSelection => self.selected = None,
            Action::BenchSettings => self.open_settings(),
            Action::NextPart => {
                let order = self.bench.rail_order();
                let at = self.selected.and_then(|i| order.iter().position(|&j| j == i));
                self.selected = match at {
                    Some(k) => order.get((k + 1) % order.len().max(1)).copied(),
                    None => order.first().copied(),
                };
            }
            Action::NudgeBack => self.nudge(-1.0),
            Action::NudgeForward => self.nudge(1.0),
            Action::NudgeBackTen => self.nudge(-10.0),
            Action::NudgeForwardTen => self.nudge(10.0),
            Action::FitBench => self.view.fit(),
            Action::MountSheet => self.mount.open = true,
            Action::ToleranceRun => self.tolerance.open = true,
            Action::ToggleViews => self.views.shown = !self.views.shown,
            Action::GettingStarted => self.show_start = true,
            Action::Safety => self.show_safety = true,
            Action::Shortcuts => self.show_keys = true,
        }
    }

    /// Takes every action whose shortcut was pressed this frame, unless a text field has (or just had) the
    /// keyboard.
    pub(crate) fn keys_ui(&mut self, ui: &mut egui::Ui) {
        // A key that ends typing (Escape, Enter) belongs to the field that had the keyboard last frame.
        let typed = std::mem::replace(&mut self.typing, ui.ctx().memory(|m| m.focused().is_some()));
        if typed || self.typing {
            return;
        }
        let pressed: Vec<Action> =
            ui.input(|i| ACTIONS.iter().filter(|a| a.keys.iter().any(|k| k.pressed(i))).map(|a| a.action).collect());
        for action in pressed {
            if action == Action::NextPart {
                // Tab walks the parts here, not the widgets' keyboard focus.
                ui.memory_mut(|m| m.move_focus(egui::FocusDirection::None));
            }
            self.run(action);
        }
    }

    /// A menu button for `action`: its label and first shortcut from the list, greyed when it cannot be
    /// taken; clicking takes it.
    pub(crate) fn action_button(&mut self, ui: &mut egui::Ui, action: Action) {
        let info = action.info();
        let mut button = egui::Button::new(info.label);
        if let Some(k) = info.keys.first() {
            button = button.shortcut_text(k.text());
        }
        if ui.add_enabled(self.can(action), button).clicked() {
            ui.close();
            self.run(action);
        }
    }
}
