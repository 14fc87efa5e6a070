//! The window around the workbench: title with the unsaved mark, asking before closing with unsaved
//! changes (Save / Discard / Cancel), opening dropped bench files, persisted settings, and the screenshot
//! mode, which leaves the stored settings and recent files untouched. Outside screenshots the window
//! autosaves the unsaved bench and offers back one left by a run that did not close normally
//! ([`crate::recovery`]). A hidden `--script` (for the end-to-end tests) applies a few commands once the
//! window is up, through the same calls the menus and buttons make.

use crate::Workbench;
use crate::guard::Replacement;
use serde::{Deserialize, Serialize};
use std::path::PathBuf;
use std::sync::{Arc, Mutex};

/// The program's name: the window's, and the name its per-user data folder is made from.
pub const APP_NAME: &str = "Lumenrail";

/// UI preferences kept between sessions (never the bench itself).
#[derive(Debug, Clone, Serialize, Deserialize)]
#[serde(default)]
pub struct Settings {
    /// Snap step, mm.
    pub snap_mm: f64,
    /// Vertical exaggeration (0 = automatic).
    pub exaggeration: f32,
    /// Recently opened or saved files, newest first.
    pub recent: Vec<PathBuf>,
    /// Whether the analysis views panel is shown.
    pub views_shown: bool,
}

impl Default for Settings {
    fn default() -> Settings {
        Settings { snap_mm: 1.0, exaggeration: 0.0, recent: Vec::new(), views_shown: true }
    }
}

/// The eframe application.
pub struct WorkbenchApp {
    /// The workbench.
    pub workbench: Workbench,
    settings: Settings,
    allow_close: bool,
    last_title: String,
    screenshot: Option<Screenshot>,
    script: Option<Script>,
}

/// Commands applied once the window is up (the hidden `--script` of the end-to-end tests), separated by
/// `;`: `move INDEX MM` (an edit, as a drag makes), `restore` (Restore in the recovery question),
/// `save-as PATH`, `quit` (closes without asking).
struct Script {
    commands: Vec<String>,
    frames: u32,
}

/// Writes one PNG of the window after the layout has settled, then closes.
struct Screenshot {
    out: PathBuf,
    frames: u32,
    requested: bool,
    done: Arc<Mutex<Option<Result<(), String>>>>,
}

impl WorkbenchApp {
    /// A window on `workbench`, with settings from eframe's storage; with `screenshot`, it saves a PNG and
    /// exits.
    pub fn new(
        cc: &eframe::CreationContext<'_>,
        mut workbench: Workbench,
        screenshot: Option<PathBuf>,
    ) -> WorkbenchApp {
        // A screenshot shows what a new user sees, whatever this computer's stored settings are.
        let stored = cc.storage.and_then(|s| eframe::get_value(s, eframe::APP_KEY)).filter(|_| screenshot.is_none());
        let settings: Settings = stored.unwrap_or_default();
        workbench.snap_mm = settings.snap_mm;
        workbench.exaggeration = settings.exaggeration;
        workbench.views.shown = settings.views_shown;
        // The window never waits for a slow integration or view (a screenshot takes the finished figures).
        workbench.offload_slow_work(screenshot.is_none());
        WorkbenchApp {
            workbench,
            settings,
            allow_close: false,
            last_title: String::new(),
            screenshot: screenshot.map(|out| Screenshot {
                out,
                frames: 0,
                requested: false,
                done: Arc::new(Mutex::new(None)),
            }),
            script: None,
        }
    }

    /// The same window, which also runs `script` once its first frames are drawn (see `--script`).
    pub fn with_script(mut self, script: Option<String>) -> WorkbenchApp {
        self.script = script.map(|s| Script {
            commands: s.split(';').map(|c| c.trim().to_string()).filter(|c| !c.is_empty()).collect(),
            frames: 0,
        });
        self
    }

    fn remember(&mut self) {
        if self.screenshot.is_some() {
            return;
        }
        if let Some(p) = &self.workbench.path {
            self.settings.recent.retain(|q| q != p);
            self.settings.recent.insert(0, p.clone());
            self.settings.recent.truncate(8);
        }
    }
}

