//! The rail view: the bench drawn to scale from the side, with exactly traced rays and the images, where
//! parts are dragged along the rail.

use crate::{Edit, Workbench};
use egui::{Color32, Pos2, Rect, Sense, Shape, Stroke, pos2, vec2};
use lumenrail_bench::compile;
use lumenrail_bench::model::{ObjectSpec, Part, PartKind, SurfaceSpec};
use lumenrail_export::colour::wavelength_rgb;

/// Zoom and pan of the rail view; `None` scale means "fit the bench" (both ways).
#[derive(Debug, Clone, Default)]
pub(crate) struct RailView {
    /// Pixels per mm along the rail, when zoomed.
    px_per_mm: Option<f32>,
    /// Rail position at the view's left edge, when zoomed or panned.
    left_mm: f32,
    /// The height at the middle of the drawing, mm (0 when fitted).
    centre_y_mm: f32,
    drag: Option<PartDrag>,
}

#[derive(Debug, Clone, Copy)]
struct PartDrag {
    index: usize,
    start_at_mm: f64,
    total_px: f32,
}

impl RailView {
    /// Back to "fit bench".
    pub(crate) fn fit(&mut self) {
        self.px_per_mm = None;
        self.centre_y_mm = 0.0;
    }
}

/// Maps rail coordinates (mm) to the screen.
#[derive(Debug, Clone, Copy)]
struct Frame {
    rect: Rect,
    left_mm: f32,
    px_per_mm: f32,
    /// Vertical pixels per mm of height (the exaggeration times the rail scale).
    py_per_mm: f32,
    /// The height drawn at the middle of the optical area, mm.
    centre_y_mm: f32,
}

impl Frame {
    fn at(&self, z_mm: f64, y_mm: f64) -> Pos2 {
        pos2(
            self.rect.left() + (z_mm as f32 - self.left_mm) * self.px_per_mm,
            self.middle_y() - (y_mm as f32 - self.centre_y_mm) * self.py_per_mm,
        )
    }

    /// The screen height of the optical area's middle (above the scale band).
    fn middle_y(&self) -> f32 {
        0.5 * (self.rect.top() + self.rect.bottom() - SCALE_BAND_PX)
    }

    /// The height (mm) drawn at screen height `y`.
    fn y_mm_at(&self, y: f32) -> f32 {
        self.centre_y_mm + (self.middle_y() - y) / self.py_per_mm
    }
}

/// The band at the bottom of the rail view that holds the scale and the carriers; the optics is drawn above
/// it, never over it.
const SCALE_BAND_PX: f32 = 46.0;

const MARGIN_PX: f32 = 30.0;

/// Rounds to the snap step (no rounding when snapping is off).
fn snapped(v: f64, step: f64) -> f64 {
    if step > 0.0 { (v / step).round() * step } else { v }
}

/// The span a part occupies on the rail for collisions: its carrier, or else its glass between vertices.
fn footprint(p: &Part) -> (f64, f64) {
    p.carrier_span_mm().unwrap_or((p.at_mm, p.end_mm()))
}

