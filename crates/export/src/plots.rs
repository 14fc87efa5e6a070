//! The analysis views drawn with egui_plot: spot, fan, sweep, colour, field and beam. The same drawing serves
//! the workbench's views panel and the PNG export ([`view_png`], drawn without a window by
//! [`crate::picture`]); the numbers are [`lumenrail_bench::views::Views`], never recomputed here.

use crate::colour::wavelength_rgb;
use egui::Color32;
use egui_plot::{HLine, Legend, Line, LineStyle, Plot, PlotPoints, Points, Span, VLine};
use lumenrail_bench::report::fixed;
use lumenrail_bench::views::{Point, ViewKind, Views};

/// A PNG file's bytes.
pub fn encode_png(img: &image::RgbaImage) -> Option<Vec<u8>> {
    let mut bytes = Vec::new();
    img.write_to(&mut std::io::Cursor::new(&mut bytes), image::ImageFormat::Png).ok()?;
    Some(bytes)
}

/// One view drawn without a window, 1200 × 640 points at 1.5 pixels per point, with the bench's title.
pub fn view_png(views: &Views, kind: ViewKind, title: &str) -> image::RgbaImage {
    crate::picture::render(1200.0, 640.0, 1.5, |ui| {
        ui.heading(format!("{title}: {} view", kind.word()));
        // The plots fill the picture; the spot view keeps room for its figures beneath.
        let below = match kind {
            ViewKind::Spot => 110.0,
            // A line per waist beneath the beam view.
            ViewKind::Beam => 40.0 + 20.0 * views.beam.as_ref().map_or(0.0, |b| b.waists.len() as f32),
            _ => 50.0,
        };
        draw_view(ui, views, kind, false, (ui.available_height() - below).max(300.0));
    })
}

/// The colour of a series: its wavelength's, darkened on a light background so yellow stays legible.
fn series_colour(ui: &egui::Ui, wavelength_nm: f64) -> Color32 {
    let [r, g, b] = wavelength_rgb(wavelength_nm);
    if ui.visuals().dark_mode {
        Color32::from_rgb(r, g, b)
    } else {
        let d = |c: u8| (f32::from(c) * 0.7) as u8;
        Color32::from_rgb(d(r), d(g), d(b))
    }
}

fn style(point: Point) -> LineStyle {
    match point {
        Point::OnAxis => LineStyle::Solid,
        Point::OffAxis => LineStyle::dashed_dense(),
    }
}

fn name(point: Point, wavelength_nm: f64) -> String {
    format!("{} {} nm", point.word(), fixed(wavelength_nm, 1))
}

/// A plot with the views' common settings: hover shows values with units, and a static export turns
/// interaction off.
fn plot<'a>(id: &str, x_label: &'a str, y_label: &'a str, interactive: bool, height: f32) -> Plot<'a> {
    let (xl, yl) = (x_label.to_string(), y_label.to_string());
    Plot::new(id)
        .x_axis_label(x_label)
        .y_axis_label(y_label)
        .height(height)
        .allow_drag(interactive)
        .allow_zoom(interactive)
        .allow_scroll(interactive)
        .allow_boxed_zoom(interactive)
        .show_crosshair(interactive)
        .label_formatter(move |pos| {
            Some(match pos {
                egui_plot::HoverPosition::NearDataPoint { plot_name, position, .. } => {
                    format!("{plot_name}\n{xl}: {:.4}\n{yl}: {:.4}", position.x, position.y)
                }
                egui_plot::HoverPosition::Elsewhere { position } => {
                    format!("{xl}: {:.4}\n{yl}: {:.4}", position.x, position.y)
                }
            })
        })
}

/// A key drawn outside a plot, wrapped to the width: a dot (or, for a `ring`, a circle) of each entry's
/// colour before its name.
fn key_row(ui: &mut egui::Ui, entries: &[(String, Color32, bool)]) {
    ui.horizontal_wrapped(|ui| {
        for (label, colour, ring) in entries {
            let (rect, _) = ui.allocate_exact_size(egui::vec2(10.0, 10.0), egui::Sense::hover());
            if *ring {
                ui.painter().circle_stroke(rect.center(), 4.0, egui::Stroke::new(1.5, *colour));
            } else {
                ui.painter().circle_filled(rect.center(), 3.5, *colour);
            }
            ui.label(egui::RichText::new(label).small());
        }
    });
}

