//! The windows over the workbench: the safety cautions, the shortcuts (from the one list of actions) and
//! the typed-path prompts.

use crate::actions::{ACTIONS, GESTURES};
use crate::{PathPrompt, Workbench};
use std::path::PathBuf;

impl Workbench {
    /// Writes the rail drawing to `path` (atomically), laid out for [`Self::drawing_size`]: as PNG when
    /// the name ends in `.png`, the readout's figures as text when it ends in `.txt`, else as SVG. The
    /// status line says what happened.
    pub fn export_drawing(&mut self, path: &std::path::Path) -> bool {
        let Some((w, h)) = drawing_size(&self.drawing_size) else {
            self.status = format!(
                "the size `{}` is not WIDTHxHEIGHT in whole numbers from 480x240 to 8000x8000, e.g. 1600x700",
                self.drawing_size
            );
            return false;
        };
        let ext = path.extension().and_then(|e| e.to_str()).map(str::to_ascii_lowercase);
        self.settle();
        let (what, bytes) = match ext.as_deref() {
            Some("png") => match lumenrail_export::rail::rail_png(&self.evaluation, &self.scene, w, h) {
                Ok(bytes) => ("the rail drawing", bytes),
                Err(e) => {
                    self.status = e.to_string();
                    return false;
                }
            },
            Some("txt") => ("the readout", self.evaluation.report.to_text().into_bytes()),
            _ => {
                let size = (f64::from(w), f64::from(h));
                (
                    "the rail drawing",
                    lumenrail_export::rail::rail_svg_sized(&self.evaluation, &self.scene, size).into_bytes(),
                )
            }
        };
        match lumenrail_bench::file::write_atomic(path, &bytes) {
            Ok(()) => {
                self.status = format!("wrote {what} to {}", path.display());
                true
            }
            Err(e) => {
                self.status = e.to_string();
                false
            }
        }
    }

    pub(crate) fn windows_ui(&mut self, ctx: &egui::Context) {
        egui::Window::new("Getting started").open(&mut self.show_start).default_width(460.0).show(ctx, |ui| {
            ui.label(GETTING_STARTED);
        });
        egui::Window::new("Safety").open(&mut self.show_safety).show(ctx, |ui| {
            ui.label(SAFETY);
        });
        egui::Window::new("Keyboard shortcuts").open(&mut self.show_keys).show(ctx, |ui| {
            egui::Grid::new("shortcuts").striped(true).show(ui, |ui| {
                for a in ACTIONS.iter().filter(|a| !a.keys.is_empty()) {
                    ui.strong(a.action.keys_text());
                    ui.label(a.label);
                    ui.end_row();
                }
                for (gesture, what) in GESTURES {
                    ui.strong(*gesture);
                    ui.label(*what);
                    ui.end_row();
                }
            });
        });
        let mut close = false;
        if let Some((kind, text)) = &mut self.path_prompt {
            let (title, what, verb) = match kind {
                PathPrompt::Open => ("Open bench file", "Path of the .bench.ron file:", "Open"),
                PathPrompt::SaveAs => ("Save bench as", "Path of the .bench.ron file:", "Save"),
                PathPrompt::Export(_, true) => ("Export view", "Path of the PNG picture:", "Export"),
                PathPrompt::Export(_, false) => ("Export view", "Path of the CSV table:", "Export"),
                PathPrompt::OpenDrawer => ("Open drawer", "Path of the .drawer.ron file:", "Open"),
                PathPrompt::MountSheet => {
                    ("Export mount sheet", "Path of the mount sheet (.csv, .svg or .dxf):", "Export")
                }
                PathPrompt::SaveDrawer => ("Save drawer as", "Path of the .drawer.ron file:", "Save"),
                PathPrompt::LabSheet(..) => (
                    "Lab sheet",
                    "Path of the class's PDF (the answer key goes beside it, ending -answers.pdf):",
                    "Write",
                ),
                PathPrompt::Drawing => {
                    ("Export drawing", "Path of the drawing (.svg or .png; .txt for the readout):", "Export")
                }
            };
            let mut go = false;
            let drawing = *kind == PathPrompt::Drawing;
            let size = &mut self.drawing_size;
            egui::Window::new(title).collapsible(false).show(ctx, |ui| {
                let label = ui.label(what);
                let r = ui.text_edit_singleline(text).labelled_by(label.id);
                go = r.lost_focus() && ui.input(|i| i.key_pressed(egui::Key::Enter));
                if let PathPrompt::LabSheet(lab, paper) = kind {
                    ui.horizontal(|ui| {
                        ui.label("Lab:");
                        for l in lumenrail_bench::lab::Lab::ALL {
                            ui.radio_value(lab, l, l.word());
                        }
                    });
                    ui.horizontal(|ui| {
                        ui.label("Paper:");
                        ui.radio_value(paper, lumenrail_export::lab::Paper::A4, "A4");
                        ui.radio_value(paper, lumenrail_export::lab::Paper::Letter, "Letter");
                    });
                }
                if drawing {
                    ui.horizontal(|ui| {
                        let l = ui.label("Size (width x height, pixels for PNG):");
                        let field = ui.add(egui::TextEdit::singleline(size).desired_width(110.0)).labelled_by(l.id);
                        if drawing_size(size).is_none() {
                            field.on_hover_text("WIDTHxHEIGHT, each 480–8000 wide and 240–8000 high, e.g. 1600x700");
                            ui.colored_label(ui.visuals().warn_fg_color, "e.g. 1600x700 (from 480x240)");
                        }
                    });
                }
                ui.horizontal(|ui| {
                    go |= ui.button(verb).clicked();
                    close |= ui.button("Cancel").clicked();
                });
            });
            if go {
                let (kind, path) = (*kind, PathBuf::from(text.trim()));
                close = match kind {
                    PathPrompt::Open => {
                        self.replace(crate::guard::Replacement::Open(path));
                        true
                    }
                    PathPrompt::SaveAs => {
                        let after = self.after_save.take();
                        let saved = self.save_over(path, after);
                        // A held-back save (the file changed on disk) asks its own question now.
                        saved || self.disk_conflict.is_some()
                    }
                    PathPrompt::Export(view, png) => self.export_view(view, png, &path),
                    PathPrompt::Drawing => self.export_drawing(&path),
                    PathPrompt::OpenDrawer => self.open_drawer(path),
                    PathPrompt::MountSheet => self.export_mount_sheet(&path),
                    PathPrompt::LabSheet(lab, paper) => self.write_lab_sheet(lab, paper, &path),
                    PathPrompt::SaveDrawer => self.save_drawer(path),
                };
            }
        }
        if close {
            self.path_prompt = None;
        }
    }
}