/// Draws the rail view and handles its gestures.
pub(crate) fn rail_ui(wb: &mut Workbench, ui: &mut egui::Ui) {
    let (rect, background) = ui.allocate_exact_size(ui.available_size(), Sense::click_and_drag());
    let rail = wb.bench.rail_length_mm as f32;
    let fit_scale = (rect.width() - 2.0 * MARGIN_PX).max(50.0) / rail.max(1.0);
    let px_per_mm = wb.view.px_per_mm.unwrap_or(fit_scale);
    let left_mm = if wb.view.px_per_mm.is_some() { wb.view.left_mm } else { -MARGIN_PX / fit_scale };
    // Fit both ways: the tallest part, the object and the drawn ray bundle fill the height above the scale.
    let max_semi = wb.bench.parts.iter().map(|p| 0.5 * p.kind.diameter_mm()).fold(1.0, f64::max) as f32;
    let object_h = match wb.bench.object {
        ObjectSpec::Point { height_mm, .. } => height_mm.abs() as f32,
        ObjectSpec::Distant { beam_diameter_mm, .. } => 0.5 * beam_diameter_mm as f32,
    };
    let rays_h = wb
        .scene
        .rays
        .iter()
        .flat_map(|r| r.points.iter())
        .filter(|(z, _)| (0.0..=wb.bench.rail_length_mm).contains(z))
        .map(|(_, y)| y.abs() as f32)
        .fold(0.0, f32::max);
    let images_h = wb.scene.images.iter().map(|i| i.height_mm.abs() as f32).fold(0.0, f32::max);
    let tallest = max_semi.max(object_h).max(rays_h.min(4.0 * max_semi)).max(images_h.min(4.0 * max_semi));
    let optical_h = (rect.height() - SCALE_BAND_PX).max(40.0);
    // Heights are drawn `exaggeration` times taller than lengths; automatically, so that the fitted view
    // holds the tallest thing. Zooming scales both directions alike.
    let auto = (0.42 * optical_h / (tallest * fit_scale)).max(1.0);
    let exaggeration = if wb.exaggeration > 0.0 { wb.exaggeration } else { auto };
    let py_per_mm = px_per_mm * exaggeration;
    let centre_y_mm = if wb.view.px_per_mm.is_some() { wb.view.centre_y_mm } else { 0.0 };
    let f = Frame { rect, left_mm, px_per_mm, py_per_mm, centre_y_mm };
    let scale_painter = ui.painter_at(rect);
    scale_painter.rect_filled(rect, 0.0, Color32::from_rgb(24, 27, 33));
    let painter = ui.painter_at(Rect::from_min_max(rect.min, pos2(rect.max.x, rect.max.y - SCALE_BAND_PX)));

    // Zoom around the pointer in both directions, pan by dragging empty space.
    if let Some(pointer) = background.hover_pos() {
        let scroll = ui.input(|i| i.smooth_scroll_delta.y);
        let zoom = ui.input(|i| i.zoom_delta()) * (scroll / 400.0).exp();
        if (zoom - 1.0).abs() > 1e-4 {
            let z_at = left_mm + (pointer.x - rect.left()) / px_per_mm;
            let y_at = f.y_mm_at(pointer.y);
            let new_scale = (px_per_mm * zoom).clamp(fit_scale * 0.2, fit_scale * 200.0);
            let applied = new_scale / px_per_mm;
            wb.view.px_per_mm = Some(new_scale);
            wb.view.left_mm = z_at - (pointer.x - rect.left()) / new_scale;
            // Keep the height under the pointer where it is: the vertical scale grows with the horizontal.
            let new_py = py_per_mm * applied;
            wb.view.centre_y_mm = y_at - (f.middle_y() - pointer.y) / new_py;
        }
    }
    if background.dragged() {
        let d = background.drag_delta();
        wb.view.px_per_mm = Some(px_per_mm);
        wb.view.left_mm = left_mm - d.x / px_per_mm;
        wb.view.centre_y_mm = centre_y_mm + d.y / py_per_mm;
    }
    if background.clicked() {
        wb.selected = None;
    }
    // A drawer item dropped on the rail lands under the pointer (snapped like a drag).
    if let Some(item) = background.dnd_release_payload::<crate::drawer::DraggedItem>()
        && let Some(pointer) = ui.input(|i| i.pointer.interact_pos())
    {
        let z = f64::from(left_mm + (pointer.x - rect.left()) / px_per_mm);
        let z = if wb.snap_mm > 0.0 { (z / wb.snap_mm).round() * wb.snap_mm } else { z };
        wb.place_from_drawer(item.0, z.clamp(0.0, wb.bench.rail_length_mm));
    }

    rail_scale_ui(&scale_painter, &f, wb.bench.rail_length_mm, wb.inch);
    object_ui(&painter, &f, wb);
    // The object is clickable: it opens the bench settings, where it is edited.
    let object_hit = match wb.bench.object {
        ObjectSpec::Point { at_mm, height_mm } => {
            Rect::from_two_pos(f.at(at_mm, 0.0), f.at(at_mm, height_mm)).expand2(vec2(8.0, 4.0))
        }
        ObjectSpec::Distant { .. } => Rect::from_min_size(f.at(0.0, 0.0) + vec2(0.0, -32.0), vec2(90.0, 20.0)),
    }
    .intersect(rect);
    let object = ui.interact(object_hit, ui.scope_id().with("object"), Sense::click());
    object.widget_info(|| egui::WidgetInfo::labeled(egui::Role::Button, true, "object"));
    if object.on_hover_text("the object: click to edit it in the bench settings").clicked() {
        wb.open_settings();
    }
    beam_ui(&painter, &f, wb);
    rays_ui(&painter, &f, wb);
    stray_marks_ui(ui, &painter, &f, wb);
    for img in &wb.scene.images {
        let base = f.at(img.at_mm, 0.0);
        let tip = f.at(img.at_mm, img.height_mm);
        let colour = if img.real {
            Color32::from_rgb(250, 250, 250)
        } else {
            Color32::from_rgba_unmultiplied(200, 200, 255, 110)
        };
        if img.real {
            painter.arrow(base, tip - base, Stroke::new(2.5, colour));
        } else {
            painter.extend(Shape::dashed_line(&[base, tip], Stroke::new(2.0, colour), 5.0, 4.0));
            painter.arrow(tip - (tip - base) * 0.01, (tip - base) * 0.01, Stroke::new(2.0, colour));
        }
    }
    if let Some(i) = wb.selected.filter(|&i| i < wb.bench.parts.len()) {
        focal_marks_ui(&painter, &f, wb, i);
    }
    // An arrangement previewed from the aims panel: its lenses drawn as dashed ghosts where they would go.
    if let Some(preview) = &wb.arranger.preview {
        let ghost = Stroke::new(1.5, Color32::from_rgb(120, 220, 160));
        for p in preview {
            let semi = 0.5 * p.kind.diameter_mm();
            let surfaces = glass_surfaces(p);
            let polys = if surfaces.is_empty() {
                vec![vec![f.at(p.at_mm, -semi), f.at(p.at_mm, semi)]]
            } else {
                lens_outline(&f, &surfaces, semi)
            };
            for poly in polys {
                let mut closed = poly.clone();
                if let Some(first) = poly.first() {
                    closed.push(*first);
                }
                painter.extend(Shape::dashed_line(&closed, ghost, 5.0, 3.0));
            }
            painter.text(
                f.at(p.at_mm, -semi) + vec2(0.0, 4.0),
                egui::Align2::CENTER_TOP,
                &p.name,
                egui::FontId::proportional(11.0),
                ghost.color,
            );
        }
    }
    // Parts in rail order, so that each label can step up above a neighbour's it would overlap.
    let mut labels: Vec<Rect> = Vec::new();
    for i in wb.bench.rail_order() {
        part_ui(wb, ui, &painter, &scale_painter, &f, i, &mut labels);
    }
    // Image labels by each arrow's tip (below an inverted image), stepping aside from the parts' labels
    // and from each other; the tooltip gives the image whole.
    for (k, img) in wb.scene.images.iter().enumerate() {
        let tip = f.at(img.at_mm, img.height_mm);
        let up = img.height_mm >= 0.0;
        let colour = if img.real { Color32::from_gray(235) } else { Color32::from_rgb(190, 190, 255) };
        // Beside the arrow (to its right), clear of the part that stands at the image.
        let width = painter.layout_no_wrap(img.label(), egui::FontId::proportional(12.0), colour).size().x;
        let anchor = tip + vec2(0.5 * width + 8.0, if up { -2.0 } else { 2.0 });
        if let Some(r) = place_label(&painter, anchor, &img.label(), colour, &mut labels, up) {
            let hover = ui.interact(r, ui.scope_id().with(("image", k)), Sense::click_and_drag());
            let label = img.label();
            hover.widget_info(|| egui::WidgetInfo::labeled(egui::Role::Label, true, &label));
            // A label takes the pointer (so that its tooltip shows over the part behind it); dragging it
            // pans as dragging empty rail does.
            if hover.dragged() {
                let d = hover.drag_delta();
                wb.view.px_per_mm = Some(px_per_mm);
                wb.view.left_mm = left_mm - d.x / px_per_mm;
                wb.view.centre_y_mm = centre_y_mm + d.y / py_per_mm;
            }
            hover.on_hover_text(img.description());
        }
    }
}