fn circle(cx: f64, cy: f64, r: f64) -> PlotPoints<'static> {
    (0..=96).map(|j| j as f64 * std::f64::consts::TAU / 96.0).map(|t| [cx + r * t.cos(), cy + r * t.sin()]).collect()
}

/// Draws one view into `ui`: two plots side by side, `height` points tall, with the figures beneath.
pub fn draw_view(ui: &mut egui::Ui, views: &Views, kind: ViewKind, interactive: bool, height: f32) {
    match kind {
        ViewKind::Spot => spot_ui(ui, views, interactive, height),
        ViewKind::Fan => fan_ui(ui, views, interactive, height),
        ViewKind::Sweep => sweep_ui(ui, views, interactive, height),
        ViewKind::Colour => colour_ui(ui, views, interactive, height),
        ViewKind::Field => field_ui(ui, views, interactive, height),
        ViewKind::Beam => beam_ui(ui, views, interactive, height),
        ViewKind::Wavefront => wavefront_ui(ui, views, interactive, height),
        ViewKind::Sharpness => sharpness_ui(ui, views, interactive, height),
    }
    for n in &views.notes {
        ui.label(n);
    }
}

fn spot_ui(ui: &mut egui::Ui, views: &Views, interactive: bool, height: f32) {
    let Some(v) = &views.spot else { return };
    ui.label(format!(
        "At {} ({} mm). Dots from each point's centroid at the primary wavelength, µm; solid circle: Airy disk{}; \
         dashed: RMS radius.",
        v.plane_label,
        fixed(v.plane_at_mm, 3),
        v.airy_radius_mm.map_or_else(String::new, |a| format!(" ({} µm)", fixed(a * 1e3, 2)))
    ));
    let points: Vec<Point> =
        [Point::OnAxis, Point::OffAxis].into_iter().filter(|p| v.series.iter().any(|s| s.point == *p)).collect();
    ui.columns(points.len().max(1), |cols| {
        for (col, &point) in cols.iter_mut().zip(&points) {
            let series: Vec<_> = v.series.iter().filter(|s| s.point == point).collect();
            let reference = series.iter().find(|s| (s.wavelength_nm - v.primary_nm).abs() < 1e-9).or(series.first());
            let Some(reference) = reference else { continue };
            let (rx, ry) = reference.centroid;
            let colours: Vec<Color32> = series.iter().map(|s| series_colour(col, s.wavelength_nm)).collect();
            let axis = if point == Point::OnAxis { "on-axis" } else { "off-axis" };
            // The key sits above the plot, so that it never covers a dot.
            let mut key: Vec<(String, Color32, bool)> =
                series.iter().zip(&colours).map(|(s, c)| (name(s.point, s.wavelength_nm), *c, false)).collect();
            if v.airy_radius_mm.is_some() {
                key.push(("Airy disk".into(), Color32::GRAY, true));
            }
            key_row(col, &key);
            let height = (height - col.spacing().interact_size.y).max(120.0);
            plot(&format!("spot {axis}"), "x, µm", "y, µm", interactive, height).data_aspect(1.0).show(col, |p| {
                for (s, c) in series.iter().zip(&colours) {
                    let pts: PlotPoints = s.rays.iter().map(|r| [(r.x_mm - rx) * 1e3, (r.y_mm - ry) * 1e3]).collect();
                    p.points(Points::new(name(s.point, s.wavelength_nm), pts).color(*c).radius(1.6));
                    let (cx, cy) = ((s.centroid.0 - rx) * 1e3, (s.centroid.1 - ry) * 1e3);
                    p.line(
                        Line::new(name(s.point, s.wavelength_nm), circle(cx, cy, s.rms_mm * 1e3))
                            .color(*c)
                            .style(LineStyle::dashed_loose()),
                    );
                }
                if let Some(a) = v.airy_radius_mm {
                    p.line(Line::new("Airy disk", circle(0.0, 0.0, a * 1e3)).color(Color32::GRAY));
                }
            });
            for s in &series {
                col.label(format!(
                    "{}: RMS {} µm, geometric {} µm, centroid ({}, {}) mm{}",
                    name(s.point, s.wavelength_nm),
                    fixed(s.rms_mm * 1e3, 3),
                    fixed(s.geometric_mm * 1e3, 3),
                    fixed(s.centroid.0, 4),
                    fixed(s.centroid.1, 4),
                    match s.transmission {
                        Some(t) if t < 1.0 - 5e-4 => format!(", {}% of the pupil gets through", fixed(100.0 * t, 1)),
                        _ if s.lost > 0 => format!(", {} of the grid's rays stopped", s.lost),
                        _ => String::new(),
                    }
                ));
            }
        }
    });
}

