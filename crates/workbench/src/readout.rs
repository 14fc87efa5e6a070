//! The readout: every figure of the bench's report for a person, with its warnings (a warning about a
//! part selects that part when clicked).

use crate::Workbench;
use lumenrail_bench::model::ObjectSpec;
use lumenrail_bench::report::fixed;

/// Lists longer than this (intermediate images, screens before the last) fold away in the readout.
const FOLD_AFTER: usize = 4;

impl Workbench {
    pub(crate) fn readout_ui(&mut self, ui: &mut egui::Ui) {
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
            let intermediate = &r.images[..r.images.len() - 1];
            let list = |ui: &mut egui::Ui| {
                for (k, img) in intermediate.iter().enumerate() {
                    let at = img.at_mm.map_or_else(|| "at infinity".to_string(), |z| format!("at {z:.3} mm"));
                    let m = img.magnification.map_or_else(String::new, |m| format!(", m = {m:.4}"));
                    ui.label(format!(
                        "Intermediate image {} after {}: {at}, {}{m}",
                        k + 1,
                        img.after_part,
                        if img.real { "real" } else { "virtual" }
                    ));
                }
            };
            // A long train's images fold away (a folded list costs a frame nothing).
            if intermediate.len() <= FOLD_AFTER {
                list(ui);
            } else {
                egui::CollapsingHeader::new(format!("{} intermediate images", intermediate.len())).show(ui, list);
            }
        }
        if let Some(v) = &r.viewing {
            use lumenrail_bench::report::ViewingWords as _;
            ui.label(v.words());
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
        // Instrument figures and the eye: the report's own lines (one source for the text and the readout).
        let mut lines = String::new();
        if let Some(i) = &r.instrument {
            i.write_text(&mut lines);
        }
        if let Some(e) = &r.eye {
            e.write_text(&mut lines);
        }
        for line in lines.lines().filter(|l| !l.trim().is_empty()) {
            if line.starts_with(' ') {
                ui.label(line.trim());
            } else {
                ui.strong(line);
            }
        }
        let ab = &r.aberrations;
        if let (Some(nw), Some(airy)) = (ab.working_f_number, ab.airy_radius_um) {
            ui.label(format!("Working f-number {nw:.2}, Airy radius {airy:.2} µm"));
        }
        if let (Some(z), Some(rms)) = (ab.white_light_focus_at_mm, ab.white_light_rms_spot_um)
            && r.colour.len() > 1
        {
            ui.label(format!(
                "Best focus for white light (all wavelengths, equal weights) at {} mm, RMS {rms:.2} µm",
                fixed(z, 3)
            ));
        }
        for w in &r.wavefront {
            let verdict = if w.diffraction_limited { "diffraction-limited" } else { "not diffraction-limited" };
            ui.label(format!(
                "Wavefront, {} point: RMS {} waves (tilt removed), Strehl {}: {verdict} (Maréchal: RMS ≤ λ/14)",
                w.point,
                fixed(w.rms_waves, 3),
                fixed(w.strehl, 3)
            ));
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
        let mut screen_ui = |ui: &mut egui::Ui, s: &lumenrail_bench::report::ScreenFigures| {
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
        };
        // The last screen always shows; the others fold away on a long train.
        let (others, last) = r.screens.split_at(r.screens.len().saturating_sub(1));
        if others.len() < FOLD_AFTER {
            for s in others {
                screen_ui(ui, s);
            }
        } else {
            ui.separator();
            egui::CollapsingHeader::new(format!("{} more screens", others.len())).show(ui, |ui| {
                for s in others {
                    screen_ui(ui, s);
                }
            });
        }
        for s in last {
            screen_ui(ui, s);
        }
        if let Some(beam) = &r.beam {
            ui.separator();
            ui.strong(format!("Laser beam at {} nm (1/e² diameters)", fixed(beam.wavelength_nm, 1)));
            let estimate = if beam.shares_are_estimates { " (estimate: M² > 1)" } else { "" };
            for p in &beam.parts {
                ui.add(
                    egui::Label::new(format!(
                        "{}: {} mm across, {}% passes{estimate}",
                        p.part,
                        fixed(p.diameter_mm, 3),
                        fixed(100.0 * p.passed_share, 2)
                    ))
                    .wrap(),
                );
            }
            for w in beam.waists.iter().filter(|w| w.real) {
                let after =
                    w.after_part.as_ref().map_or_else(|| "the laser's own".to_string(), |p| format!("after {p}"));
                let irr = w
                    .peak_irradiance_w_per_cm2
                    .map_or_else(String::new, |i| format!(", peak {} W/cm²", lumenrail_bench::report::fixed(i, 3)));
                ui.add(
                    egui::Label::new(format!(
                        "waist {after} at {} mm: {} mm across, Rayleigh range {} mm, far-field half-angle {} mrad{irr}",
                        fixed(w.at_mm, 3),
                        fixed(w.diameter_mm, 4),
                        fixed(w.rayleigh_range_mm, 2),
                        fixed(w.far_field_half_angle_mrad, 4)
                    ))
                    .wrap(),
                );
            }
            for sc in &beam.screens {
                ui.label(format!("on {}: {} mm across", sc.part, fixed(sc.diameter_mm, 3)));
            }
            // The laser caution is among the warnings below (the report's own).
        }
        if r.vignetting_pending {
            ui.separator();
            ui.horizontal(|ui| {
                ui.spinner();
                ui.label("Vignetting of the off-axis point: being computed");
            });
        }
        if r.sharpness_pending {
            ui.horizontal(|ui| {
                ui.spinner();
                ui.label("Sharpness (wavefront, MTF) and the stray-focus map: being computed");
            });
        }
        if let Some(map) = &r.stray {
            ui.separator();
            stray_table_ui(ui, map);
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
        // A clipped field: offer to shrink it to what passes whole.
        let full = match self.bench.object {
            ObjectSpec::Point { height_mm, .. } => height_mm,
            ObjectSpec::Distant { field_deg, .. } => field_deg,
        };
        let mut shrink = None;
        if let Some(f) = r.unclipped_field.filter(|f| f.abs() < full.abs() * (1.0 - 1e-6) && *f != 0.0) {
            let unit = if matches!(self.bench.object, ObjectSpec::Point { .. }) { "mm" } else { "°" };
            // Rounded down, so that the shrunk field still passes whole.
            let shown = (f.abs() * 1e3).floor() / 1e3 * f.signum();
            if ui.button(format!("Shrink the field to {} {unit}, which passes whole", fixed(shown, 3))).clicked() {
                shrink = Some(shown);
            }
        }
        if let Some(f) = shrink {
            let mut s = crate::BenchSettings::of(&self.bench);
            s.object = match s.object {
                ObjectSpec::Point { at_mm, .. } => ObjectSpec::Point { at_mm, height_mm: f },
                ObjectSpec::Distant { beam_diameter_mm, .. } => ObjectSpec::Distant { field_deg: f, beam_diameter_mm },
            };
            self.apply(crate::Edit::Settings(Box::new(s)), None);
        }
        if let Some(index) = to_best_focus {
            self.move_screen_to_best_focus(index);
        }
        if select.is_some() {
            self.selected = select;
        }
    }
}

/// Rows of the stray-focus table (the text and JSON reports have them all).
const STRAY_TABLE_ROWS: usize = 8;

/// The stray-focus map as a table, strongest first, numbered as the rail's marks are.
fn stray_table_ui(ui: &mut egui::Ui, map: &lumenrail_bench::stray::StrayFigures) {
    use lumenrail_bench::stray::share_words;
    let what = if map.laser { "the laser's stray beams" } else { "paraxial foci" };
    ui.strong(format!("Stray-focus map at {} nm ({what})", fixed(map.wavelength_nm, 1)));
    if map.laser {
        ui.add(
            egui::Label::new(
                "Reflections of a laser beam can injure eyes where they focus or leave the bench: block them with \
                 beam stops (see the laser caution below).",
            )
            .wrap(),
        );
    }
    // Three columns that wrap, so that the table keeps to the readout's width.
    let column = 0.4 * ui.available_width();
    egui::Grid::new("stray table").striped(true).num_columns(3).max_col_width(column).show(ui, |ui| {
        for head in ["#", "reflection, power", "brightest focus: place, size, peak"] {
            ui.strong(head);
        }
        ui.end_row();
        for (k, r) in map.reflections.iter().take(STRAY_TABLE_ROWS).enumerate() {
            ui.label(format!("{}", k + 1));
            ui.add(egui::Label::new(format!("{} from {}, {}%", r.kind, r.label(), share_words(r.power_share))).wrap());
            let brightest = r.foci.iter().max_by(|a, b| {
                a.peak_irradiance_w_per_cm2.unwrap_or(0.0).total_cmp(&b.peak_irradiance_w_per_cm2.unwrap_or(0.0))
            });
            let focus = brightest.map_or_else(
                || "no real focus".to_string(),
                |f| {
                    let size = f.diameter_mm.map_or_else(|| "a point".to_string(), |d| format!("{} mm", fixed(d, 4)));
                    let peak = f.peak_irradiance_w_per_cm2.map_or_else(String::new, |p| format!(", {p:.3e} W/cm²"));
                    let bound = if f.paraxial { "" } else { " (an upper bound)" };
                    format!("{} mm {}, {size}{peak}{bound}", fixed(f.at_mm, 2), f.place)
                },
            );
            ui.add(egui::Label::new(focus).wrap());
            ui.end_row();
        }
    });
    if let Some(note) = &map.note {
        ui.add(egui::Label::new(format!("({note})")).wrap());
    }
    if map.reflections.len() > STRAY_TABLE_ROWS {
        ui.label(format!(
            "and {} weaker reflections (lumenrail report lists them all)",
            map.reflections.len() - STRAY_TABLE_ROWS
        ));
    }
}