/// The rail ruler's ticks (rail position in mm, label) and its caption, in mm or inches (25.4 mm each:
/// the ticks then fall on whole steps of inches; stored positions stay in mm). Ticks are at least 60
/// pixels apart at `px_per_mm`.
pub(crate) fn ruler(rail_mm: f64, px_per_mm: f64, inch: bool) -> (Vec<(f64, String)>, String) {
    use lumenrail_bench::mount::MM_PER_INCH;
    let (unit_mm, steps, decimals): (f64, &[f64], usize) = if inch {
        (MM_PER_INCH, &[0.1, 0.5, 1.0, 2.0, 5.0, 10.0, 20.0, 50.0], 1)
    } else {
        (1.0, &[1.0, 5.0, 10.0, 50.0, 100.0, 500.0, 1000.0], 0)
    };
    let last = *steps.last().expect("steps");
    let step = steps.iter().copied().find(|s| s * unit_mm * px_per_mm >= 60.0).unwrap_or(last);
    let decimals = if step < 1.0 { decimals } else { 0 };
    let mut ticks = Vec::new();
    let mut k = 0.0_f64;
    while k * step * unit_mm <= rail_mm + 1e-9 && ticks.len() < 10_000 {
        let value = k * step;
        ticks.push((value * unit_mm, format!("{value:.decimals$}")));
        k += 1.0;
    }
    let caption = if inch {
        format!("rail {:.2} in, inches from the datum", rail_mm / MM_PER_INCH)
    } else {
        format!("rail {rail_mm:.0} mm, mm from the datum")
    };
    (ticks, caption)
}