fn fan_ui(ui: &mut egui::Ui, views: &Views, interactive: bool, height: f32) {
    let Some(v) = &views.fan else { return };
    ui.label(format!(
        "Transverse ray error at {} mm from each point's chief ray at the primary wavelength, µm; solid on-axis, \
         dashed off-axis.",
        fixed(v.plane_at_mm, 3)
    ));
    ui.columns(2, |cols| {
        for (k, col) in cols.iter_mut().enumerate() {
            let (id, x_label, y_label) = if k == 0 {
                ("fan tangential", "pupil height, tangential (−1 to 1)", "ray error in y, µm")
            } else {
                ("fan sagittal", "pupil width, sagittal (−1 to 1)", "ray error in x, µm")
            };
            let colours: Vec<Color32> = v.series.iter().map(|s| series_colour(col, s.wavelength_nm)).collect();
            plot(id, x_label, y_label, interactive, height).legend(Legend::default()).show(col, |p| {
                for (s, c) in v.series.iter().zip(&colours) {
                    let data = if k == 0 { &s.tangential } else { &s.sagittal };
                    let pts: PlotPoints = data.iter().map(|(q, e)| [*q, e * 1e3]).collect();
                    p.line(Line::new(name(s.point, s.wavelength_nm), pts).color(*c).style(style(s.point)).width(1.5));
                }
            });
        }
    });
}

fn sweep_ui(ui: &mut egui::Ui, views: &Views, interactive: bool, height: f32) {
    let Some(v) = &views.sweep else { return };
    ui.label(format!(
        "RMS spot radius through focus, µm. On-axis best focus {} mm{}; the spot view's plane (a vertical line) is marked.",
        fixed(v.best_focus_at_mm, 3),
        v.depth_of_focus_mm.map_or_else(String::new, |d| format!(", depth of focus ±{} mm (shaded)", fixed(d, 4)))
    ));
    let colours: Vec<Color32> = v.series.iter().map(|s| series_colour(ui, s.wavelength_nm)).collect();
    let text = ui.visuals().text_color();
    let plane_label = views.spot.as_ref().map_or_else(|| "view plane".to_string(), |s| s.plane_label.clone());
    plot("sweep", "plane, mm", "RMS radius, µm", interactive, height).legend(Legend::default()).show(ui, |p| {
        if let Some(d) = v.depth_of_focus_mm {
            p.span(Span::new("depth of focus", (v.best_focus_at_mm - d)..=(v.best_focus_at_mm + d)));
        }
        for (s, c) in v.series.iter().zip(&colours) {
            let pts: PlotPoints = s.samples.iter().map(|(z, r)| [*z, r * 1e3]).collect();
            p.line(Line::new(name(s.point, s.wavelength_nm), pts).color(*c).style(style(s.point)).width(1.5));
        }
        if let Some(a) = v.airy_radius_mm {
            p.hline(HLine::new("Airy radius", a * 1e3).color(Color32::GRAY).style(LineStyle::dashed_loose()));
        }
        p.vline(VLine::new(plane_label, v.plane_at_mm).color(text));
    });
    for s in &v.series {
        ui.label(format!(
            "{}: least RMS {} µm at {} mm",
            name(s.point, s.wavelength_nm),
            fixed(s.best.1 * 1e3, 3),
            fixed(s.best.0, 4)
        ));
    }
}

