//! The tolerance window (View, Tolerance run): the sensitivities and the budget of
//! `lumenrail_bench::tolerance`, computed once per bench revision from its evaluation, and the Monte Carlo
//! run on a background thread with its own rayon pool (all cores but one), a progress bar, Cancel, and a
//! histogram of the trials' RMS spots. The window keeps drawing while the trials run.

use crate::Workbench;
use lumenrail_bench::arrange::Progress;
use lumenrail_bench::tolerance::{
    Distribution, MonteCarlo, MonteCarloOptions, Perturber, ToleranceError, ToleranceRun, monte_carlo,
};
use std::sync::Arc;
use std::sync::atomic::Ordering;
use std::thread::JoinHandle;

/// The most trials the window runs (a typing slip of many zeros would otherwise run for hours).
pub const MAX_TRIALS: usize = 1_000_000;

/// A revision's tolerance run and the trial-ready bench its Monte Carlo shares with the worker thread.
type Prepared = (ToleranceRun, Arc<Perturber>);

/// A Monte Carlo running in the background.
struct Running {
    progress: Arc<Progress>,
    handle: JoinHandle<Result<MonteCarlo, ToleranceError>>,
    /// The bench revision it runs on.
    revision: u64,
}

/// The tolerance window's state.
#[derive(Default)]
pub struct ToleranceWindow {
    /// Whether the window is open.
    pub open: bool,
    /// Trials as typed.
    pub trials: String,
    /// Seed as typed.
    pub seed: String,
    /// Draw errors from the truncated normal (σ = a/3) instead of uniformly.
    pub normal: bool,
    /// Refocus the screen in each trial.
    pub refocus: bool,
    /// The run of the last revision (sensitivities and budget) and its trial-ready bench.
    cache: Option<(u64, Result<Prepared, String>)>,
    running: Option<Running>,
    /// The last Monte Carlo's answer and the revision it ran on.
    pub result: Option<(u64, MonteCarlo)>,
    /// Why the last Monte Carlo did not finish, or what the fields are missing.
    pub failure: Option<String>,
}

impl std::fmt::Debug for ToleranceWindow {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("ToleranceWindow").field("open", &self.open).field("running", &self.running.is_some()).finish()
    }
}

impl ToleranceWindow {
    /// Whether a Monte Carlo is running.
    pub fn running(&self) -> bool {
        self.running.is_some()
    }

    /// The running Monte Carlo's share done, 0 to 1.
    pub fn fraction(&self) -> Option<f32> {
        self.running.as_ref().map(|r| r.progress.fraction())
    }

    /// The options the fields say, or what is wrong with them.
    pub fn options(&self) -> Result<MonteCarloOptions, String> {
        let trials = match self.trials.trim() {
            "" => lumenrail_bench::tolerance::DEFAULT_TRIALS,
            t => t
                .parse::<usize>()
                .ok()
                .filter(|n| (1..=MAX_TRIALS).contains(n))
                .ok_or_else(|| format!("trials \"{t}\" must be a whole number from 1 to {MAX_TRIALS}"))?,
        };
        let seed = match self.seed.trim() {
            "" => lumenrail_bench::tolerance::DEFAULT_SEED,
            s => s.parse::<u64>().map_err(|_| format!("the seed \"{s}\" must be a whole number of at least 0"))?,
        };
        let distribution = if self.normal { Distribution::NORMAL } else { Distribution::Uniform };
        Ok(MonteCarloOptions { trials, seed, distribution, refocus: self.refocus })
    }
}

impl Workbench {
    /// The tolerance run (sensitivities and budget) of the current bench, computed once per revision.
    pub fn tolerance_run(&mut self) -> Result<&ToleranceRun, String> {
        let fresh = self.tolerance.cache.as_ref().is_some_and(|(rev, _)| *rev == self.revision);
        if !fresh {
            let run = ToleranceRun::of(&self.evaluation).map(|(r, p)| (r, Arc::new(p))).map_err(|e| e.to_string());
            self.tolerance.cache = Some((self.revision, run));
        }
        match &self.tolerance.cache.as_ref().expect("filled above").1 {
            Ok((run, _)) => Ok(run),
            Err(e) => Err(e.clone()),
        }
    }

    /// Starts the Monte Carlo with the window's options, in the background on all cores but one.
    pub fn start_monte_carlo(&mut self) {
        if self.tolerance.running.is_some() {
            return;
        }
        let options = match self.tolerance.options() {
            Ok(o) => o,
            Err(e) => {
                self.tolerance.failure = Some(e);
                return;
            }
        };
        if let Err(e) = self.tolerance_run() {
            self.tolerance.failure = Some(e);
            return;
        }
        let Some((_, Ok((run, perturber)))) = &self.tolerance.cache else { return };
        let (perturber, limits) = (Arc::clone(perturber), run.limits.clone());
        let progress = Arc::new(Progress::default());
        progress.total.store(options.trials, Ordering::Relaxed);
        let p = Arc::clone(&progress);
        let handle = std::thread::spawn(move || {
            let cores = std::thread::available_parallelism().map_or(1, |n| n.get());
            let threads = cores.saturating_sub(1).max(1);
            match rayon::ThreadPoolBuilder::new().num_threads(threads).build() {
                Ok(pool) => pool.install(|| monte_carlo(&perturber, &limits, &options, &p)),
                Err(_) => monte_carlo(&perturber, &limits, &options, &p),
            }
        });
        self.tolerance.running = Some(Running { progress, handle, revision: self.revision });
        self.tolerance.failure = None;
        self.status = format!("tolerance run: {} Monte Carlo trials…", options.trials);
    }