fn rail_scale_ui(painter: &egui::Painter, f: &Frame, rail_mm: f64, inch: bool) {
    let y = f.rect.bottom() - 28.0;
    let grey = Color32::from_gray(150);
    painter.line_segment([pos2(f.at(0.0, 0.0).x, y), pos2(f.at(rail_mm, 0.0).x, y)], Stroke::new(3.0, grey));
    painter.line_segment([f.at(0.0, 0.0), f.at(rail_mm, 0.0)], Stroke::new(1.0, Color32::from_gray(70)));
    let (ticks, caption) = ruler(rail_mm, f.px_per_mm as f64, inch);
    for (z, label) in ticks {
        let x = f.at(z, 0.0).x;
        if x >= f.rect.left() - 1.0 && x <= f.rect.right() + 1.0 {
            painter.line_segment([pos2(x, y - 5.0), pos2(x, y + 5.0)], Stroke::new(1.0, grey));
            painter.text(pos2(x, y + 7.0), egui::Align2::CENTER_TOP, label, egui::FontId::proportional(11.0), grey);
        }
    }
    painter.text(
        pos2(f.rect.right() - 6.0, y - 8.0),
        egui::Align2::RIGHT_BOTTOM,
        caption,
        egui::FontId::proportional(11.0),
        grey,
    );
}

fn object_ui(painter: &egui::Painter, f: &Frame, wb: &Workbench) {
    let colour = Color32::from_rgb(255, 200, 80);
    match wb.bench.object {
        ObjectSpec::Point { at_mm, height_mm } => {
            let base = f.at(at_mm, 0.0);
            painter.arrow(base, f.at(at_mm, height_mm) - base, Stroke::new(2.5, colour));
        }
        ObjectSpec::Distant { .. } => {
            painter.text(
                f.at(0.0, 0.0) + vec2(4.0, -18.0),
                egui::Align2::LEFT_BOTTOM,
                "from far away",
                egui::FontId::proportional(11.0),
                colour,
            );
        }
    }
}

fn rays_ui(painter: &egui::Painter, f: &Frame, wb: &Workbench) {
    for ray in &wb.scene.rays {
        let [r, g, b] = wavelength_rgb(ray.wavelength_nm);
        let alpha = if ray.off_axis { 110 } else { 220 };
        let colour = Color32::from_rgba_unmultiplied(r, g, b, alpha);
        let pts: Vec<Pos2> = ray.points.iter().map(|&(z, y)| f.at(z, y)).collect();
        painter.add(Shape::line(pts.clone(), Stroke::new(1.2, colour)));
        if let (Some((z, y)), Some(last)) = (ray.virtual_from, ray.points.iter().rev().nth(1)) {
            let ghost = Color32::from_rgba_unmultiplied(r, g, b, 90);
            painter.extend(Shape::dashed_line(&[f.at(last.0, last.1), f.at(z, y)], Stroke::new(1.0, ghost), 4.0, 4.0));
        }
        if ray.blocked
            && let Some(end) = pts.last()
        {
            painter.circle_filled(*end, 2.0, colour);
        }
    }
}

/// The selected part's focal points and principal planes, from the evaluation's first-order figures of
/// the part alone (lenses and mirrors the light meets).
fn focal_marks_ui(painter: &egui::Painter, f: &Frame, wb: &Workbench, index: usize) {
    let Some(part) = wb.bench.parts.get(index) else { return };
    let Some(fo) = wb.evaluation.part_first_order.get(index).copied().flatten() else { return };
    let mark = Color32::from_rgb(120, 220, 160);
    let h = 0.5 * part.kind.diameter_mm();
    for (z, label) in [(fo.front_focus_at_mm, "F"), (fo.back_focus_at_mm, "F'")] {
        if let Some(z) = z {
            let p = f.at(z, 0.0);
            painter.circle_stroke(p, 4.0, Stroke::new(1.5, mark));
            painter.text(p + vec2(0.0, 8.0), egui::Align2::CENTER_TOP, label, egui::FontId::proportional(12.0), mark);
        }
    }
    for (z, label) in [(fo.front_principal_at_mm, "P"), (fo.back_principal_at_mm, "P'")] {
        if let Some(z) = z {
            let top = f.at(z, h);
            painter.extend(Shape::dashed_line(&[top, f.at(z, -h)], Stroke::new(1.0, mark), 3.0, 3.0));
            painter.text(
                top - vec2(0.0, 4.0),
                egui::Align2::CENTER_BOTTOM,
                label,
                egui::FontId::proportional(12.0),
                mark,
            );
        }
    }
}

/// Rows a part's label may step up to clear its neighbours' before it is shortened.
const LABEL_ROWS: usize = 3;