fn colour_ui(ui: &mut egui::Ui, views: &Views, interactive: bool, height: f32) {
    let Some(v) = &views.colour else { return };
    let primary_focus =
        v.samples.iter().find(|s| (s.wavelength_nm - v.primary_nm).abs() < 1e-9).and_then(|s| s.focus_at_mm);
    ui.label(format!(
        "Over {}–{} nm, where every material of the bench is valid. Left: paraxial focus less that at {} nm, mm. \
         Right: lateral colour of the off-axis point (real chief ray), µm.",
        fixed(v.range_nm.0, 0),
        fixed(v.range_nm.1, 0),
        fixed(v.primary_nm, 1)
    ));
    if v.samples.iter().all(|s| s.focus_at_mm.is_none()) {
        ui.label("The final image is at infinity at every wavelength, so there is no focus to plot.");
    }
    let marks: Vec<(f64, Color32)> = v.bench_nm.iter().map(|&w| (w, series_colour(ui, w))).collect();
    ui.columns(2, |cols| {
        for (k, col) in cols.iter_mut().enumerate() {
            let (id, y_label) =
                if k == 0 { ("colour focus", "focus shift, mm") } else { ("colour lateral", "lateral colour, µm") };
            let pts: Vec<[f64; 2]> = v
                .samples
                .iter()
                .filter_map(|s| {
                    let y = if k == 0 {
                        s.focus_at_mm.zip(primary_focus).map(|(f, p)| f - p)
                    } else {
                        s.lateral_colour_mm.map(|l| l * 1e3)
                    };
                    y.map(|y| [s.wavelength_nm, y])
                })
                .collect();
            let marks = marks.clone();
            // The focus curve rises to the right: its legend goes to the free upper left.
            let legend = Legend::default().position(egui_plot::Corner::LeftTop);
            plot(id, "wavelength, nm", y_label, interactive, height).legend(legend).show(col, |p| {
                for (w, c) in &marks {
                    p.vline(VLine::new(format!("{} nm", fixed(*w, 1)), *w).color(*c));
                }
                p.line(Line::new(y_label, PlotPoints::from(pts)).width(1.5));
            });
        }
    });
}

fn field_ui(ui: &mut egui::Ui, views: &Views, interactive: bool, height: f32) {
    let Some(v) = &views.field else { return };
    ui.label(format!(
        "Across the field ({}). Left: tangential (solid) and sagittal (dashed) focus less the paraxial image, mm. \
         Right: distortion, %.",
        v.field_label
    ));
    let (field, label) = (|p: &lumenrail_bench::views::FieldPointFigures| p.field, v.field_label);
    ui.columns(2, |cols| {
        let t: Vec<[f64; 2]> = v.points.iter().map(|p| [p.tangential_mm, field(p)]).collect();
        let s: Vec<[f64; 2]> = v.points.iter().map(|p| [p.sagittal_mm, field(p)]).collect();
        let legend = Legend::default();
        plot("field curves", "focus shift, mm", label, interactive, height).legend(legend.clone()).show(
            &mut cols[0],
            |p| {
                p.line(Line::new("tangential", PlotPoints::from(t)).width(1.5));
                p.line(Line::new("sagittal", PlotPoints::from(s)).style(LineStyle::dashed_dense()).width(1.5));
                p.vline(VLine::new("paraxial image", 0.0).color(Color32::GRAY));
            },
        );
        let d: Vec<[f64; 2]> = v.points.iter().filter_map(|p| p.distortion_percent.map(|d| [d, field(p)])).collect();
        plot("field distortion", "distortion, %", label, interactive, height).legend(legend).show(&mut cols[1], |p| {
            p.line(Line::new("distortion", PlotPoints::from(d)).width(1.5));
            p.vline(VLine::new("no distortion", 0.0).color(Color32::GRAY));
        });
    });
}

