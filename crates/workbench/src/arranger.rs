//! The aims panel: the bench's aims (each with what the bench reaches, met or missed, from the report),
//! adding and removing aims as undoable edits, and the arranger run in the background on the drawer with
//! a progress bar and Cancel. Its ranked candidates preview on the rail when hovered, and Apply places
//! one as a single undo step.

use crate::{Edit, Workbench};
use lumenrail_bench::arrange::{ArrangeError, Arrangement, Options, Progress, arrange};
use lumenrail_bench::model::{Aim, Part, PartKind};
use std::sync::Arc;
use std::sync::atomic::Ordering;
use std::thread::JoinHandle;

/// The kinds of aim the panel adds, with the labels of their two fields.
const AIM_KINDS: [(&str, &str, &str); 9] = [
    ("sharp image on a screen", "RMS spot at most (µm)", ""),
    ("magnification", "magnification", "± tolerance"),
    ("object to image distance", "distance (mm)", "± tolerance (mm)"),
    ("total length at most", "length (mm)", ""),
    ("angular magnification (afocal)", "angular magnification", "± tolerance"),
    ("beam expansion (afocal)", "expansion ratio", "± tolerance"),
    ("image height", "height (mm)", "± tolerance (mm)"),
    ("working f-number range", "from f/", "to f/"),
    ("carrier gap at least", "gap (mm)", ""),
];

/// A search running in the background.
struct Running {
    progress: Arc<Progress>,
    handle: JoinHandle<Result<Arrangement, ArrangeError>>,
    /// The drawer and bench it searches (to apply a candidate from the same ones).
    drawer: lumenrail_bench::drawer::Drawer,
}

/// The aims panel's state.
#[derive(Default)]
pub struct ArrangerPanel {
    /// The kind of aim the form adds (index into the kinds).
    kind: usize,
    /// The form's two fields and the screen it names.
    fields: (String, String),
    screen: Option<String>,
    /// Why the form's aim was not added.
    error: Option<String>,
    /// How many lenses to place: 1, 2 or 3 at most.
    pub max_parts: usize,
    running: Option<Running>,
    /// The last search's answer, with the drawer it searched.
    pub result: Option<(Arrangement, lumenrail_bench::drawer::Drawer)>,
    /// Why the last search could not run.
    pub failure: Option<String>,
    /// The candidate drawn on the rail as a preview (its parts), if any.
    pub preview: Option<Vec<Part>>,
    /// The candidate clicked, previewed until another is clicked or one is applied.
    pub pinned: Option<usize>,
}

impl std::fmt::Debug for ArrangerPanel {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("ArrangerPanel").field("running", &self.running.is_some()).finish_non_exhaustive()
    }
}

impl ArrangerPanel {
    /// Whether a search is running.
    pub fn running(&self) -> bool {
        self.running.is_some()
    }

    /// The running search's progress, 0 to 1.
    pub fn fraction(&self) -> Option<f32> {
        self.running.as_ref().map(|r| r.progress.fraction())
    }
}

impl Workbench {
    /// Starts the arranger on the bench's aims and the drawer, in the background on all cores but one.
    pub fn start_arranger(&mut self) {
        if self.arranger.running.is_some() {
            return;
        }
        let progress = Arc::new(Progress::default());
        let (bench, drawer) = (self.bench.clone(), self.drawer.drawer.clone());
        let max_parts = self.arranger.max_parts.clamp(1, 3);
        let options = Options { min_parts: 1, max_parts, top: 10, ..Options::default() };
        let p = Arc::clone(&progress);
        let d = drawer.clone();
        let handle = std::thread::spawn(move || {
            let cores = std::thread::available_parallelism().map_or(1, |n| n.get());
            let threads = cores.saturating_sub(1).max(1);
            match rayon::ThreadPoolBuilder::new().num_threads(threads).build() {
                Ok(pool) => pool.install(|| arrange(&bench, &d, &options, &p)),
                Err(_) => arrange(&bench, &d, &options, &p),
            }
        });
        self.arranger.running = Some(Running { progress, handle, drawer });
        self.arranger.failure = None;
        self.arranger.preview = None;
        self.arranger.pinned = None;
        self.status = "arranging: searching the drawer…".into();
    }

    /// Asks the running search to stop; it returns what it has ranked.
    pub fn cancel_arranger(&mut self) {
        if let Some(r) = &self.arranger.running {
            r.progress.cancel.store(true, Ordering::Relaxed);
        }
    }

