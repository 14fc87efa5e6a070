//! The views panel: the analysis views of the bench's evaluation (drawn by `lumenrail-export`'s plots,
//! the same drawing the PNG export makes), their tabs, plane and pupil-pattern choices and exports. The
//! views are computed only for the tab on show, and only when the bench's revision or the request changes.
//! A view that has taken longer than its share of a frame is computed on a background thread from then on:
//! the panel keeps showing the last one, marked "computing", until the new one arrives.

use crate::{PathPrompt, Workbench};
use lumenrail_bench::file::write_atomic;
use lumenrail_bench::model::PartKind;
use lumenrail_bench::report::fixed;
use lumenrail_bench::views::{Plane, ViewKind, ViewRequest, Views};
use lumenrail_optics::sampling::Grid;
use std::path::{Path, PathBuf};
use std::sync::mpsc::{Receiver, TryRecvError, channel};
use std::time::{Duration, Instant};

/// What a set of views was computed for: the bench revision, the request and the view.
type ViewKey = (u64, ViewRequest, ViewKind);

/// The views panel's state: which view, the request, and the views of the last bench revision.
pub struct ViewsPanel {
    /// Whether the panel is shown.
    pub shown: bool,
    /// The view on show.
    pub tab: ViewKind,
    /// Plane and pupil grid.
    pub request: ViewRequest,
    /// The typed plane position for [`Plane::At`].
    plane_mm: f64,
    cache: Option<(ViewKey, Views)>,
    /// Whether the last computation took longer than [`crate::background::FRAME_SHARE`].
    slow: bool,
    /// The computation under way on the background thread.
    pending: Option<Receiver<(ViewKey, Views, Duration)>>,
    /// Whether slow views may be computed on a background thread ([`Workbench::offload_slow_work`]).
    pub(crate) offload: bool,
}

impl Default for ViewsPanel {
    fn default() -> ViewsPanel {
        ViewsPanel {
            shown: true,
            tab: ViewKind::Spot,
            request: ViewRequest::default(),
            plane_mm: 0.0,
            cache: None,
            slow: false,
            pending: None,
            offload: false,
        }
    }
}

pub use lumenrail_export::plots::{draw_view, encode_png, view_png};

/// The pupil grids offered for the spot diagram (each shown by [`Grid::label`], with its ray count).
pub const GRIDS: [Grid; 3] =
    [Grid::Rings { rings: 6 }, Grid::Grid { across: 15 }, Grid::GaussRings { rings: 6, arms: 12 }];

impl Workbench {
    /// The views of the current bench for the panel's request, recomputed only when either changed. With
    /// the automatic plane, a selected screen is the plane the spot and fan views look at.
    pub fn views(&mut self) -> &Views {
        self.views_of(self.views.tab)
    }

    /// The views of the current bench with `kind` among them, recomputed only when the bench, the request
    /// or the kind changed: only that view is computed, here and now.
    fn views_of(&mut self, kind: ViewKind) -> &Views {
        let key = self.view_key(kind);
        if !self.views.cache.as_ref().is_some_and(|(k, _)| *k == key) {
            let v = Views::only(&self.evaluation, &key.1, &[kind]);
            self.views.cache = Some((key, v));
        }
        &self.views.cache.as_ref().expect("just filled").1
    }

    /// The request the panel makes of `kind` for the bench on screen. With the automatic plane, a selected
    /// screen is the plane the spot and fan views look at (the wavefront's automatic plane stays the
    /// paraxial image, as in the report).
    fn view_key(&self, kind: ViewKind) -> ViewKey {
        let mut request = self.views.request.clone();
        let refers_wavefront = matches!(kind, ViewKind::Wavefront | ViewKind::Sharpness);
        if request.plane == Plane::Auto
            && !refers_wavefront
            && let Some(part) = self.selected.and_then(|i| self.bench.parts.get(i))
            && matches!(part.kind, PartKind::Screen { .. })
            && self.evaluation.report.viewable_screens().any(|s| s.part == part.name)
        {
            request.plane = Plane::Screen(part.name.clone());
        }
        (self.revision, request, kind)
    }

    /// The views the panel shows for `kind`, and whether newer ones are being computed. Computed in the
    /// frame while that is cheap; once a computation has taken more than its share of a frame, on the
    /// background thread, the last views of this kind staying on show meanwhile (`None` when there are
    /// none yet).
    fn shown_views(&mut self, kind: ViewKind) -> (Option<&Views>, bool) {
        use crate::background::FRAME_SHARE;
        let key = self.view_key(kind);
        if let Some(receive) = &self.views.pending {
            match receive.try_recv() {
                Ok((k, v, took)) => {
                    self.views.pending = None;
                    self.views.slow = took > FRAME_SHARE;
                    self.views.cache = Some((k, v));
                }
                Err(TryRecvError::Empty) => {}
                Err(TryRecvError::Disconnected) => {
                    self.views.pending = None;
                    self.views.slow = false;
                }
            }
        }
        let fresh = self.views.cache.as_ref().is_some_and(|(k, _)| *k == key);
        if !fresh && self.views.pending.is_none() {
            if self.views.offload && self.views.slow {
                let (send, receive) = channel();
                let evaluation = self.evaluation.clone();
                let job = key.clone();
                std::thread::spawn(move || {
                    let started = Instant::now();
                    let v = Views::only(&evaluation, &job.1, &[job.2]);
                    // The receiver is gone only when the panel is; then nobody needs the views.
                    let _ = send.send((job, v, started.elapsed()));
                });
                self.views.pending = Some(receive);
            } else {
                let started = Instant::now();
                let v = Views::only(&self.evaluation, &key.1, &[kind]);
                self.views.slow = started.elapsed() > FRAME_SHARE;
                self.views.cache = Some((key.clone(), v));
            }
        }
        let computing = !self.views.cache.as_ref().is_some_and(|(k, _)| *k == key);
        let shown = self.views.cache.as_ref().filter(|((_, _, k), _)| *k == kind).map(|(_, v)| v);
        (shown, computing)
    }