/// The beam view: the 1/e² diameter along the rail (one curve, broken at each surface), the waists as
/// dots and the parts as vertical lines at the rail positions where the beam meets them.
fn beam_ui(ui: &mut egui::Ui, views: &Views, interactive: bool, height: f32) {
    let Some(v) = &views.beam else { return };
    ui.label(format!(
        "The laser beam's 1/e² diameter along the rail at {} nm (M² {}), mm; dots: waists; vertical lines: parts.",
        fixed(v.wavelength_nm, 1),
        fixed(v.m_squared, 2)
    ));
    let colour = series_colour(ui, v.wavelength_nm);
    let text = ui.visuals().text_color();
    let top = v.runs.iter().flatten().map(|p| p.1).fold(0.0_f64, f64::max);
    let legend = Legend::default().position(egui_plot::Corner::LeftTop);
    let part_colour = Color32::from_rgb(90, 130, 200);
    plot("beam", "rail position, mm", "1/e² diameter, mm", interactive, height).legend(legend).show(ui, |p| {
        // One legend entry for the whole curve: every run carries the same name.
        for run in &v.runs {
            let pts: PlotPoints = run.iter().map(|&(z, d)| [z, d]).collect();
            p.line(Line::new("1/e² diameter", pts).color(colour).width(1.8));
        }
        for part in &v.parts {
            // Every part line shares one legend entry.
            p.vline(VLine::new("part", part.at_mm).color(part_colour).style(LineStyle::dashed_loose()));
            p.text(
                // No name: the lines carry the legend entry.
                egui_plot::Text::new(
                    "",
                    egui_plot::PlotPoint::new(part.at_mm, 1.04 * top),
                    egui::RichText::new(&part.part).small(),
                )
                .color(text),
            );
        }
        let dots: PlotPoints = v.waists.iter().map(|w| [w.at_mm, w.diameter_mm]).collect();
        p.points(Points::new("waist", dots).color(text).radius(4.0));
    });
    for w in &v.waists {
        ui.label(format!(
            "waist after {}: at {} mm, {} mm across, Rayleigh range {} mm",
            w.after,
            fixed(w.at_mm, 3),
            fixed(w.diameter_mm, 4),
            fixed(w.rayleigh_range_mm, 2)
        ));
    }
}
/// A false-colour picture of `nx` × `ny` cells, `side` points square, cell (i, j) from −x to +x and
/// from −y (bottom) to +y (top), each cell's colour from `colour` (`None`: left as the background).
fn cell_picture(ui: &mut egui::Ui, nx: usize, ny: usize, side: f32, colour: impl Fn(usize, usize) -> Option<Color32>) {
    let (rect, _) = ui.allocate_exact_size(egui::vec2(side, side), egui::Sense::hover());
    let (w, h) = (side / nx.max(1) as f32, side / ny.max(1) as f32);
    let mut mesh = egui::Mesh::default();
    for j in 0..ny {
        for i in 0..nx {
            if let Some(c) = colour(i, j) {
                let min = egui::pos2(rect.left() + i as f32 * w, rect.bottom() - (j + 1) as f32 * h);
                mesh.add_colored_rect(egui::Rect::from_min_size(min, egui::vec2(w, h)), c);
            }
        }
    }
    ui.painter().add(egui::Shape::mesh(mesh));
    let edge = egui::Stroke::new(1.0, ui.visuals().weak_text_color());
    ui.painter().rect_stroke(rect, 0.0, edge, egui::StrokeKind::Outside);
}

fn blend(a: Color32, b: Color32, t: f32) -> Color32 {
    let t = t.clamp(0.0, 1.0);
    let mix = |x: u8, y: u8| (f32::from(x) + (f32::from(y) - f32::from(x)) * t).round() as u8;
    Color32::from_rgb(mix(a.r(), b.r()), mix(a.g(), b.g()), mix(a.b(), b.b()))
}

/// The wavefront map's colours: `t` from −1 (the map's lowest magnitude below zero: slate blue) through 0
/// (the panel's own background) to +1 (rust red).
fn wave_colour(visuals: &egui::Visuals, t: f64) -> Color32 {
    let zero = visuals.extreme_bg_color;
    let (low, high) = (Color32::from_rgb(52, 92, 190), Color32::from_rgb(196, 74, 38));
    if t < 0.0 { blend(zero, low, (-t) as f32) } else { blend(zero, high, t as f32) }
}

/// The PSF picture's colours: `t` from 0 (the background) to 1 (the peak), brightness as √t so the
/// rings show beside the core.
fn psf_colour(visuals: &egui::Visuals, t: f64) -> Color32 {
    let ink = if visuals.dark_mode { Color32::from_rgb(255, 214, 128) } else { Color32::from_rgb(22, 34, 96) };
    blend(visuals.extreme_bg_color, ink, t.max(0.0).sqrt() as f32)
}

