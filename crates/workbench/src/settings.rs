//! The bench settings sheet: what is not a part (the title, the rail's length, the object, the
//! wavelengths). Opened from Edit, Bench settings or by clicking the object on the rail. Typed values are
//! checked as they are typed and applied together with Apply, as one undo step; a refusal says why.

use crate::document::BenchSettings;
use crate::{Edit, Workbench};
use lumenrail_bench::model::ObjectSpec;
use lumenrail_bench::validate::{Severity, validate};

/// The sheet's open state and the texts being typed.
#[derive(Debug, Clone, Default)]
pub(crate) struct SettingsSheet {
    /// Whether the sheet is open.
    pub(crate) open: bool,
    /// The texts, filled from the bench when the sheet opens.
    texts: Option<Texts>,
    /// Why the typed settings cannot be applied.
    error: Option<String>,
}

#[derive(Debug, Clone, PartialEq)]
struct Texts {
    title: String,
    rail: String,
    distant: bool,
    /// Object position (mm) or field angle (°).
    first: String,
    /// Object height (mm) or beam diameter (mm).
    second: String,
    wavelengths: String,
    primary: String,
    /// The wavelengths' weights, comma-separated; empty for equal weights.
    weights: String,
}

/// A named set of wavelengths.
pub struct WavelengthSet {
    /// The set's name on its button.
    pub name: &'static str,
    /// Wavelengths, nm.
    pub nm: &'static [f64],
    /// Index of the primary wavelength.
    pub primary: usize,
    /// Relative weights (empty: equal).
    pub weights: &'static [f64],
}

/// Named sets of wavelengths. The Fraunhofer lines F, d and C (wavelengths as ISO 7944 tabulates them)
/// equally weighted; the same lines weighted 1 : 2 : 1 (the middle of the visible band counted twice, a
/// common practice for visual work, not a standard); and the d line alone.
pub const WAVELENGTH_SETS: [WavelengthSet; 3] = [
    WavelengthSet { name: "visible: F, d, C lines", nm: &[486.1327, 587.5618, 656.2725], primary: 1, weights: &[] },
    WavelengthSet {
        name: "visible, weighted 1 : 2 : 1",
        nm: &[486.1327, 587.5618, 656.2725],
        primary: 1,
        weights: &[1.0, 2.0, 1.0],
    },
    WavelengthSet { name: "single line: d (587.6 nm)", nm: &[587.5618], primary: 0, weights: &[] },
];

fn list(v: &[f64]) -> String {
    v.iter().map(|w| format!("{w}")).collect::<Vec<_>>().join(", ")
}

impl Texts {
    fn of(s: &BenchSettings) -> Texts {
        let (distant, first, second) = match s.object {
            ObjectSpec::Point { at_mm, height_mm } => (false, at_mm, height_mm),
            ObjectSpec::Distant { field_deg, beam_diameter_mm } => (true, field_deg, beam_diameter_mm),
        };
        Texts {
            title: s.title.clone(),
            rail: format!("{}", s.rail_length_mm),
            distant,
            first: format!("{first}"),
            second: format!("{second}"),
            wavelengths: list(&s.wavelengths_nm),
            primary: s.wavelengths_nm.get(s.primary_wavelength).map_or_else(String::new, |w| format!("{w}")),
            weights: list(&s.wavelength_weights),
        }
    }

    /// The settings the texts say, or why they say none.
    fn settings(&self) -> Result<BenchSettings, String> {
        let num = |t: &str, what: &str| -> Result<f64, String> {
            t.trim().parse::<f64>().map_err(|_| format!("{what}: \"{}\" is not a number", t.trim()))
        };
        let rail = num(&self.rail, "rail length")?;
        let (a, b) = if self.distant {
            (num(&self.first, "field angle")?, num(&self.second, "beam diameter")?)
        } else {
            (num(&self.first, "object position")?, num(&self.second, "object height")?)
        };
        let object = if self.distant {
            ObjectSpec::Distant { field_deg: a, beam_diameter_mm: b }
        } else {
            ObjectSpec::Point { at_mm: a, height_mm: b }
        };
        let wavelengths: Vec<f64> = self
            .wavelengths
            .split([',', ' '])
            .filter(|t| !t.trim().is_empty())
            .map(|t| num(t, "wavelength"))
            .collect::<Result<_, _>>()?;
        let primary = num(&self.primary, "primary wavelength")?;
        let primary_wavelength = wavelengths
            .iter()
            .position(|w| (w - primary).abs() < 1e-9)
            .ok_or_else(|| format!("the primary wavelength {primary} nm is not one of the wavelengths"))?;
        let wavelength_weights: Vec<f64> = self
            .weights
            .split([',', ' ', ':'])
            .filter(|t| !t.trim().is_empty())
            .map(|t| num(t, "weight"))
            .collect::<Result<_, _>>()?;
        if !wavelength_weights.is_empty() && wavelength_weights.len() != wavelengths.len() {
            return Err(format!(
                "{} weights for {} wavelengths: give one weight per wavelength, or none for equal weights",
                wavelength_weights.len(),
                wavelengths.len()
            ));
        }
        Ok(BenchSettings {
            title: self.title.clone(),
            rail_length_mm: rail,
            object,
            wavelengths_nm: wavelengths,
            primary_wavelength,
            wavelength_weights,
        })
    }
}