    /// Takes a finished search's answer; true while one is still running.
    pub fn poll_arranger(&mut self) -> bool {
        let done = self.arranger.running.as_ref().is_some_and(|r| r.handle.is_finished());
        if done && let Some(r) = self.arranger.running.take() {
            match r.handle.join() {
                Ok(Ok(a)) => {
                    let met = a.candidates.iter().filter(|c| c.meets_all()).count();
                    self.status = if a.cancelled {
                        "arranging cancelled: the ranking so far".into()
                    } else if met > 0 {
                        format!("arranged: {met} of the best {} meet every aim", a.candidates.len())
                    } else {
                        "arranged: nothing meets every aim; the nearest misses are listed".into()
                    };
                    self.arranger.result = Some((a, r.drawer));
                }
                Ok(Err(e)) => self.arranger.failure = Some(e.to_string()),
                Err(_) => self.arranger.failure = Some("the search stopped unexpectedly".into()),
            }
        }
        self.arranger.running.is_some()
    }

    /// Places candidate `k` of the last search on the bench, as one undo step.
    pub fn apply_candidate(&mut self, k: usize) {
        let Some((a, drawer)) = &self.arranger.result else { return };
        let Some(c) = a.candidates.get(k) else { return };
        let placed = lumenrail_bench::arrange::apply(&self.bench, drawer, c);
        let new_parts: Vec<Part> = placed.parts[self.bench.parts.len()..].to_vec();
        let names: Vec<String> = new_parts.iter().map(|p| p.name.clone()).collect();
        self.apply(Edit::AddParts(new_parts), None);
        self.arranger.preview = None;
        self.arranger.pinned = None;
        self.status = format!("placed {}", names.join(", "));
    }

    /// The aim the form describes, or why it describes none.
    fn form_aim(&self) -> Result<Aim, String> {
        let p = &self.arranger;
        let num = |t: &str, what: &str| {
            t.trim().parse::<f64>().map_err(|_| format!("{what}: \"{}\" is not a number", t.trim()))
        };
        let (a, b) = (&p.fields.0, &p.fields.1);
        let labels = AIM_KINDS[p.kind];
        let first = || num(a, labels.1);
        let second = || num(b, labels.2);
        Ok(match p.kind {
            0 => Aim::SharpOn {
                screen: p.screen.clone().ok_or_else(|| "choose the screen the image should be sharp on".to_string())?,
                rms_um: first()?,
            },
            1 => Aim::Magnification { value: first()?, tolerance: second()? },
            2 => Aim::ObjectToImage { distance_mm: first()?, tolerance_mm: second()? },
            3 => Aim::TotalLength { at_most_mm: first()? },
            4 => Aim::AngularMagnification { value: first()?, tolerance: second()? },
            5 => Aim::BeamExpansion { ratio: first()?, tolerance: second()? },
            6 => Aim::ImageHeight { height_mm: first()?, tolerance_mm: second()? },
            7 => Aim::WorkingFNumber { min: first()?, max: second()? },
            _ => Aim::CarrierGap { at_least_mm: first()? },
        })
    }

    /// Adds the form's aim as one undo step, unless validation refuses it (then the form says why).
    fn add_form_aim(&mut self) {
        match self.form_aim() {
            Ok(aim) => {
                let mut aims = self.bench.aims.clone();
                aims.push(aim);
                let mut trial = self.bench.clone();
                trial.aims = aims.clone();
                let refusal = lumenrail_bench::validate::validate(&trial)
                    .into_iter()
                    .find(|f| f.severity == lumenrail_bench::validate::Severity::Error && f.field == Some("aims"));
                match refusal {
                    Some(f) => self.arranger.error = Some(f.message),
                    None => {
                        self.arranger.error = None;
                        self.apply(Edit::Aims(aims), None);
                    }
                }
            }
            Err(e) => self.arranger.error = Some(e),
        }
    }
}