/// The primary wavelength's wavefront map of one point, with its scale in words beside it.
fn wave_map_ui(ui: &mut egui::Ui, wf: &lumenrail_optics::wavefront::Wavefront, side: f32) {
    let reach = wf.map.iter().flatten().fold(0.0f64, |m, w| m.max(w.abs()));
    let n = wf.across;
    ui.horizontal(|ui| {
        let visuals = ui.visuals().clone();
        cell_picture(ui, n, n, side, |i, j| {
            wf.map[j * n + i]
                .filter(|_| wf.coverage[j * n + i] > 0.0)
                .map(|w| wave_colour(&visuals, if reach > 0.0 { w / reach } else { 0.0 }))
        });
        ui.vertical(|ui| {
            ui.label(egui::RichText::new(format!("map at {} nm", fixed(wf.wavelength_nm, 1))).small());
            ui.label(egui::RichText::new("piston and tilt removed; +y up").small());
            ui.label(
                egui::RichText::new(format!("blue −{r} to red +{r} waves", r = fixed(reach, 4)))
                    .small()
                    .color(ui.visuals().text_color()),
            );
        });
    });
}

/// One point's polychromatic PSF: the picture (the centred square holding 95 % of its energy, at least
/// four Airy radii) and the cut along x against the Airy pattern of the same aperture.
fn psf_ui(ui: &mut egui::Ui, id: &str, psf: &lumenrail_optics::diffraction::Psf, interactive: bool, side: f32) {
    let Some(first) = psf.perfect.first() else { return };
    let airy_mm = lumenrail_optics::diffraction::AIRY_FIRST_ZERO / first.v_per_mm;
    let half_mm = psf.half_width_holding(0.95, 4.0 * airy_mm);
    let m = psf.size;
    let c = m / 2;
    let kx = ((half_mm / psf.dx_mm).round() as usize).min(c.saturating_sub(1));
    let ky = ((half_mm / psf.dy_mm).round() as usize).min(c.saturating_sub(1));
    let peak = psf.values.iter().copied().fold(0.0, f64::max);
    ui.horizontal(|ui| {
        let (nx, ny) = (2 * kx + 1, 2 * ky + 1);
        let visuals = ui.visuals().clone();
        cell_picture(ui, nx, ny, side, |i, j| {
            let v = psf.values[(c - ky + j) * m + c - kx + i];
            Some(psf_colour(&visuals, if peak > 0.0 { v / peak } else { 0.0 }))
        });
        let reach_mm = kx as f64 * psf.dx_mm;
        let cut: PlotPoints = psf
            .cut_x_of_perfect()
            .into_iter()
            .filter(|(x, _)| x.abs() <= reach_mm + 1e-12)
            .map(|(x, v)| [1e3 * x, v])
            .collect();
        let reference: PlotPoints = (0..=200)
            .map(|k| -reach_mm + 2.0 * reach_mm * f64::from(k) / 200.0)
            .map(|x| [1e3 * x, psf.perfect_at(x)])
            .collect();
        let ink = ui.visuals().text_color();
        ui.add_space(14.0);
        plot(id, "x at the image, µm", "of perfect peak", interactive, side).include_y(0.0).include_y(1.0).show(
            ui,
            |plot_ui| {
                plot_ui.line(Line::new("Airy pattern, same aperture", reference).color(Color32::GRAY));
                plot_ui.line(Line::new("PSF cut along x", cut).color(ink));
            },
        );
    });
    ui.label(
        egui::RichText::new(format!(
            "PSF of every wavelength by its weight, {}×{} µm shown, brightness as √intensity; cut along x: intensity \
             over the diffraction-limited peak, grey: the Airy pattern of the same aperture (first dark ring at {} µm)",
            fixed(2e3 * kx as f64 * psf.dx_mm, 1),
            fixed(2e3 * ky as f64 * psf.dy_mm, 1),
            fixed(1e3 * airy_mm, 2)
        ))
        .small(),
    );
}

