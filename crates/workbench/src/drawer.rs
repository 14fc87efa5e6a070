//! The drawer panel: the user's stock of parts beside the bench. Opens and saves `.drawer.ron` files
//! (the built-in starter drawer until one is opened), filters by kind, focal length and diameter, sorts,
//! places an item on the rail (by its Place button, or by dragging it onto the rail, where it lands under
//! the pointer), and takes the selected rail part into the drawer. A placed part remembers its item.

use crate::{Edit, Workbench};
use lumenrail_bench::drawer::{Drawer, DrawerItem};
use lumenrail_bench::model::{Part, PartKind};
use lumenrail_bench::report::fixed;
use std::path::PathBuf;

/// What the drawer list is sorted by.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum SortBy {
    /// The drawer's own order.
    #[default]
    Drawer,
    /// Focal length, shortest first (parts without one last).
    Focal,
    /// Diameter, smallest first.
    Diameter,
    /// Label, alphabetically.
    Label,
}

/// The drawer beside the bench, and how its list is shown.
#[derive(Debug, Clone)]
pub struct DrawerPanel {
    /// The drawer.
    pub drawer: Drawer,
    /// Its file (`None`: the starter drawer, or not saved yet).
    pub path: Option<PathBuf>,
    /// Whether it changed since it was opened or saved.
    pub dirty: bool,
    /// Only items of this kind word ("thin lens", "singlet", …), or every kind.
    pub kind: Option<&'static str>,
    /// Focal lengths from…to, mm, as typed (empty: no bound).
    pub focal_range: (String, String),
    /// Only items of this optical diameter, mm, or every diameter.
    pub diameter: Option<f64>,
    /// The list's order.
    pub sort: SortBy,
    /// Each item's focal length at the wavelength it was computed for (computed when the panel shows).
    focal: Option<(f64, Vec<Option<f64>>)>,
    /// Whether closing the window waits for an answer about the drawer's unsaved changes.
    pub close_question: bool,
    /// Set when that answer lets the window close: the close is asked for again.
    pub close_again: bool,
}

impl Default for DrawerPanel {
    fn default() -> Self {
        DrawerPanel {
            drawer: lumenrail_bench::drawer::starter(),
            path: None,
            dirty: false,
            kind: None,
            focal_range: (String::new(), String::new()),
            diameter: None,
            sort: SortBy::Drawer,
            focal: None,
            close_question: false,
            close_again: false,
        }
    }
}

/// The payload of an item dragged from the drawer onto the rail: its index.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct DraggedItem(pub usize);

impl DrawerPanel {
    /// Each item's focal length at `wavelength_nm` (cached; recomputed when the drawer or the wavelength
    /// changes).
    pub fn focal_lengths(&mut self, wavelength_nm: f64) -> &[Option<f64>] {
        let stale = self
            .focal
            .as_ref()
            .is_none_or(|(w, v)| w.to_bits() != wavelength_nm.to_bits() || v.len() != self.drawer.items.len());
        if stale {
            let v = self.drawer.items.iter().map(|it| it.focal_mm(wavelength_nm)).collect();
            self.focal = Some((wavelength_nm, v));
        }
        &self.focal.as_ref().expect("filled above").1
    }

    /// The drawer changed: focal lengths are computed again and it is marked unsaved.
    pub fn changed(&mut self) {
        self.focal = None;
        self.dirty = true;
    }

    /// The indices of the items shown, filtered and sorted.
    pub fn shown(&mut self, wavelength_nm: f64) -> Vec<usize> {
        let parse = |t: &str| t.trim().parse::<f64>().ok();
        let (lo, hi) = (parse(&self.focal_range.0), parse(&self.focal_range.1));
        let (kind, diameter, sort) = (self.kind, self.diameter, self.sort);
        let focal = self.focal_lengths(wavelength_nm).to_vec();
        let items = &self.drawer.items;
        let mut shown: Vec<usize> = (0..items.len())
            .filter(|&k| kind.is_none_or(|w| items[k].kind_word() == w))
            .filter(|&k| diameter.is_none_or(|d| (items[k].mechanical_diameter_mm - d).abs() < 1e-9))
            .filter(|&k| match (lo, hi, focal[k]) {
                (None, None, _) => true,
                (_, _, None) => false,
                (lo, hi, Some(f)) => lo.is_none_or(|l| f >= l) && hi.is_none_or(|h| f <= h),
            })
            .collect();
        let key = |k: usize| focal[k].unwrap_or(f64::INFINITY);
        match sort {
            SortBy::Drawer => {}
            SortBy::Focal => shown.sort_by(|&a, &b| key(a).total_cmp(&key(b)).then(a.cmp(&b))),
            SortBy::Diameter => shown.sort_by(|&a, &b| {
                items[a].mechanical_diameter_mm.total_cmp(&items[b].mechanical_diameter_mm).then(a.cmp(&b))
            }),
            SortBy::Label => shown.sort_by(|&a, &b| items[a].label.cmp(&items[b].label).then(a.cmp(&b))),
        }
        shown
    }
}