/// A drawing size typed as `WIDTHxHEIGHT`, within what the rail drawing is laid out for.
fn drawing_size(text: &str) -> Option<(u32, u32)> {
    let (w, h) = text.split_once(['x', 'X', '×'])?;
    let (w, h) = (w.trim().parse::<u32>().ok()?, h.trim().parse::<u32>().ok()?);
    let (min_w, min_h) = lumenrail_export::rail::RAIL_MIN_SIZE;
    (f64::from(w) >= min_w && f64::from(h) >= min_h && w <= 8000 && h <= 8000).then_some((w, h))
}

/// The safety cautions shown in the Help menu.
pub const SAFETY: &str = "Lumenrail plans benches; it does not certify them.\n\n\
• Lasers: every laser has a hazard class (IEC 60825-1; ANSI Z136). Lenses gather a beam, so a bench can make a \
low-class beam hazardous. Keep beams below eye level, end them on beam stops, align at low power. Class 3B and 4 \
work needs a laser safety officer and the eyewear that officer names. Lumenrail classifies nothing: the \
laser's class, the applicable standard and the laser safety officer decide. The peak irradiances it gives \
(2P/πw² in W/cm²) are figures for that officer, not a hazard class.\n\
• Stray reflections: every glass surface reflects some light (about 4% uncoated) and curved ones focus it. \
The stray-focus map (readout, and the numbered diamonds on the rail) shows where a bench's reflections \
focus and how strong they are; block those paths with beam stops whenever an element is added, tilted or \
flipped. It is paraxial: tilted or decentred parts send their reflections elsewhere.\n\
• The sun: never look at the sun through any optic; a lens in sunlight can start a fire.\n\
• Lamps get hot, burn skin and char nearby material; some emit UV.\n\
• Local rules and manufacturers' instructions come first. Eyes and eyewear: an eye-care professional.";

/// The getting-started page of the Help menu: a first session, and where each panel is.
pub const GETTING_STARTED: &str = "A first session\n\n\
1. Open a demo: File, Demo benches, for example \"one-lens-screen\" (a slide projected onto a screen).\n\
2. Drag the lens along the rail in the middle. The rays, the image arrow and every figure follow as you drag; \
the part stops against its neighbour's carrier (hold Alt to pass it). Left and Right arrows nudge it.\n\
3. Read the image in the readout on the right: where it forms, real or virtual, which way up, its \
magnification, and the spot size on each screen. \"Move Screen to best focus\" puts the screen where the \
image is sharpest.\n\
4. Click a part to edit it in the part sheet on the left; type a value and press Enter (Escape puts the old \
value back). Ctrl+Z undoes any change.\n\
5. Save with Ctrl+S (File, Save as, for a new file).\n\n\
Where things are\n\n\
- The rail (middle): the bench drawn to scale from the side, the millimetre scale at the bottom. Scroll to \
zoom about the pointer, drag empty space to pan, View, Fit bench to see it all.\n\
- The part sheet (left): the selected part's numbers, its own focal lengths, flip and lock.\n\
- The readout (right): every figure of the bench and its warnings; click a warning about a part to select it.\n\
- The views (bottom): spot diagram, ray fans, focus sweep, colour, field and, for a bench with a laser, the \
beam view (the beam's 1/e² diameter along the rail, its waists dotted, the parts as lines), with CSV and PNG \
export.\n\
- A laser (a `laser: (…)` line in the bench file; demos laser-expander and laser-pinhole): its 1/e² envelope \
is shaded on the rail, the readout gives its size at every part, its waists and their irradiance, and the \
stray-focus map lists where the lens surfaces' reflections focus (the strongest marked on the rail as \
numbered diamonds). Read the laser cautions in Help, Safety.\n\
- Help, Keyboard shortcuts lists every key.";