/// The wavefront view: each point's OPD fans (tangential solid, sagittal dashed) at every wavelength, in
/// waves with piston and tilt removed, its primary wavelength's map beneath, and its figures.
fn wavefront_ui(ui: &mut egui::Ui, views: &Views, interactive: bool, height: f32) {
    let Some(v) = &views.sharpness else { return };
    ui.label(format!(
        "Wavefront error on a sphere centred on the chief ray's point on {}, waves, piston and tilt removed; \
         solid: tangential fan, dashed: sagittal fan.",
        v.plane
    ));
    ui.columns(v.points.len().max(1), |cols| {
        for (col, p) in cols.iter_mut().zip(&v.points) {
            let height = (height - 2.0 * col.spacing().interact_size.y).max(200.0);
            let side = (0.38 * height).min(0.5 * col.available_width());
            let colours: Vec<Color32> = p.waves.iter().map(|w| series_colour(col, w.wavefront.wavelength_nm)).collect();
            plot(&format!("wavefront {}", p.point.word()), "pupil coordinate", "OPD, waves", interactive, height - side)
                .show(col, |plot_ui| {
                    for (w, &c) in p.waves.iter().zip(&colours) {
                        let wf = &w.wavefront;
                        let label = name(p.point, wf.wavelength_nm);
                        let tan: PlotPoints = wf.tangential_fan.iter().map(|f| [f.p, f.waves]).collect();
                        let sag: PlotPoints = wf.sagittal_fan.iter().map(|f| [f.p, f.waves]).collect();
                        plot_ui.line(Line::new(label.clone(), tan).color(c));
                        plot_ui.line(Line::new(label, sag).color(c).style(LineStyle::dashed_loose()));
                    }
                });
            if let Some(w) = p.primary() {
                let wf = &w.wavefront;
                wave_map_ui(col, wf, side);
                let verdict = if wf.diffraction_limited() { "diffraction-limited" } else { "not diffraction-limited" };
                col.label(format!(
                    "{} at {} nm: RMS {} waves, PV {} (focus removed too: RMS {}, PV {}); Strehl {} (Maréchal {}); {verdict} (RMS ≤ λ/14)",
                    p.point.word(),
                    fixed(wf.wavelength_nm, 1),
                    fixed(wf.rms_waves, 4),
                    fixed(wf.pv_waves, 4),
                    fixed(wf.rms_focus_removed_waves, 4),
                    fixed(wf.pv_focus_removed_waves, 4),
                    fixed(w.strehl, 3),
                    fixed(wf.strehl_marechal(), 3)
                ));
            }
        }
    });
}

/// The sharpness view: each point's polychromatic MTF (tangential solid, sagittal dashed) against spatial
/// frequency in cycles per mm at the image, with the diffraction limit in grey and the 50 % and 10 %
/// frequencies beneath, then its PSF as a picture and a cut.
fn sharpness_ui(ui: &mut egui::Ui, views: &Views, interactive: bool, height: f32) {
    let Some(v) = &views.sharpness else { return };
    ui.label(format!(
        "MTF of every wavelength by its weight, at {}; solid: tangential, dashed: sagittal, grey: diffraction limit. \
         A line pair is one cycle.",
        v.plane
    ));
    ui.columns(v.points.len().max(1), |cols| {
        for (col, p) in cols.iter_mut().zip(&v.points) {
            let Some(m) = &p.mtf else { continue };
            let height = (height - 3.0 * col.spacing().interact_size.y).max(200.0);
            let side = (0.38 * height).min(0.45 * col.available_width());
            let curve = |c: &[f64]| -> PlotPoints<'static> {
                m.frequencies_per_mm.iter().zip(c).map(|(f, v)| [*f, *v]).collect()
            };
            let ink = col.visuals().text_color();
            let mtf_height = height - side;
            plot(&format!("mtf {}", p.point.word()), "cycles per mm at the image", "contrast", interactive, mtf_height)
                .include_y(0.0)
                .include_y(1.0)
                .show(col, |plot_ui| {
                    plot_ui.line(Line::new("diffraction limit", curve(&m.limit_tangential)).color(Color32::GRAY));
                    plot_ui.line(Line::new("tangential", curve(&m.tangential)).color(ink));
                    plot_ui.line(Line::new("sagittal", curve(&m.sagittal)).color(ink).style(LineStyle::dashed_loose()));
                });
            let at = |v: Option<f64>| v.map_or_else(|| "—".to_string(), |v| format!("{}/mm", fixed(v, 1)));
            col.label(format!(
                "{}: 50% at {} T, {} S; 10% at {} T, {} S; cutoff {}/mm",
                p.point.word(),
                at(m.falls_to(&m.tangential, 0.5)),
                at(m.falls_to(&m.sagittal, 0.5)),
                at(m.falls_to(&m.tangential, 0.1)),
                at(m.falls_to(&m.sagittal, 0.1)),
                fixed(m.cutoff_per_mm, 1)
            ));
            if let Some((_, psf)) = views.psf.iter().find(|(q, _)| *q == p.point) {
                psf_ui(col, &format!("psf {}", p.point.word()), psf, interactive, side);
            }
        }
    });
}