    /// Asks the running Monte Carlo to stop.
    pub fn cancel_monte_carlo(&mut self) {
        if let Some(r) = &self.tolerance.running {
            r.progress.cancel.store(true, Ordering::Relaxed);
        }
    }

    /// Takes a finished Monte Carlo's answer; true while one is still running.
    pub fn poll_monte_carlo(&mut self) -> bool {
        let done = self.tolerance.running.as_ref().is_some_and(|r| r.handle.is_finished());
        if done && let Some(r) = self.tolerance.running.take() {
            match r.handle.join() {
                Ok(Ok(mc)) => {
                    self.status = format!("tolerance run: {} trials done", mc.trials);
                    self.tolerance.result = Some((r.revision, mc));
                }
                Ok(Err(ToleranceError::Cancelled)) => {
                    self.status = "tolerance run cancelled".into();
                    self.tolerance.failure = Some("cancelled: no figures".into());
                }
                Ok(Err(e)) => self.tolerance.failure = Some(e.to_string()),
                Err(_) => self.tolerance.failure = Some("the Monte Carlo stopped unexpectedly".into()),
            }
        }
        self.tolerance.running.is_some()
    }

    pub(crate) fn tolerance_ui(&mut self, ctx: &egui::Context) {
        if self.poll_monte_carlo() {
            ctx.request_repaint_after(std::time::Duration::from_millis(100));
        }
        if !self.tolerance.open {
            return;
        }
        let mut open = true;
        egui::Window::new("Tolerance run").open(&mut open).default_size([900.0, 640.0]).show(ctx, |ui| {
            egui::ScrollArea::both().auto_shrink([false, false]).show(ui, |ui| self.tolerance_body_ui(ui));
        });
        if !open {
            self.tolerance.open = false;
        }
    }

    fn tolerance_body_ui(&mut self, ui: &mut egui::Ui) {
        let run = match self.tolerance_run() {
            Ok(run) => run.clone(),
            Err(e) => {
                ui.colored_label(ui.visuals().warn_fg_color, format!("No tolerance run: {e}"));
                return;
            }
        };
        ui.label(format!(
            "On-axis spot on the plane at {:.3} mm: RMS {:.2} µm nominal. Limits from the bench's tolerances, else common shop practice (±{} mm position, ±{} mm decentre, ±{}° tilt).",
            run.plane_mm,
            run.nominal_rms_um,
            lumenrail_bench::model::COMMON_POSITION_MM,
            lumenrail_bench::model::COMMON_DECENTRE_MM,
            lumenrail_bench::model::COMMON_TILT_DEG
        ));
        ui.heading("Sensitivities");
        sensitivities_ui(ui, &run);
        ui.heading("Budget");
        budget_ui(ui, &run);
        ui.heading("Monte Carlo");
        self.monte_carlo_ui(ui);
    }

    fn monte_carlo_ui(&mut self, ui: &mut egui::Ui) {
        let running = self.tolerance.running();
        ui.horizontal_wrapped(|ui| {
            let l = ui.label("trials");
            ui.add(egui::TextEdit::singleline(&mut self.tolerance.trials).desired_width(70.0).hint_text("1000"))
                .labelled_by(l.id);
            let l = ui.label("seed");
            ui.add(egui::TextEdit::singleline(&mut self.tolerance.seed).desired_width(60.0).hint_text("1"))
                .labelled_by(l.id);
            ui.checkbox(&mut self.tolerance.normal, "normal (σ = a/3, truncated at ±a)");
            ui.checkbox(&mut self.tolerance.refocus, "refocus each trial");
            if ui.add_enabled(!running, egui::Button::new("Run Monte Carlo")).clicked() {
                self.start_monte_carlo();
            }
        });
        if let Some(f) = self.tolerance.fraction() {
            ui.horizontal(|ui| {
                ui.add(egui::ProgressBar::new(f).show_percentage().desired_width(300.0));
                if ui.button("Cancel").clicked() {
                    self.cancel_monte_carlo();
                }
            });
        }
        if let Some(why) = &self.tolerance.failure {
            ui.colored_label(ui.visuals().warn_fg_color, why);
        }
        let Some((revision, mc)) = &self.tolerance.result else { return };
        if *revision != self.revision {
            ui.label("(for the bench as it was before the last edit: run it again)");
        }
        let p = |p: &lumenrail_bench::tolerance::Percentiles, d: usize| {
            format!("{:.d$} / {:.d$} / {:.d$}", p.p50, p.p90, p.p98)
        };
        ui.label(format!(
            "{} trials, seed {}, {}{}{}",
            mc.trials,
            mc.options.seed,
            mc.options.distribution.words(),
            if mc.options.refocus { ", refocused" } else { "" },
            if mc.failed > 0 { format!("; {} trials lost a ray", mc.failed) } else { String::new() }
        ));
        ui.label(format!("RMS spot µm (50/90/98 %): {} (nominal {:.2})", p(&mc.rms_um, 2), mc.nominal_rms_um));
        ui.label(format!("lateral image shift µm (50/90/98 %): {}", p(&mc.lateral_um, 2)));
        ui.label(format!("axial image shift mm (50/90/98 %): {}; σ {:.4} mm", p(&mc.axial_mm, 4), mc.axial_sigma_mm));
        if let Some(r) = &mc.refocus_mm {
            ui.label(format!("refocus move mm (50/90/98 %): {}", p(r, 4)));
        }
        histogram_ui(ui, mc);
    }
}