impl eframe::App for WorkbenchApp {
    fn ui(&mut self, ui: &mut egui::Ui, _frame: &mut eframe::Frame) {
        let ctx = ui.ctx().clone();
        // Files dropped on the window.
        let dropped: Vec<PathBuf> = ctx.input(|i| {
            i.raw.dropped_files.iter().map(|f| f.path().to_path_buf()).filter(|p| !p.as_os_str().is_empty()).collect()
        });
        if let Some(p) = dropped.into_iter().next() {
            self.workbench.replace(Replacement::Open(p));
        }
        self.workbench.recent.clone_from(&self.settings.recent);
        self.workbench.ui(ui);
        self.remember();
        let title = self.workbench.title();
        if title != self.last_title {
            ctx.send_viewport_cmd(egui::ViewportCommand::Title(title.clone()));
            self.last_title = title;
        }
        // The drawer's unsaved changes are asked about first (Save drawer as / Discard / Cancel).
        if ctx.input(|i| i.viewport().close_requested()) && self.workbench.drawer.dirty && self.screenshot.is_none() {
            ctx.send_viewport_cmd(egui::ViewportCommand::CancelClose);
            self.workbench.drawer.close_question = true;
        }
        if std::mem::take(&mut self.workbench.drawer.close_again) {
            ctx.send_viewport_cmd(egui::ViewportCommand::Close);
        }
        // Ask before closing with unsaved changes (Save / Discard / Cancel, the workbench's own question).
        if ctx.input(|i| i.viewport().close_requested())
            && !self.workbench.drawer.dirty
            && self.workbench.dirty()
            && !self.allow_close
            && self.screenshot.is_none()
        {
            ctx.send_viewport_cmd(egui::ViewportCommand::CancelClose);
            self.workbench.replace(Replacement::Close);
        }
        if self.workbench.take_close() {
            self.allow_close = true;
            ctx.send_viewport_cmd(egui::ViewportCommand::Close);
        }
        if ctx.input(|i| i.viewport().close_requested()) && (self.allow_close || !self.workbench.dirty()) {
            // Closing with nothing unsaved, or with the changes discarded: no copy is left to offer back.
            self.workbench.autosave_clear();
        }
        self.script_step(&ctx);
        self.screenshot_step(&ctx);
    }

    fn persist_egui_memory(&self) -> bool {
        // A screenshot shows the workbench as a new user sees it, and leaves no layout behind.
        self.screenshot.is_none()
    }

    fn save(&mut self, storage: &mut dyn eframe::Storage) {
        // A screenshot run (or any headless run) leaves the stored settings and recent files as they were.
        if self.screenshot.is_some() {
            return;
        }
        self.settings.snap_mm = self.workbench.snap_mm;
        self.settings.exaggeration = self.workbench.exaggeration;
        self.settings.views_shown = self.workbench.views.shown;
        eframe::set_value(storage, eframe::APP_KEY, &self.settings);
    }
}

impl WorkbenchApp {
    fn script_step(&mut self, ctx: &egui::Context) {
        let Some(s) = &mut self.script else { return };
        s.frames += 1;
        if s.frames < 3 {
            ctx.request_repaint();
            return;
        }
        let commands = std::mem::take(&mut s.commands);
        self.script = None;
        for c in commands {
            let words: Vec<&str> = c.split_whitespace().collect();
            let wb = &mut self.workbench;
            match words.as_slice() {
                ["move", index, at] => match (index.parse::<usize>(), at.parse::<f64>()) {
                    (Ok(i), Ok(at_mm)) if i < wb.bench.parts.len() && at_mm.is_finite() => {
                        wb.apply(crate::Edit::Move { index: i, at_mm }, None);
                    }
                    _ => eprintln!("script: `{c}`: no such part, or not a position"),
                },
                ["restore"] => {
                    if wb.recovery_offer().is_none() {
                        eprintln!("script: `restore`: no autosaved bench is offered");
                    }
                    wb.restore_recovered();
                }
                ["save-as", path] => {
                    if !wb.save_to(PathBuf::from(path)) {
                        eprintln!("script: {}", wb.status);
                    }
                }
                ["view", name] => match lumenrail_bench::views::ViewKind::from_word(name) {
                    Some(kind) => {
                        wb.views.shown = true;
                        wb.views.tab = kind;
                    }
                    None => eprintln!("script: `{c}`: no such view"),
                },
                ["quit"] => {
                    self.allow_close = true;
                    ctx.send_viewport_cmd(egui::ViewportCommand::Close);
                }
                _ => {
                    eprintln!("script: `{c}` is not a command (move INDEX MM, view NAME, restore, save-as PATH, quit)")
                }
            }
            eprintln!("script: done `{c}`");
        }
        ctx.request_repaint();
    }