/// The kind words a drawer may hold, for the filter.
const KINDS: [&str; 5] = ["thin lens", "singlet", "doublet", "mirror", "iris"];

impl Workbench {
    /// A part from drawer item `k` at `at_mm`, named after its label, remembering the item.
    pub fn part_from_drawer(&self, k: usize, at_mm: f64) -> Option<Part> {
        let it = self.drawer.drawer.items.get(k)?;
        Some(Part {
            name: self.fresh_name(&it.label),
            at_mm,
            kind: it.part.clone(),
            carrier_mm: None,
            from_drawer: Some(it.label.clone()),
            coatings: Vec::new(),
        })
    }

    /// Places drawer item `k` on the rail at `at_mm`, as one undo step.
    pub fn place_from_drawer(&mut self, k: usize, at_mm: f64) {
        let Some(part) = self.part_from_drawer(k, at_mm) else { return };
        self.status = format!("placed \"{}\" from the drawer at {} mm", part.name, fixed(at_mm, 1));
        self.apply(Edit::Add(part), None);
    }

    /// Takes the selected rail part into the drawer as a new item (quantity 1); screens stay on the bench.
    pub fn add_selected_to_drawer(&mut self) {
        let Some(p) = self.selected.and_then(|i| self.bench.parts.get(i)).cloned() else {
            self.status = "select a part on the rail first".into();
            return;
        };
        if matches!(p.kind, PartKind::Screen { .. }) {
            self.status = "a screen belongs to the bench, not the drawer".into();
            return;
        }
        let taken = |l: &str| self.drawer.drawer.items.iter().any(|it| it.label == l);
        let label = if taken(&p.name) {
            (2..).map(|n| format!("{} ({n})", p.name)).find(|l| !taken(l)).expect("some label is free")
        } else {
            p.name.clone()
        };
        let d = p.kind.diameter_mm();
        self.drawer.drawer.items.push(DrawerItem {
            label: label.clone(),
            quantity: 1,
            mechanical_diameter_mm: d,
            notes: String::new(),
            part: p.kind,
        });
        self.drawer.changed();
        self.status = format!("added \"{label}\" to the drawer");
    }

    /// Opens a drawer file; on failure the drawer stays and the status says why (file:line:col).
    pub fn open_drawer(&mut self, path: PathBuf) -> bool {
        match lumenrail_bench::drawer::load(&path) {
            Ok(loaded) => {
                self.drawer = DrawerPanel { drawer: loaded.drawer, path: Some(path.clone()), ..DrawerPanel::default() };
                self.status = format!("opened the drawer {}", path.display());
                true
            }
            Err(e) => {
                self.status = e.to_string().lines().next().unwrap_or("").to_string();
                false
            }
        }
    }

    /// Saves the drawer to `path` (atomically).
    pub fn save_drawer(&mut self, path: PathBuf) -> bool {
        match lumenrail_bench::drawer::save(&self.drawer.drawer, &path) {
            Ok(()) => {
                self.status = format!("saved the drawer to {}", path.display());
                self.drawer.path = Some(path);
                self.drawer.dirty = false;
                true
            }
            Err(e) => {
                self.status = e.to_string();
                false
            }
        }
    }
}

impl Workbench {
    /// The question before closing with an unsaved drawer: save it, discard its changes, or stay.
    pub(crate) fn drawer_question_ui(&mut self, ctx: &egui::Context) {
        if !self.drawer.close_question {
            return;
        }
        egui::Modal::new(egui::Id::unique("drawer-unsaved")).show(ctx, |ui| {
            ui.heading("The drawer has unsaved changes");
            ui.label("Save the drawer before the window closes?");
            ui.horizontal(|ui| {
                if ui.button("Save drawer as…").clicked() {
                    self.drawer.close_question = false;
                    let start =
                        self.drawer.path.as_ref().map_or_else(|| "my.drawer.ron".into(), |p| p.display().to_string());
                    self.path_prompt = Some((crate::PathPrompt::SaveDrawer, start));
                }
                if ui.button("Discard the drawer's changes").clicked() {
                    self.drawer.close_question = false;
                    self.drawer.dirty = false;
                    self.drawer.close_again = true;
                }
                if ui.button("Cancel").clicked() {
                    self.drawer.close_question = false;
                }
            });
        });
    }
}