impl Workbench {
    /// Opens the bench settings sheet, filled from the bench.
    pub fn open_settings(&mut self) {
        self.settings.open = true;
        self.settings.texts = Some(Texts::of(&BenchSettings::of(&self.bench)));
        self.settings.error = None;
    }

    /// Why `settings` cannot be applied to the bench (validation's first new error), if anything.
    fn settings_refusal(&self, settings: &BenchSettings) -> Option<String> {
        let before: Vec<String> =
            validate(&self.bench).into_iter().filter(|f| f.severity == Severity::Error).map(|f| f.message).collect();
        validate(&settings.applied_to(&self.bench))
            .into_iter()
            .find(|f| f.severity == Severity::Error && !before.contains(&f.message))
            .map(|f| f.message)
    }

    pub(crate) fn settings_ui(&mut self, ctx: &egui::Context) {
        if !self.settings.open {
            return;
        }
        let Some(mut texts) = self.settings.texts.clone() else {
            self.open_settings();
            return;
        };
        let mut open = true;
        let (mut apply, mut close) = (false, false);
        egui::Window::new("Bench settings").open(&mut open).default_width(380.0).show(ctx, |ui| {
            egui::Grid::new("settings-grid").num_columns(2).show(ui, |ui| {
                let row = |ui: &mut egui::Ui, label: &str, text: &mut String| {
                    let l = ui.label(label);
                    ui.add(egui::TextEdit::singleline(text).desired_width(180.0)).labelled_by(l.id);
                    ui.end_row();
                };
                row(ui, "title", &mut texts.title);
                row(ui, "rail length (mm)", &mut texts.rail);
                ui.label("object");
                ui.horizontal(|ui| {
                    ui.selectable_value(&mut texts.distant, false, "a point on the rail");
                    ui.selectable_value(&mut texts.distant, true, "far away");
                });
                ui.end_row();
                if texts.distant {
                    row(ui, "field angle of the off-axis point (degrees)", &mut texts.first);
                    row(ui, "beam diameter at the first part (mm)", &mut texts.second);
                } else {
                    row(ui, "object position (mm)", &mut texts.first);
                    row(ui, "object height, off-axis point (mm)", &mut texts.second);
                }
                row(ui, "wavelengths (nm, comma-separated)", &mut texts.wavelengths);
                row(ui, "primary wavelength (nm)", &mut texts.primary);
                row(ui, "weights (one per wavelength; empty: equal)", &mut texts.weights);
            });
            ui.horizontal_wrapped(|ui| {
                ui.label("wavelength sets:");
                for set in &WAVELENGTH_SETS {
                    if ui.button(set.name).clicked() {
                        texts.wavelengths = list(set.nm);
                        texts.primary = format!("{}", set.nm[set.primary]);
                        texts.weights = list(set.weights);
                    }
                }
            });
            if let Some(e) = &self.settings.error {
                ui.add(
                    egui::Label::new(
                        egui::RichText::new(format!("not applied: {e}")).color(ui.visuals().warn_fg_color),
                    )
                    .wrap(),
                );
            }
            ui.horizontal(|ui| {
                apply = ui.button("Apply").clicked();
                close = ui.button("Close").clicked();
            });
        });
        if Some(&texts) != self.settings.texts.as_ref() {
            self.settings.error = None;
        }
        if apply {
            match texts.settings().map_err(Some).and_then(|s| match self.settings_refusal(&s) {
                Some(why) => Err(Some(why)),
                None if s == BenchSettings::of(&self.bench) => Err(None),
                None => Ok(s),
            }) {
                Ok(s) => {
                    self.settings.error = None;
                    self.apply(Edit::Settings(Box::new(s)), None);
                    self.status = "bench settings applied".into();
                }
                Err(why) => self.settings.error = why,
            }
        }
        self.settings.texts = Some(texts);
        if close || !open {
            self.settings.open = false;
        }
    }
}