/// Draws a part's name centred above `anchor`, one row higher for each placed label it would overlap (up
/// to [`LABEL_ROWS`] rows); where every row is taken, the name is shortened with "…" to the free width
/// (the part's tooltip has it whole). The placed rectangle joins `placed`.
fn part_label(painter: &egui::Painter, anchor: Pos2, name: &str, colour: Color32, placed: &mut Vec<Rect>) {
    place_label(painter, anchor, name, colour, placed, true);
}

/// Draws `name` centred on `anchor`'s x, its near edge at `anchor` (above it when `up`, else below),
/// stepping a row further away for each placed label it would overlap, then shortened as
/// [`part_label`] says. Returns the rectangle drawn in, if any.
fn place_label(
    painter: &egui::Painter,
    anchor: Pos2,
    name: &str,
    colour: Color32,
    placed: &mut Vec<Rect>,
    up: bool,
) -> Option<Rect> {
    let font = egui::FontId::proportional(12.0);
    let galley = painter.layout_no_wrap(name.to_string(), font.clone(), colour);
    let size = galley.size();
    let row_h = size.y + 2.0;
    let away = if up { -1.0 } else { 1.0 };
    let rect_at = |row: usize, width: f32| {
        let y = anchor.y + away * (0.5 * size.y + row as f32 * row_h);
        Rect::from_center_size(pos2(anchor.x, y), vec2(width + 4.0, size.y))
    };
    for row in 0..LABEL_ROWS {
        let r = rect_at(row, size.x);
        if !placed.iter().any(|p| p.intersects(r)) {
            painter.galley(r.min + vec2(2.0, 0.0), galley, colour);
            placed.push(r);
            return Some(r);
        }
    }
    // Every row is taken: shorten the name to fit between the labels on the lowest row.
    let row0 = rect_at(0, size.x);
    let left = placed
        .iter()
        .filter(|p| p.center().x < anchor.x && p.intersects(row0))
        .map(|p| p.right())
        .fold(f32::MIN, f32::max);
    let right = placed
        .iter()
        .filter(|p| p.center().x >= anchor.x && p.intersects(row0))
        .map(|p| p.left())
        .fold(f32::MAX, f32::min);
    let room = 2.0 * (anchor.x - left).min(right - anchor.x) - 6.0;
    let mut short: String = name.to_string();
    while !short.is_empty() && painter.layout_no_wrap(format!("{short}…"), font.clone(), colour).size().x > room {
        short.pop();
    }
    if short.is_empty() {
        return None;
    }
    let g = painter.layout_no_wrap(format!("{short}…"), font, colour);
    let r = Rect::from_center_size(row0.center(), g.size());
    painter.galley(r.min, g, colour);
    placed.push(r);
    Some(r)
}

/// A laser's 1/e² envelope, shaded to scale (heights with the rail's exaggeration), with its edges drawn.
fn beam_ui(painter: &egui::Painter, f: &Frame, wb: &Workbench) {
    let fill = Color32::from_rgba_unmultiplied(230, 40, 40, 60);
    let edge = Stroke::new(1.0, Color32::from_rgb(240, 90, 90));
    for run in &wb.scene.beam {
        let mut mesh = egui::Mesh::default();
        for &(z, r) in run {
            mesh.colored_vertex(f.at(z, r), fill);
            mesh.colored_vertex(f.at(z, -r), fill);
        }
        for k in 0..run.len().saturating_sub(1) as u32 {
            let i = 2 * k;
            mesh.add_triangle(i, i + 1, i + 2);
            mesh.add_triangle(i + 1, i + 3, i + 2);
        }
        painter.add(Shape::mesh(mesh));
        for sign in [1.0, -1.0] {
            painter.add(Shape::line(run.iter().map(|&(z, r)| f.at(z, sign * r)).collect(), edge));
        }
    }
}