fn sensitivities_ui(ui: &mut egui::Ui, run: &ToleranceRun) {
    ui.label("Image shift along the rail in mm per mm of the part's position; lateral image shifts in µm; RMS: the on-axis RMS spot's growth in µm for the ± move (mean of the two less the nominal).");
    let v = |x: Option<f64>, d: usize| x.map_or_else(|| "n/a".to_string(), |x| lumenrail_bench::tolerance::fixed(x, d));
    egui::Grid::new("sensitivities").striped(true).show(ui, |ui| {
        for h in [
            "part",
            "image per mm",
            "RMS ±1 mm",
            "per 0.1 mm decentre",
            "RMS ±0.1 mm",
            "per 0.1° tilt",
            "RMS ±0.1°",
            "limits (±)",
        ] {
            ui.strong(h);
        }
        ui.end_row();
        for (s, l) in run.sensitivities.iter().zip(&run.limits) {
            ui.label(&s.name);
            ui.label(v(s.axial_image_per_mm, 4));
            ui.label(v(s.axial_rms_growth_um, 2));
            ui.label(v(s.decentre_image_um, 2));
            ui.label(v(s.decentre_rms_growth_um, 2));
            ui.label(v(s.tilt_image_um, 2));
            ui.label(v(s.tilt_rms_growth_um, 2));
            let practice = if l.common_practice { ", common practice" } else { "" };
            ui.label(format!(
                "{} mm, {} mm, {}°; pivot {}{practice}",
                l.position_mm, l.decentre_mm, l.tilt_deg, l.pivot_words
            ));
            ui.end_row();
        }
    });
}

fn budget_ui(ui: &mut egui::Ui, run: &ToleranceRun) {
    let b = &run.budget;
    ui.label(format!("Image position: RSS ±{:.4} mm, worst case ±{:.4} mm", b.rss_axial_mm, b.worst_axial_mm));
    match b.depth_of_focus_mm {
        Some(d) => {
            let within = b.rss_axial_mm <= d;
            let text = format!(
                "Depth of focus ±{d:.4} mm (±2λN², common practice): the RSS stack is {}",
                if within { "within it" } else { "beyond it" }
            );
            let colour = if within { ui.visuals().text_color() } else { ui.visuals().warn_fg_color };
            ui.colored_label(colour, text);
        }
        None => {
            ui.label("Depth of focus: none (no working f-number)");
        }
    }
    ui.label(format!(
        "Lateral image shift on each axis: RSS ±{:.2} µm, worst case ±{:.2} µm",
        b.rss_lateral_um, b.worst_lateral_um
    ));
    if let Some(room) = b.screen_room_mm {
        ui.label(format!("Room on the screen beyond the image: {room:.3} mm"));
    }
    ui.label("Ranked by share of its stack:");
    for c in b.contributions.iter().filter(|c| c.share > 0.0).take(8) {
        let unit = if c.kind == lumenrail_bench::tolerance::ErrorKind::Tilt { "°" } else { " mm" };
        ui.label(format!(
            "{:5.1} %  {} {} ±{}{unit}: image {:+.4} mm, lateral {:+.2} µm",
            100.0 * c.share,
            c.name,
            c.kind.word(),
            c.limit,
            c.axial_mm,
            c.lateral_um
        ));
    }
}

fn histogram_ui(ui: &mut egui::Ui, mc: &MonteCarlo) {
    use egui_plot::{Bar, BarChart, Plot};
    let h = &mc.histogram;
    let bars: Vec<Bar> = h
        .counts
        .iter()
        .enumerate()
        .map(|(k, &n)| Bar::new(h.from_um + (k as f64 + 0.5) * h.bin_um, n as f64).width(h.bin_um))
        .collect();
    let chart = BarChart::new("trials per RMS spot", bars);
    Plot::new("tolerance histogram")
        .height(160.0)
        .x_axis_label("RMS spot radius (µm)")
        .y_axis_label("trials")
        .allow_scroll(false)
        .show(ui, |plot| plot.bar_chart(chart));
}
