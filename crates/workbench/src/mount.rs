//! The mount sheet window (View, Mount sheet): what the machine shop needs, as the sheet of
//! `lumenrail_bench::mount` projects the bench's evaluation: carrier positions from the datum, vertex
//! positions, spacings, clear apertures from traced rim rays, thicknesses and sags, in millimetres or
//! inches, with its CSV, SVG and DXF exports. Computed once per bench revision and choice.

use crate::{PathPrompt, Workbench};
use lumenrail_bench::mount::{DEFAULT_MARGIN_MM, Datum, MountOptions, MountSheet};
use std::path::Path;

/// The mount sheet window's state.
#[derive(Debug, Clone, Default)]
pub struct MountWindow {
    /// Whether the window is open.
    pub open: bool,
    /// Lengths shown in inches (stored values stay in mm).
    pub inch: bool,
    /// Which point of each carrier is its reference position.
    pub datum: Datum,
    /// The clear-aperture margin as typed, mm.
    pub margin: String,
    /// The sheet of the last revision and options.
    cache: Option<(u64, MountOptions, MountSheet)>,
}

impl MountWindow {
    /// The options the window's fields say (the default margin when the field does not parse).
    fn options(&self) -> Result<MountOptions, String> {
        let margin_mm = if self.margin.trim().is_empty() {
            DEFAULT_MARGIN_MM
        } else {
            match self.margin.trim().parse::<f64>() {
                Ok(m) if m.is_finite() && m >= 0.0 => m,
                _ => return Err(format!("the margin \"{}\" must be a number of mm, at least 0", self.margin.trim())),
            }
        };
        Ok(MountOptions { datum: self.datum, margin_mm })
    }
}

impl Workbench {
    /// The mount sheet of the current bench with the window's options, computed once per revision.
    pub fn mount_sheet(&mut self) -> Result<&MountSheet, String> {
        let options = self.mount.options()?;
        let fresh = self.mount.cache.as_ref().is_some_and(|(rev, o, _)| *rev == self.revision && *o == options);
        if !fresh {
            let sheet = MountSheet::of(&self.evaluation, &options);
            self.mount.cache = Some((self.revision, options, sheet));
        }
        Ok(&self.mount.cache.as_ref().expect("filled above").2)
    }

    /// Writes the mount sheet to `path` (atomically): CSV, SVG or DXF by the name's ending.
    pub fn export_mount_sheet(&mut self, path: &Path) -> bool {
        let inch = self.mount.inch;
        let ext = path.extension().and_then(|e| e.to_str()).map(str::to_ascii_lowercase);
        let sheet = match self.mount_sheet() {
            Ok(s) => s.clone(),
            Err(e) => {
                self.status = e;
                return false;
            }
        };
        let bytes = match ext.as_deref() {
            Some("csv") => lumenrail_export::mount::mount_csv(&sheet, inch).map_err(|e| e.to_string()),
            Some("svg") => Ok(lumenrail_export::mount::mount_svg(&sheet, inch, &lumenrail_export::mount::today_utc())),
            Some("dxf") => lumenrail_export::mount::mount_dxf(&sheet, inch).map_err(|e| e.to_string()),
            _ => Err(format!("{}: name the file .csv, .svg or .dxf", path.display())),
        };
        match bytes.and_then(|b| lumenrail_bench::file::write_atomic(path, b.as_bytes()).map_err(|e| e.to_string())) {
            Ok(()) => {
                self.status = format!("wrote the mount sheet to {}", path.display());
                true
            }
            Err(e) => {
                self.status = e;
                false
            }
        }
    }

    pub(crate) fn mount_ui(&mut self, ctx: &egui::Context) {
        if !self.mount.open {
            return;
        }
        let mut open = true;
        let mut export = false;
        egui::Window::new("Mount sheet").open(&mut open).default_size([760.0, 420.0]).show(ctx, |ui| {
            ui.horizontal_wrapped(|ui| {
                ui.checkbox(&mut self.mount.inch, "inches");
                ui.label("datum:");
                for d in [Datum::CarrierCentre, Datum::CarrierLeftEdge, Datum::CarrierRightEdge] {
                    ui.selectable_value(&mut self.mount.datum, d, d.words());
                }
                let l = ui.label("clear-aperture margin (mm)");
                ui.add(egui::TextEdit::singleline(&mut self.mount.margin).desired_width(50.0).hint_text("0.5"))
                    .labelled_by(l.id);
                export = ui.button("Export (CSV, SVG or DXF)…").clicked();
            });
            ui.separator();
            let inch = self.mount.inch;
            match self.mount_sheet() {
                Ok(sheet) => {
                    let text = sheet.to_text(inch);
                    egui::ScrollArea::both().auto_shrink([false, false]).show(ui, |ui| {
                        ui.add(egui::Label::new(egui::RichText::new(text).monospace()).extend());
                    });
                }
                Err(e) => {
                    ui.colored_label(ui.visuals().warn_fg_color, e);
                }
            }
        });
        if export {
            let dir = self.path.as_ref().and_then(|p| p.parent()).map(Path::to_path_buf).unwrap_or_default();
            self.path_prompt = Some((PathPrompt::MountSheet, dir.join("mount-sheet.csv").display().to_string()));
        }
        if !open {
            self.mount.open = false;
        }
    }
}