/// The strongest stray foci: an amber diamond on the axis at each, with its number; hovering one names
/// the reflection (the readout's stray-focus table has the figures).
fn stray_marks_ui(ui: &egui::Ui, painter: &egui::Painter, f: &Frame, wb: &Workbench) {
    let colour = Color32::from_rgb(255, 190, 60);
    let font = egui::FontId::proportional(10.0);
    // Numbers step down beneath their neighbours' rather than print over them.
    let mut numbers: Vec<Rect> = Vec::new();
    for (k, mark) in wb.scene.stray.iter().enumerate() {
        let c = f.at(mark.at_mm, 0.0);
        let r = 5.0;
        let diamond = vec![c + vec2(0.0, -r), c + vec2(r, 0.0), c + vec2(0.0, r), c + vec2(-r, 0.0)];
        painter.add(Shape::convex_polygon(diamond, Color32::TRANSPARENT, Stroke::new(1.5, colour)));
        let galley = painter.layout_no_wrap(format!("{}", mark.rank), font.clone(), colour);
        let mut at = Rect::from_min_size(c + vec2(-0.5 * galley.size().x, r + 2.0), galley.size());
        while numbers.iter().any(|n| n.expand(1.0).intersects(at)) {
            at = at.translate(vec2(0.0, galley.size().y));
        }
        numbers.push(at);
        painter.galley(at.min, galley, colour);
        let hit = Rect::from_center_size(c, vec2(2.0 * r + 4.0, 2.0 * r + 4.0)).intersect(f.rect);
        if hit.is_positive() {
            let hover = ui.interact(hit, ui.scope_id().with(("stray", k)), Sense::hover());
            let label = mark.label.clone();
            hover.widget_info(|| egui::WidgetInfo::labeled(egui::Role::Label, true, &label));
            hover.on_hover_text(&mark.label);
        }
    }
}

/// A lens's surfaces at their vertices (empty for a part that is not a singlet or doublet).
fn glass_surfaces(p: &Part) -> Vec<(f64, SurfaceSpec)> {
    match &p.kind {
        PartKind::Singlet { front, back, thickness_mm, .. } => vec![(p.at_mm, *front), (p.at_mm + thickness_mm, *back)],
        PartKind::Doublet { front, middle, back, thickness1_mm, thickness2_mm, .. } => {
            let z1 = p.at_mm + thickness1_mm;
            vec![(p.at_mm, *front), (z1, *middle), (z1 + thickness2_mm, *back)]
        }
        _ => Vec::new(),
    }
}

/// The outline of a lens of surfaces at their vertices, on screen, as a closed polygon per element.
fn lens_outline(f: &Frame, surfaces: &[(f64, SurfaceSpec)], semi: f64) -> Vec<Vec<Pos2>> {
    lumenrail_export::rail::outline(surfaces, semi)
        .into_iter()
        .map(|poly| poly.into_iter().map(|(z, y)| f.at(z, y)).collect())
        .collect()
}