    /// Whether the views panel is waiting for a view computed on the background thread.
    pub fn views_computing(&self) -> bool {
        self.views.pending.is_some()
    }

    /// Writes one view's CSV or PNG to `path` (atomically); the status line says what happened.
    pub fn export_view(&mut self, kind: ViewKind, png: bool, path: &Path) -> bool {
        let title = self.bench.title.clone();
        let views = self.views_of(kind);
        let bytes = if png {
            encode_png(&view_png(views, kind, &title))
        } else {
            lumenrail_export::csv::view_csv(views, kind).map(String::into_bytes)
        };
        let Some(bytes) = bytes else {
            self.status = format!("the {} view has nothing to export: {}", kind.word(), views.notes.join("; "));
            return false;
        };
        match write_atomic(path, &bytes) {
            Ok(()) => {
                self.status = format!("wrote the {} view to {}", kind.word(), path.display());
                true
            }
            Err(e) => {
                self.status = e.to_string();
                false
            }
        }
    }

    /// A proposed export path: beside the bench file, named after it and the view.
    pub(crate) fn export_path(&self, kind: ViewKind, png: bool) -> String {
        let dir = self.path.as_ref().and_then(|p| p.parent()).map_or_else(PathBuf::new, Path::to_path_buf);
        dir.join(self.export_name(kind, png)).display().to_string()
    }

    fn export_name(&self, kind: ViewKind, png: bool) -> String {
        let stem = self
            .path
            .as_ref()
            .and_then(|p| p.file_name())
            .map(|n| n.to_string_lossy().trim_end_matches(".ron").trim_end_matches(".bench").to_string())
            .unwrap_or_else(|| "bench".into());
        format!("{stem}-{}.{}", kind.word(), if png { "png" } else { "csv" })
    }
}

/// The views panel: view tabs, plane and grid choices, exports, then the view.
pub(crate) fn panel_ui(wb: &mut Workbench, ui: &mut egui::Ui) {
    let mut export: Option<bool> = None;
    ui.horizontal_wrapped(|ui| {
        for kind in ViewKind::ALL {
            ui.selectable_value(&mut wb.views.tab, kind, kind.word());
        }
        ui.separator();
        let screens: Vec<String> = wb.evaluation.report.viewable_screens().map(|s| s.part.clone()).collect();
        let wavefront_tab = matches!(wb.views.tab, ViewKind::Wavefront | ViewKind::Sharpness);
        let auto = if wavefront_tab { "automatic (paraxial image)" } else { "automatic (first screen)" };
        let label = match &wb.views.request.plane {
            Plane::Auto => "automatic".to_string(),
            Plane::Screen(n) => n.clone(),
            Plane::BestFocus => "best focus".to_string(),
            Plane::At(z) => format!("{} mm", fixed(*z, 2)),
        };
        egui::ComboBox::from_label("plane").selected_text(label).show_ui(ui, |ui| {
            ui.selectable_value(&mut wb.views.request.plane, Plane::Auto, auto);
            for n in screens {
                let l = format!("screen {n}");
                ui.selectable_value(&mut wb.views.request.plane, Plane::Screen(n), l);
            }
            ui.selectable_value(&mut wb.views.request.plane, Plane::BestFocus, "best focus");
            if ui.selectable_label(matches!(wb.views.request.plane, Plane::At(_)), "a rail position").clicked() {
                wb.views.request.plane = Plane::At(wb.views.plane_mm);
            }
        });
        if let Plane::At(z) = &mut wb.views.request.plane {
            let label = ui.label("at");
            ui.add(egui::DragValue::new(z).suffix(" mm").speed(0.1)).labelled_by(label.id);
            wb.views.plane_mm = *z;
        }
        egui::ComboBox::from_label("pupil pattern").selected_text(wb.views.request.grid.label()).show_ui(ui, |ui| {
            for g in GRIDS {
                ui.selectable_value(&mut wb.views.request.grid, g, g.label());
            }
        });
        ui.separator();
        if ui.button("Export CSV…").clicked() {
            export = Some(false);
        }
        if ui.button("Export PNG…").clicked() {
            export = Some(true);
        }
    });
    if let Some(png) = export {
        let kind = wb.views.tab;
        let name = wb.export_name(kind, png);
        let (filter, ext) = if png { ("PNG picture", "png") } else { ("CSV table", "csv") };
        let dialog = rfd::FileDialog::new().add_filter(filter, &[ext]).set_file_name(&name).set_title("Export view");
        match dialog.save_file() {
            Some(p) => {
                wb.export_view(kind, png, &p);
            }
            None => wb.path_prompt = Some((PathPrompt::Export(kind, png), wb.export_path(kind, png))),
        }
    }
    let kind = wb.views.tab;
    // The plots take most of the panel; the figures beneath scroll, so the panel keeps the size it is given.
    let height = (ui.available_height() - 60.0).max(140.0);
    let ctx = ui.ctx().clone();
    let (views, computing) = wb.shown_views(kind);
    if computing {
        ui.horizontal(|ui| {
            ui.spinner();
            ui.label(if views.is_some() {
                "computing: the view below is of the bench a moment ago"
            } else {
                "computing"
            });
        });
        ctx.request_repaint_after(Duration::from_millis(15));
    }
    if let Some(views) = views {
        egui::ScrollArea::vertical()
            .auto_shrink([false, false])
            .show(ui, |ui| draw_view(ui, views, kind, true, height));
    }
}