/// Draws the drawer panel.
pub(crate) fn drawer_ui(wb: &mut Workbench, ui: &mut egui::Ui) {
    ui.heading("Drawer");
    let name = wb.drawer.path.as_ref().map_or_else(|| "the starter drawer".to_string(), |p| p.display().to_string());
    let mark = if wb.drawer.dirty { " (unsaved)" } else { "" };
    ui.add(
        egui::Label::new(format!("{}: {} items, {name}{mark}", wb.drawer.drawer.title, wb.drawer.drawer.items.len()))
            .wrap(),
    );
    ui.horizontal_wrapped(|ui| {
        if ui.button("Open drawer…").clicked() {
            let start = wb.drawer.path.as_ref().map_or_else(|| "my.drawer.ron".into(), |p| p.display().to_string());
            wb.path_prompt = Some((crate::PathPrompt::OpenDrawer, start));
        }
        if ui.button("Save drawer as…").clicked() {
            let start = wb.drawer.path.as_ref().map_or_else(|| "my.drawer.ron".into(), |p| p.display().to_string());
            wb.path_prompt = Some((crate::PathPrompt::SaveDrawer, start));
        }
        if ui.add_enabled(wb.selected.is_some(), egui::Button::new("Add selected part")).clicked() {
            wb.add_selected_to_drawer();
        }
    });
    ui.separator();
    egui::ComboBox::from_label("kind").selected_text(wb.drawer.kind.unwrap_or("every kind")).show_ui(ui, |ui| {
        ui.selectable_value(&mut wb.drawer.kind, None, "every kind");
        for k in KINDS {
            ui.selectable_value(&mut wb.drawer.kind, Some(k), k);
        }
    });
    let mut diameters: Vec<f64> = wb.drawer.drawer.items.iter().map(|it| it.mechanical_diameter_mm).collect();
    diameters.sort_by(f64::total_cmp);
    diameters.dedup();
    let text = wb.drawer.diameter.map_or_else(|| "every diameter".to_string(), |d| format!("{d} mm"));
    egui::ComboBox::from_label("diameter").selected_text(text).show_ui(ui, |ui| {
        ui.selectable_value(&mut wb.drawer.diameter, None, "every diameter");
        for d in diameters {
            ui.selectable_value(&mut wb.drawer.diameter, Some(d), format!("{d} mm"));
        }
    });
    egui::Grid::new("drawer-filter").num_columns(2).show(ui, |ui| {
        let l = ui.label("focal length from (mm)");
        ui.add(egui::TextEdit::singleline(&mut wb.drawer.focal_range.0).desired_width(70.0)).labelled_by(l.id);
        ui.end_row();
        let l = ui.label("to (mm)");
        ui.add(egui::TextEdit::singleline(&mut wb.drawer.focal_range.1).desired_width(70.0)).labelled_by(l.id);
        ui.end_row();
    });
    ui.horizontal_wrapped(|ui| {
        ui.label("sort by");
        for (s, word) in [
            (SortBy::Drawer, "drawer order"),
            (SortBy::Focal, "focal length"),
            (SortBy::Diameter, "diameter"),
            (SortBy::Label, "label"),
        ] {
            ui.selectable_value(&mut wb.drawer.sort, s, word);
        }
    });
    let wavelength = wb.bench.primary_wavelength_nm().unwrap_or(587.5618);
    let shown = wb.drawer.shown(wavelength);
    ui.label(
        egui::RichText::new(format!(
            "{} shown; focal lengths at {} nm. Drag an item onto the rail, or Place puts it mid-rail.",
            shown.len(),
            fixed(wavelength, 1)
        ))
        .small(),
    );
    ui.separator();
    let focal = wb.drawer.focal_lengths(wavelength).to_vec();
    let mut place = None;
    for k in shown {
        let it = &wb.drawer.drawer.items[k];
        let f = focal[k].map_or_else(|| "—".to_string(), |f| format!("f {} mm", fixed(f, 1)));
        let text = format!(
            "{} · {} · {f} · Ø {} mm · ×{}",
            it.label,
            it.kind_word(),
            fixed(it.mechanical_diameter_mm, 1),
            it.quantity
        );
        ui.horizontal(|ui| {
            if ui.small_button("Place").on_hover_text("place it in the middle of the rail").clicked() {
                place = Some(k);
            }
            let id = ui.scope_id().with(("drawer-item", k));
            let r = ui.dnd_drag_source(id, DraggedItem(k), |ui| {
                ui.add(egui::Label::new(egui::RichText::new(&text).small()).selectable(false));
            });
            let notes = if it.notes.is_empty() { String::new() } else { format!("\n{}", it.notes) };
            r.response.on_hover_text(format!("{text}{notes}\ndrag onto the rail to place it there"));
        });
    }
    if let Some(k) = place {
        let at = (0.5 * wb.bench.rail_length_mm).round();
        wb.place_from_drawer(k, at);
    }
}