fn part_ui(
    wb: &mut Workbench,
    ui: &mut egui::Ui,
    painter: &egui::Painter,
    scale: &egui::Painter,
    f: &Frame,
    i: usize,
    labels: &mut Vec<Rect>,
) {
    let part = wb.bench.parts[i].clone();
    let semi = 0.5 * part.kind.diameter_mm();
    let selected = wb.selected == Some(i);
    let edge = if selected { Color32::from_rgb(255, 230, 120) } else { Color32::from_rgb(170, 200, 230) };
    let glass = Color32::from_rgba_unmultiplied(120, 170, 220, 60);
    let top = f.at(part.at_mm, semi);
    let bottom = f.at(part.end_mm(), -semi);
    let mut hit = Rect::from_two_pos(top, bottom).expand2(vec2(6.0, 4.0));
    match &part.kind {
        PartKind::ThinLens { focal_mm, .. } => {
            painter.line_segment([top, f.at(part.at_mm, -semi)], Stroke::new(2.0, edge));
            // Arrowheads out for converging, in for diverging.
            let d = if *focal_mm > 0.0 { -6.0 } else { 6.0 };
            for (p, s) in [(top, 1.0), (f.at(part.at_mm, -semi), -1.0)] {
                painter.line_segment([p, p + vec2(-5.0, -d * s)], Stroke::new(2.0, edge));
                painter.line_segment([p, p + vec2(5.0, -d * s)], Stroke::new(2.0, edge));
            }
        }
        PartKind::Singlet { front, back, thickness_mm, .. } => {
            for poly in lens_outline(f, &[(part.at_mm, *front), (part.at_mm + thickness_mm, *back)], semi) {
                painter.add(Shape::convex_polygon(poly.clone(), glass, Stroke::NONE));
                painter.add(Shape::closed_line(poly, Stroke::new(1.5, edge)));
            }
        }
        PartKind::Doublet { front, middle, back, thickness1_mm, thickness2_mm, .. } => {
            let z1 = part.at_mm + thickness1_mm;
            let surfaces = [(part.at_mm, *front), (z1, *middle), (z1 + thickness2_mm, *back)];
            for (k, poly) in lens_outline(f, &surfaces, semi).into_iter().enumerate() {
                let fill = if k == 0 { glass } else { Color32::from_rgba_unmultiplied(170, 140, 220, 70) };
                painter.add(Shape::convex_polygon(poly.clone(), fill, Stroke::NONE));
                painter.add(Shape::closed_line(poly, Stroke::new(1.5, edge)));
            }
        }
        PartKind::Mirror { surface, .. } => {
            let shape = compile::shape(surface);
            let pts: Vec<Pos2> = (0..=24)
                .map(|k| {
                    let y = semi * (1.0 - k as f64 / 12.0);
                    f.at(part.at_mm + shape.sag_mm(y.abs()).unwrap_or(0.0), y)
                })
                .collect();
            hit = Rect::from_points(&pts).expand2(vec2(6.0, 4.0));
            painter.add(Shape::line(pts, Stroke::new(4.0, edge)));
        }
        PartKind::Iris { diameter_mm } => {
            let outer = semi.max(0.5 * diameter_mm) * 2.0 + 2.0;
            let o = 0.5 * diameter_mm;
            painter.line_segment([f.at(part.at_mm, o), f.at(part.at_mm, outer)], Stroke::new(4.0, edge));
            painter.line_segment([f.at(part.at_mm, -o), f.at(part.at_mm, -outer)], Stroke::new(4.0, edge));
            hit = Rect::from_two_pos(f.at(part.at_mm, outer), f.at(part.at_mm, -outer)).expand2(vec2(6.0, 0.0));
        }
        PartKind::Eye { .. } => {
            for poly in lumenrail_export::rail::eye_outline(&part) {
                let pts: Vec<Pos2> = poly.into_iter().map(|(z, y)| f.at(z, y)).collect();
                painter.add(Shape::line(pts, Stroke::new(1.5, edge)));
            }
        }
        PartKind::Screen { .. } => {
            let r = Rect::from_two_pos(top - vec2(2.0, 0.0), f.at(part.at_mm, -semi) + vec2(2.0, 0.0));
            painter.rect_filled(r, 1.0, Color32::from_rgba_unmultiplied(230, 230, 230, 120));
            painter.rect_stroke(r, 1.0, Stroke::new(1.0, edge), egui::StrokeKind::Outside);
        }
    }
    // The carrier: a block on the rail scale.
    let y_rail = f.rect.bottom() - 28.0;
    let (c0, c1) = part
        .carrier_span_mm()
        .unwrap_or((part.at_mm - 4.0 / f.px_per_mm as f64, part.end_mm() + 4.0 / f.px_per_mm as f64));
    let carrier = Rect::from_min_max(pos2(f.at(c0, 0.0).x, y_rail - 9.0), pos2(f.at(c1, 0.0).x, y_rail - 2.0));
    scale.rect_filled(
        carrier,
        2.0,
        if wb.is_locked(i) { Color32::from_rgb(160, 90, 90) } else { Color32::from_gray(110) },
    );
    scale.line_segment(
        [pos2(f.at(part.at_mm, 0.0).x, y_rail - 12.0), pos2(f.at(part.at_mm, 0.0).x, y_rail)],
        Stroke::new(1.0, edge),
    );
    part_label(painter, top - vec2(0.0, 6.0), &part.name, edge, labels);

    let hit = hit.union(carrier).intersect(f.rect);
    let id = ui.scope_id().with(("part", i));
    let r = ui.interact(hit, id, Sense::click_and_drag());
    let name = part.name.clone();
    r.widget_info(|| egui::WidgetInfo::labeled(egui::Role::Button, true, &name));
    let r = r.on_hover_text(format!(
        "{} \"{}\" at {:.2} mm{}",
        part.kind.word(),
        part.name,
        part.at_mm,
        hover_figures(wb, &part)
    ));
    if r.clicked() || r.drag_started() {
        wb.selected = Some(i);
    }
    if r.drag_started() {
        wb.end_gesture();
        wb.view.drag = (!wb.is_locked(i)).then_some(PartDrag { index: i, start_at_mm: part.at_mm, total_px: 0.0 });
        if wb.is_locked(i) {
            wb.status = format!("\"{}\" is locked; unlock it in the part sheet to move it", part.name);
        }
    }
    if r.dragged()
        && let Some(mut d) = wb.view.drag.filter(|d| d.index == i)
    {
        d.total_px += r.drag_delta().x;
        wb.view.drag = Some(d);
        let pass = ui.input(|inp| inp.modifiers.alt);
        let target = snapped(d.start_at_mm + (d.total_px / f.px_per_mm) as f64, wb.snap_mm);
        let at = clamp_move(wb, i, d.start_at_mm, target, pass);
        if (at - wb.bench.parts[i].at_mm).abs() > 0.0 {
            wb.apply(Edit::Move { index: i, at_mm: at }, Some(&format!("drag {i}")));
        }
    }
    if r.drag_stopped() {
        wb.view.drag = None;
        wb.end_gesture();
    }
}