    fn screenshot_step(&mut self, ctx: &egui::Context) {
        let Some(s) = &mut self.screenshot else { return };
        s.frames += 1;
        ctx.request_repaint();
        if s.frames == 10 && !s.requested {
            s.requested = true;
            let out = s.out.clone();
            let done = s.done.clone();
            ctx.send_viewport_cmd(egui::ViewportCommand::Screenshot(egui::ScreenshotCallback::new(
                move |img: Arc<egui::ColorImage>| {
                    let [w, h] = img.size;
                    let bytes: Vec<u8> = img.pixels.iter().flat_map(|c| c.to_array()).collect();
                    let result = image::RgbaImage::from_raw(w as u32, h as u32, bytes)
                        .ok_or_else(|| "the screenshot has the wrong size".to_string())
                        .and_then(|im| im.save(&out).map_err(|e| e.to_string()));
                    *done.lock().expect("screenshot lock") = Some(result);
                },
            )));
        }
        let finished = s.done.lock().expect("screenshot lock").take();
        if let Some(result) = finished {
            if let Err(e) = result {
                eprintln!("cannot write the screenshot: {e}");
            }
            ctx.send_viewport_cmd(egui::ViewportCommand::Close);
        }
        if s.frames > 600 {
            eprintln!("the screenshot did not arrive; closing");
            ctx.send_viewport_cmd(egui::ViewportCommand::Close);
        }
    }
}

/// Opens the workbench window on `file` (or the default demo), `window` points large (width, height) if
/// given, else as it was last closed (1400 × 860 the first time). Outside screenshots it autosaves to the
/// data folder and offers back a bench left unsaved by a run that did not close normally. `script` is the
/// hidden test-only `--script`.
pub fn run(
    file: Option<PathBuf>,
    screenshot: Option<PathBuf>,
    window: Option<(u32, u32)>,
    script: Option<String>,
) -> Result<(), String> {
    let mut workbench = match file {
        Some(p) => {
            let mut wb = Workbench::demo(lumenrail_bench::demos::DEFAULT);
            if !wb.open(p.clone()) {
                return Err(wb.status);
            }
            wb
        }
        None => Workbench::demo(lumenrail_bench::demos::DEFAULT),
    };
    if screenshot.is_none()
        && let Some(recovery) = crate::recovery::Recovery::from_environment()
    {
        workbench.start_autosave(recovery, crate::recovery::AUTOSAVE_IDLE);
    }
    let size = window.map_or([1400.0, 860.0], |(w, h)| [w as f32, h as f32]);
    let options = eframe::NativeOptions {
        viewport: window_icon()
            .into_iter()
            .fold(egui::ViewportBuilder::default().with_inner_size(size).with_title(APP_NAME), |v, icon| {
                v.with_icon(icon)
            }),
        persist_window: screenshot.is_none() && window.is_none(),
        ..Default::default()
    };
    eframe::run_native(
        APP_NAME,
        options,
        Box::new(move |cc| Ok(Box::new(WorkbenchApp::new(cc, workbench, screenshot).with_script(script)))),
    )
    .map_err(|e| e.to_string())
}

/// The window's icon: the program's own icon (`lumenrail_export::icon`) at 64 pixels; none if it cannot be
/// drawn (the window then has the desktop's default, and nothing else changes).
fn window_icon() -> Option<std::sync::Arc<egui::IconData>> {
    const SIZE: u32 = 64;
    let rgba = lumenrail_export::icon::rgba(SIZE).ok()?;
    Some(std::sync::Arc::new(egui::IconData { rgba, width: SIZE, height: SIZE }))
}