/// Draws the aims panel.
pub(crate) fn aims_ui(wb: &mut Workbench, ui: &mut egui::Ui) {
    if wb.poll_arranger() {
        ui.ctx().request_repaint_after(std::time::Duration::from_millis(100));
    }
    ui.heading("Aims");
    if wb.bench.aims.is_empty() {
        ui.add(
            egui::Label::new("No aims yet: add what the bench should do, then let the arranger search the drawer.")
                .wrap(),
        );
    }
    let mut remove = None;
    for (k, status) in wb.evaluation.report.aims.iter().enumerate() {
        ui.horizontal(|ui| {
            if ui.small_button("Remove").on_hover_text("remove this aim").clicked() {
                remove = Some(k);
            }
            let colour = if status.met { ui.visuals().text_color() } else { ui.visuals().warn_fg_color };
            ui.add(egui::Label::new(egui::RichText::new(status.line()).color(colour)).wrap());
        });
    }
    if let Some(k) = remove {
        let mut aims = wb.bench.aims.clone();
        aims.remove(k);
        wb.apply(Edit::Aims(aims), None);
    }
    ui.separator();
    let p = &mut wb.arranger;
    egui::ComboBox::from_label("new aim").selected_text(AIM_KINDS[p.kind].0).show_ui(ui, |ui| {
        for (k, (word, _, _)) in AIM_KINDS.iter().enumerate() {
            ui.selectable_value(&mut p.kind, k, *word);
        }
    });
    let (_, first, second) = AIM_KINDS[p.kind];
    if p.kind == 0 {
        let screens: Vec<String> = wb
            .bench
            .parts
            .iter()
            .filter(|q| matches!(q.kind, PartKind::Screen { .. }))
            .map(|q| q.name.clone())
            .collect();
        if p.screen.as_ref().is_none_or(|s| !screens.contains(s)) {
            p.screen = screens.first().cloned();
        }
        egui::ComboBox::from_label("screen")
            .selected_text(p.screen.clone().unwrap_or_else(|| "no screen".into()))
            .show_ui(ui, |ui| {
                for s in &screens {
                    ui.selectable_value(&mut p.screen, Some(s.clone()), s);
                }
            });
    }
    egui::Grid::new("aim-form").num_columns(2).show(ui, |ui| {
        let l = ui.label(first);
        ui.add(egui::TextEdit::singleline(&mut p.fields.0).desired_width(90.0)).labelled_by(l.id);
        ui.end_row();
        if !second.is_empty() {
            let l = ui.label(second);
            ui.add(egui::TextEdit::singleline(&mut p.fields.1).desired_width(90.0)).labelled_by(l.id);
            ui.end_row();
        }
    });
    if let Some(e) = &p.error {
        ui.add(
            egui::Label::new(egui::RichText::new(format!("not added: {e}")).color(ui.visuals().warn_fg_color)).wrap(),
        );
    }
    if ui.button("Add aim").clicked() {
        wb.add_form_aim();
    }
    ui.separator();
    ui.strong("Arranger");
    ui.add(
        egui::Label::new(format!(
            "Searches the drawer ({} items) for lenses, each way round, placed between the bench's parts, that meet the aims.",
            wb.drawer.drawer.items.len()
        ))
        .wrap(),
    );
    if wb.arranger.max_parts == 0 {
        wb.arranger.max_parts = 2;
    }
    ui.horizontal(|ui| {
        ui.label("lenses at most");
        for n in 1..=3 {
            ui.selectable_value(&mut wb.arranger.max_parts, n, format!("{n}"));
        }
    });
    if let Some(f) = wb.arranger.fraction() {
        ui.add(egui::ProgressBar::new(f).show_percentage());
        if ui.button("Cancel").clicked() {
            wb.cancel_arranger();
        }
    } else if ui.add_enabled(!wb.bench.aims.is_empty(), egui::Button::new("Arrange")).clicked() {
        wb.start_arranger();
    }
    if let Some(e) = &wb.arranger.failure {
        ui.add(egui::Label::new(egui::RichText::new(e).color(ui.visuals().warn_fg_color)).wrap());
    }
    let mut apply = None;
    let mut hovered = None;
    let mut pinned = wb.arranger.pinned;
    if let Some((a, drawer)) = &wb.arranger.result {
        ui.label(format!("{} choices of lenses looked at, {} traced exactly", a.combinations, a.traced));
        for (k, c) in a.candidates.iter().enumerate() {
            let parts: Vec<String> = c
                .parts
                .iter()
                .map(|q| format!("{}{} at {:.1} mm", q.label, if q.turned { " (turned)" } else { "" }, q.at_mm))
                .collect();
            let rms = c.rms_on_axis_um.map_or_else(|| "—".to_string(), |r| format!("{r:.2} µm"));
            let text = format!("{}. {}: {} of {} aims, RMS {rms}", k + 1, parts.join(", "), c.met, c.aims.len());
            ui.horizontal(|ui| {
                if ui.small_button("Apply").on_hover_text("place these lenses (one undo step)").clicked() {
                    apply = Some(k);
                }
                let colour = if c.meets_all() { ui.visuals().text_color() } else { ui.visuals().warn_fg_color };
                let r = ui
                    .add(egui::Label::new(egui::RichText::new(text).color(colour)).wrap().sense(egui::Sense::click()));
                let lines: Vec<String> = c.aims.iter().map(|s| s.line()).collect();
                if r.clicked() {
                    pinned = if pinned == Some(k) { None } else { Some(k) };
                }
                if r.hovered() || pinned == Some(k) && hovered.is_none() {
                    hovered = Some(
                        lumenrail_bench::arrange::apply(&wb.bench, drawer, c).parts[wb.bench.parts.len()..].to_vec(),
                    );
                }
                r.on_hover_text(lines.join("\n"));
            });
        }
    }
    wb.arranger.pinned = pinned;
    if hovered.is_some() || wb.arranger.preview.is_some() {
        wb.arranger.preview = hovered;
    }
    if let Some(k) = apply {
        wb.apply_candidate(k);
    }
}
