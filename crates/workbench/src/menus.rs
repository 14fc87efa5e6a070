//! The menu bar. Every item that is a user action takes its label and shortcut from [`crate::actions`].

use crate::actions::Action;
use crate::guard::Replacement;
use crate::{Edit, SNAP_STEPS_MM, Workbench};
use lumenrail_bench::demos;

impl Workbench {
    pub(crate) fn menu_ui(&mut self, ui: &mut egui::Ui) {
        egui::MenuBar::new().ui(ui, |ui| {
            ui.menu_button("File", |ui| {
                self.action_button(ui, Action::NewBench);
                self.action_button(ui, Action::Open);
                self.action_button(ui, Action::OpenByPath);
                let recent = self.recent.clone();
                ui.add_enabled_ui(!recent.is_empty(), |ui| {
                    ui.menu_button("Recent files", |ui| {
                        for p in recent {
                            if ui.button(p.display().to_string()).clicked() {
                                self.replace(Replacement::Open(p));
                            }
                        }
                    });
                });
                ui.menu_button("Demo benches", |ui| {
                    for d in demos::DEMOS {
                        if ui.button(d.name).on_hover_text(d.summary()).clicked() {
                            self.replace(Replacement::Demo(d.name.to_string()));
                        }
                    }
                });
                self.action_button(ui, Action::Save);
                self.action_button(ui, Action::SaveAs);
                self.action_button(ui, Action::SaveAsByPath);
                ui.separator();
                self.action_button(ui, Action::ExportCsvByPath);
                self.action_button(ui, Action::ExportPngByPath);
                self.action_button(ui, Action::ExportDrawingByPath);
                self.action_button(ui, Action::LabSheetByPath);
            });
            ui.menu_button("Edit", |ui| {
                self.action_button(ui, Action::Undo);
                self.action_button(ui, Action::Redo);
                ui.separator();
                ui.menu_button("Add part", |ui| {
                    for word in ["thin lens", "singlet", "doublet", "mirror", "iris", "screen"] {
                        if ui.button(word).clicked() {
                            let part = self.new_part(word);
                            self.apply(Edit::Add(part), None);
                        }
                    }
                });
                self.action_button(ui, Action::DuplicatePart);
                self.action_button(ui, Action::RemovePart);
                self.action_button(ui, Action::ClearSelection);
                ui.separator();
                self.action_button(ui, Action::BenchSettings);
            });
            ui.menu_button("View", |ui| {
                self.action_button(ui, Action::FitBench);
                self.action_button(ui, Action::MountSheet);
                self.action_button(ui, Action::ToleranceRun);
                if ui.checkbox(&mut self.inch, "Lengths in inches (ruler and mount sheet; files stay in mm)").changed()
                {
                    self.mount.inch = self.inch;
                }
                let mut shown = self.views.shown;
                if ui.checkbox(&mut shown, Action::ToggleViews.info().label).changed() {
                    self.run(Action::ToggleViews);
                }
                ui.add(
                    egui::Slider::new(&mut self.exaggeration, 0.0..=200.0)
                        .text("heights drawn × taller than lengths")
                        .logarithmic(true),
                );
                ui.label("0 = automatic: the tallest part fills the view");
                ui.horizontal(|ui| {
                    ui.label("snap");
                    for s in SNAP_STEPS_MM {
                        let label = if s == 0.0 { "off".to_string() } else { format!("{s} mm") };
                        ui.selectable_value(&mut self.snap_mm, s, label);
                    }
                });
            });
            ui.menu_button("Help", |ui| {
                self.action_button(ui, Action::GettingStarted);
                self.action_button(ui, Action::Safety);
                self.action_button(ui, Action::Shortcuts);
            });
        });
    }
}