fn hover_figures(wb: &Workbench, part: &Part) -> String {
    match &part.kind {
        PartKind::ThinLens { focal_mm, .. } => format!("\nf = {focal_mm} mm"),
        PartKind::Screen { .. } => wb
            .evaluation
            .report
            .screens
            .iter()
            .find(|s| s.part == part.name)
            .and_then(|s| s.rms_spot_um)
            .map_or_else(String::new, |r| format!("\nRMS spot {r:.2} µm")),
        _ => String::new(),
    }
}

/// Where part `i` may go when dragged from `start` towards `target`: it stops against its neighbours'
/// footprints (unless `pass`) and stays on the rail.
fn clamp_move(wb: &Workbench, i: usize, start: f64, target: f64, pass: bool) -> f64 {
    let p = &wb.bench.parts[i];
    let (f0, f1) = footprint(p);
    let (below, above) = (p.at_mm - f0, f1 - p.at_mm);
    let mut lo = below;
    let mut hi = wb.bench.rail_length_mm - above.max(p.kind.thickness_mm());
    if !pass {
        let centre = start + 0.5 * (above - below);
        for (k, q) in wb.bench.parts.iter().enumerate() {
            if k == i {
                continue;
            }
            let (q0, q1) = footprint(q);
            if q1 - q0 <= 0.0 && f1 - f0 <= 0.0 {
                continue;
            }
            if 0.5 * (q0 + q1) <= centre {
                lo = lo.max(q1 + below);
            } else {
                hi = hi.min(q0 - above);
            }
        }
    }
    if lo > hi {
        return start;
    }
    target.clamp(lo, hi)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// In inches the ruler's ticks fall on whole steps of 25.4 mm (the inch's definition since 1959) and
    /// read in inches; in mm they read as before.
    #[test]
    #[allow(clippy::float_cmp)] // A tick is k·step·25.4 mm and its label k·step: compared exactly.
    fn the_ruler_reads_in_inches_or_mm() {
        // 1000 mm at 0.5 px/mm: the first inch step at least 60 px apart is 5 in (63.5 px).
        let (ticks, caption) = ruler(1000.0, 0.5, true);
        assert_eq!(caption, "rail 39.37 in, inches from the datum");
        assert_eq!(ticks[1], (5.0 * 25.4, "5".to_string()));
        assert_eq!(ticks.len(), 8, "0 to 35 in");
        let (ticks, caption) = ruler(1000.0, 0.5, false);
        assert_eq!(caption, "rail 1000 mm, mm from the datum");
        assert_eq!(ticks[1], (500.0, "500".to_string()));
        // Zoomed in, tenths of an inch.
        let (ticks, _) = ruler(100.0, 30.0, true);
        assert_eq!(ticks[1].1, "0.1");
    }

    /// Labels of neighbouring parts never overlap: the second steps up a row, and when every row is taken
    /// the name is shortened with "…" (or left to the tooltip when there is no room).
    #[test]
    fn neighbouring_labels_step_up_and_then_shorten() {
        let ctx = egui::Context::default();
        let mut placed = Vec::new();
        let mut out = ctx.run_ui(egui::RawInput::default(), |ui| {
            let painter = ui.painter().clone();
            for x in [200.0, 206.0, 212.0, 290.0, 296.0] {
                part_label(&painter, pos2(x, 300.0), "A long part name", Color32::WHITE, &mut placed);
            }
        });
        out.textures_delta.clear();
        // Three rows hold the first three; the fourth is shortened into the room beside the first; the
        // fifth has no room left at all (its tooltip still names it).
        assert_eq!(placed.len(), 4);
        for (a, ra) in placed.iter().enumerate() {
            for rb in &placed[a + 1..] {
                assert!(!ra.intersects(*rb), "{ra:?} and {rb:?} overlap");
            }
        }
        assert!(placed[1].bottom() < placed[0].top() + 1.0, "the second label did not step up");
        assert!(placed[3].width() < placed[0].width(), "the fourth label was not shortened");
    }

    /// An image's label below its inverted arrow steps down, away from the axis, past a label already
    /// there, and never overlaps it.
    #[test]
    fn labels_below_the_axis_step_down() {
        let ctx = egui::Context::default();
        let mut placed = Vec::new();
        let mut out = ctx.run_ui(egui::RawInput::default(), |ui| {
            let painter = ui.painter().clone();
            for x in [200.0, 204.0] {
                place_label(&painter, pos2(x, 300.0), "image ×-1.00", Color32::WHITE, &mut placed, false);
            }
        });
        out.textures_delta.clear();
        assert_eq!(placed.len(), 2);
        assert!(placed[0].top() >= 300.0 - 1e-3, "drawn below its anchor: {:?}", placed[0]);
        assert!(placed[1].top() >= placed[0].bottom() - 1.0, "{placed:?}");
        assert!(!placed[0].intersects(placed[1]));
    }
}
