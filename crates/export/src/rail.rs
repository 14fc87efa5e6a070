//! The rail drawing as SVG: the bench to scale from the side, with the title, the millimetre scale from the
//! datum, every part (lenses as their true profiles), the traced rays in their wavelengths' colours and the
//! images, from the bench's evaluation and its [`Scene`]. Heights are drawn taller than lengths by the
//! factor the drawing states under its scale, as on the workbench's rail.

use crate::colour::wavelength_rgb;
use crate::scene::Scene;
use lumenrail_bench::compile;
use lumenrail_bench::evaluation::Evaluation;
use lumenrail_bench::model::{ObjectSpec, PartKind, SurfaceSpec};
use lumenrail_bench::report::fixed;
use svg::Document;
use svg::node::element::{Group, Line, Polygon, Polyline, Rectangle as Rect, Text};

/// The drawing's size in px: width and height.
pub const RAIL_SVG_SIZE: (f64, f64) = (1200.0, 520.0);

/// The smallest canvas the rail drawing is laid out for, points: below it the title, the scale and the
/// labels no longer fit.
pub const RAIL_MIN_SIZE: (f64, f64) = (480.0, 240.0);

const MARGIN: f64 = 40.0;
const TITLE_BAND: f64 = 40.0;
const SCALE_BAND: f64 = 60.0;

/// Maps rail coordinates (mm) to the drawing.
struct Map {
    px_per_mm: f64,
    py_per_mm: f64,
    axis_y: f64,
}

impl Map {
    fn x(&self, z_mm: f64) -> f64 {
        MARGIN + z_mm * self.px_per_mm
    }

    /// The picture's y of a height, held within ±10⁷ px: a height far outside the picture (an object
    /// point 10³⁰⁰ mm off axis, which no drawing can hold) is drawn to beyond the edge, never to infinity.
    fn y(&self, y_mm: f64) -> f64 {
        (self.axis_y - y_mm * self.py_per_mm).clamp(-1e7, 1e7)
    }

    fn points(&self, pts: impl IntoIterator<Item = (f64, f64)>) -> String {
        pts.into_iter().map(|(z, y)| format!("{:.3},{:.3}", self.x(z), self.y(y))).collect::<Vec<_>>().join(" ")
    }
}

fn rgb([r, g, b]: [u8; 3]) -> String {
    format!("rgb({r},{g},{b})")
}

fn text(x: f64, y: f64, size: f64, anchor: &str, content: &str) -> Text {
    Text::new(content)
        .set("x", format!("{x:.3}"))
        .set("y", format!("{y:.3}"))
        .set("font-size", size)
        .set("text-anchor", anchor)
}

/// The rail drawing of `evaluation` as an SVG document's text, [`RAIL_SVG_SIZE`] points large.
pub fn rail_svg(evaluation: &Evaluation, scene: &Scene) -> String {
    rail_svg_sized(evaluation, scene, RAIL_SVG_SIZE)
}

/// The rail drawing laid out for a `(width, height)` canvas in points (each at least
/// [`RAIL_MIN_SIZE`]; smaller sizes are raised to it).
pub fn rail_svg_sized(evaluation: &Evaluation, scene: &Scene, size: (f64, f64)) -> String {
    let bench = &evaluation.bench;
    let (width, height) = (size.0.max(RAIL_MIN_SIZE.0), size.1.max(RAIL_MIN_SIZE.1));
    let rail = bench.rail_length_mm.max(1.0);
    let px_per_mm = (width - 2.0 * MARGIN) / rail;
    // Heights: the tallest part, the object and the drawn bundle fill 84% of the optical band's half.
    let max_semi = bench.parts.iter().map(|p| 0.5 * p.kind.diameter_mm()).fold(1.0, f64::max);
    let object_h = match bench.object {
        ObjectSpec::Point { height_mm, .. } => height_mm.abs(),
        ObjectSpec::Distant { beam_diameter_mm, .. } => 0.5 * beam_diameter_mm,
    };
    let rays_h = scene
        .rays
        .iter()
        .flat_map(|r| r.points.iter())
        .filter(|(z, _)| (0.0..=rail).contains(z))
        .map(|(_, y)| y.abs())
        .fold(0.0, f64::max);
    let tallest = max_semi.max(object_h).max(rays_h.min(4.0 * max_semi));
    let optical = height - TITLE_BAND - SCALE_BAND;
    let exaggeration = (0.42 * optical / (tallest * px_per_mm)).max(1.0);
    let map = Map { px_per_mm, py_per_mm: px_per_mm * exaggeration, axis_y: TITLE_BAND + 0.5 * optical };

    let mut doc = Document::new()
        .set("width", width)
        .set("height", height)
        .set("viewBox", (0.0, 0.0, width, height))
        .set("font-family", "sans-serif")
        .add(Rect::new().set("width", width).set("height", height).set("fill", "white"))
        .add(text(MARGIN, 26.0, 16.0, "start", &bench.title).set("id", "title"));

    // The axis and the scale: ticks every 10, 50 or 100 mm, labelled in mm from the datum.
    let scale_y = height - SCALE_BAND + 20.0;
    let mut scale = Group::new().set("id", "scale").set("stroke", "black").set("fill", "black");
    scale = scale.add(
        Line::new()
            .set("x1", map.x(0.0))
            .set("x2", map.x(rail))
            .set("y1", scale_y)
            .set("y2", scale_y)
            .set("stroke-width", 2),
    );
    let step =
        [1.0, 5.0, 10.0, 50.0, 100.0, 500.0, 1000.0].into_iter().find(|s| s * px_per_mm >= 60.0).unwrap_or(1000.0);
    let mut z = 0.0;
    while z <= rail + 1e-9 {
        scale = scale
            .add(Line::new().set("x1", map.x(z)).set("x2", map.x(z)).set("y1", scale_y - 5.0).set("y2", scale_y + 5.0))
            .add(
                text(map.x(z), scale_y + 18.0, 11.0, "middle", &fixed(z, 0))
                    .set("stroke", "none")
                    .set("class", "tick")
                    .set("data-mm", fixed(z, 3)),
            );
        z += step;
    }
    scale = scale.add(
        text(
            width - MARGIN,
            height - 6.0,
            11.0,
            "end",
            &format!(
                "rail {} mm; positions in mm from the datum; heights drawn {}× taller than lengths",
                fixed(rail, 0),
                fixed(exaggeration, 1)
            ),
        )
        .set("stroke", "none"),
    );
    doc = doc.add(scale).add(
        Line::new()
            .set("x1", map.x(0.0))
            .set("x2", map.x(rail))
            .set("y1", map.axis_y)
            .set("y2", map.axis_y)
            .set("stroke", "rgb(150,150,150)")
            .set("stroke-dasharray", "6 4"),
    );

    // The rays, each in its wavelength's colour (the off-axis point's fainter).
    let mut rays = Group::new().set("id", "rays").set("fill", "none");
    for r in &scene.rays {
        rays = rays.add(
            Polyline::new()
                .set("points", map.points(r.points.iter().copied()))
                .set("stroke", rgb(wavelength_rgb(r.wavelength_nm)))
                .set("stroke-width", 1.0)
                .set("stroke-opacity", if r.off_axis { 0.45 } else { 0.9 })
                .set("data-wavelength-nm", r.wavelength_nm),
        );
    }
    doc = doc.add(rays);

    // The parts.
    let mut parts = Group::new().set("id", "parts");
    for i in bench.rail_order() {
        let p = &bench.parts[i];
        let semi = 0.5 * p.kind.diameter_mm();
        let mut g = Group::new().set("data-part", p.name.as_str()).set("data-at-mm", p.at_mm);
        let edge = "rgb(40,60,110)";
        match &p.kind {
            PartKind::ThinLens { .. } => {
                g = g.add(
                    Line::new()
                        .set("x1", map.x(p.at_mm))
                        .set("x2", map.x(p.at_mm))
                        .set("y1", map.y(semi))
                        .set("y2", map.y(-semi))
                        .set("stroke", edge)
                        .set("stroke-width", 2),
                );
            }
            PartKind::Singlet { front, back, thickness_mm, .. } => {
                for poly in outline(&[(p.at_mm, *front), (p.at_mm + thickness_mm, *back)], semi) {
                    g = g.add(glass(&map, poly, edge));
                }
            }
            PartKind::Doublet { front, middle, back, thickness1_mm, thickness2_mm, .. } => {
                let z1 = p.at_mm + thickness1_mm;
                for poly in outline(&[(p.at_mm, *front), (z1, *middle), (z1 + thickness2_mm, *back)], semi) {
                    g = g.add(glass(&map, poly, edge));
                }
            }
            PartKind::Mirror { surface, .. } => {
                let shape = compile::shape(surface);
                let pts = (0..=24).map(|k| {
                    let y = semi * (1.0 - k as f64 / 12.0);
                    (p.at_mm + shape.sag_mm(y.abs()).unwrap_or(0.0), y)
                });
                g = g.add(
                    Polyline::new()
                        .set("points", map.points(pts))
                        .set("fill", "none")
                        .set("stroke", edge)
                        .set("stroke-width", 4),
                );
            }
            PartKind::Iris { diameter_mm } => {
                let (o, outer) = (0.5 * diameter_mm, semi.max(0.5 * diameter_mm) * 2.0 + 2.0);
                for (a, b) in [(o, outer), (-o, -outer)] {
                    g = g.add(
                        Line::new()
                            .set("x1", map.x(p.at_mm))
                            .set("x2", map.x(p.at_mm))
                            .set("y1", map.y(a))
                            .set("y2", map.y(b))
                            .set("stroke", edge)
                            .set("stroke-width", 4),
                    );
                }
            }
            PartKind::Eye { .. } => {
                for poly in eye_outline(p) {
                    g = g.add(
                        Polyline::new()
                            .set("points", map.points(poly))
                            .set("fill", "none")
                            .set("stroke", edge)
                            .set("stroke-width", 1.5),
                    );
                }
            }
            PartKind::Screen { .. } => {
                g = g.add(
                    Rect::new()
                        .set("x", map.x(p.at_mm) - 2.0)
                        .set("y", map.y(semi))
                        .set("width", 4)
                        .set("height", map.y(-semi) - map.y(semi))
                        .set("fill", "rgb(200,200,200)")
                        .set("stroke", edge),
                );
            }
        }
        let top = map.y(semi.max(if matches!(p.kind, PartKind::Iris { .. }) { 2.0 * semi } else { semi })) - 6.0;
        g = g.add(text(map.x(p.at_mm), top, 12.0, "middle", &p.name).set("fill", edge));
        parts = parts.add(g);
    }
    doc = doc.add(parts);

    // The object and the images: solid arrows for real ones, dashed for virtual.
    let mut marks = Group::new().set("id", "images");
    if let ObjectSpec::Point { at_mm, height_mm } = bench.object {
        marks = marks.add(arrow(&map, at_mm, height_mm, "rgb(200,120,0)", false).set("class", "object"));
    }
    for img in &scene.images {
        // The label beyond the arrow's tip, away from the axis.
        let y_tip = map.y(img.height_mm);
        let y_label = if img.height_mm >= 0.0 { y_tip - 8.0 } else { y_tip + 18.0 };
        marks = marks.add(
            arrow(&map, img.at_mm, img.height_mm, "black", !img.real)
                .set("class", "image")
                .add(text(map.x(img.at_mm), y_label, 11.0, "middle", &img.label()).set("class", "image-label")),
        );
    }
    doc = doc.add(marks);
    doc.to_string()
}

/// An eye's side view, rail coordinates: the globe (an ellipse through the corneal vertex and the retina),
/// the cornea's front arc, the lens's front and back arcs (semi-diameter 4.5 mm, about a lens's; from
/// memory) and the pupil's edges.
pub fn eye_outline(p: &lumenrail_bench::model::Part) -> Vec<Vec<(f64, f64)>> {
    let Ok(state) = p.kind.eye_state() else { return Vec::new() };
    let length = state.retina_mm;
    let half_height = 0.5 * lumenrail_bench::model::EYE_DIAMETER_MM;
    let centre = p.at_mm + 0.5 * length;
    let globe = (0..=48)
        .map(|k| {
            let a = std::f64::consts::TAU * k as f64 / 48.0;
            (centre - 0.5 * length * a.cos(), half_height * a.sin())
        })
        .collect();
    let arc = |at: f64, c: f64, semi: f64| -> Vec<(f64, f64)> {
        (0..=16)
            .map(|k| {
                let y = semi * (1.0 - k as f64 / 8.0);
                let sag = if c == 0.0 {
                    0.0
                } else {
                    lumenrail_optics::system::Shape::sphere(1.0 / c).sag_mm(y.abs()).unwrap_or(0.0)
                };
                (p.at_mm + at + sag, y)
            })
            .collect()
    };
    let surfaces = &state.optics.surfaces;
    let mut out = vec![globe];
    if let Some(s) = surfaces.first() {
        out.push(arc(s.at_mm, s.curvature_per_mm, 5.5));
    }
    if surfaces.len() >= 6 {
        out.push(arc(surfaces[2].at_mm, surfaces[2].curvature_per_mm, 4.5));
        out.push(arc(surfaces[5].at_mm, surfaces[5].curvature_per_mm, 4.5));
    }
    if let lumenrail_bench::model::PartKind::Eye { pupil_mm, .. } = p.kind {
        let z = p.at_mm + state.optics.pupil_at_mm;
        out.push(vec![(z, 0.5 * pupil_mm), (z, 6.0)]);
        out.push(vec![(z, -0.5 * pupil_mm), (z, -6.0)]);
    }
    out
}

fn glass(map: &Map, poly: Vec<(f64, f64)>, edge: &str) -> Polygon {
    Polygon::new()
        .set("points", map.points(poly))
        .set("fill", "rgb(170,200,240)")
        .set("fill-opacity", 0.5)
        .set("stroke", edge)
        .set("stroke-width", 1.5)
}

fn arrow(map: &Map, at_mm: f64, height_mm: f64, colour: &str, dashed: bool) -> Group {
    let (x, y0, y1) = (map.x(at_mm), map.y(0.0), map.y(height_mm));
    let d = if y1 < y0 { 6.0 } else { -6.0 };
    let mut line =
        Line::new().set("x1", x).set("x2", x).set("y1", y0).set("y2", y1).set("stroke", colour).set("stroke-width", 2);
    if dashed {
        line = line.set("stroke-dasharray", "5 4");
    }
    Group::new().set("data-at-mm", at_mm).add(line).add(
        Polyline::new()
            .set("points", format!("{:.3},{:.3} {x:.3},{y1:.3} {:.3},{:.3}", x - 4.0, y1 + d, x + 4.0, y1 + d))
            .set("fill", "none")
            .set("stroke", colour)
            .set("stroke-width", 2),
    )
}

/// The outline of a lens of surfaces at their vertices over the semi-diameter, one closed polygon per
/// element of glass, in rail coordinates (mm): what the workbench's rail and the SVG both draw.
pub fn outline(surfaces: &[(f64, SurfaceSpec)], semi: f64) -> Vec<Vec<(f64, f64)>> {
    const N: usize = 24;
    let profile = |z: f64, s: &SurfaceSpec| -> Vec<(f64, f64)> {
        let shape = compile::shape(s);
        (0..=N)
            .map(|k| {
                let y = semi * (1.0 - 2.0 * k as f64 / N as f64);
                (z + shape.sag_mm(y.abs()).unwrap_or(0.0), y)
            })
            .collect()
    };
    surfaces
        .windows(2)
        .map(|w| {
            let mut pts = profile(w[0].0, &w[0].1);
            pts.extend(profile(w[1].0, &w[1].1).into_iter().rev());
            pts
        })
        .collect()
}

/// Why a rail picture could not be made.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct PictureError(pub String);

impl std::fmt::Display for PictureError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&self.0)
    }
}

impl std::error::Error for PictureError {}

/// The rail drawing as a PNG file's bytes, `width` × `height` pixels: the SVG of [`rail_svg_sized`] laid
/// out for that size and rasterised (resvg) with the font the workbench bundles, so the PNG and the SVG
/// are one drawing and need no font of the computer's. Sizes below [`RAIL_MIN_SIZE`] are raised to it;
/// at most 8000 pixels a side.
pub fn rail_png(evaluation: &Evaluation, scene: &Scene, width: u32, height: u32) -> Result<Vec<u8>, PictureError> {
    if width > 8000 || height > 8000 {
        return Err(PictureError(format!(
            "{width} × {height} pixels is larger than a rail picture is made (at most 8000 a side)"
        )));
    }
    let (w, h) = (f64::from(width).max(RAIL_MIN_SIZE.0), f64::from(height).max(RAIL_MIN_SIZE.1));
    let svg = rail_svg_sized(evaluation, scene, (w, h));
    let mut options = resvg::usvg::Options::default();
    let fonts = options.fontdb_mut();
    fonts.load_font_data(epaint_default_fonts::UBUNTU_LIGHT.to_vec());
    let family = fonts.faces().next().and_then(|f| f.families.first()).map(|(name, _)| name.clone());
    if let Some(family) = family {
        fonts.set_sans_serif_family(family);
    }
    let tree = resvg::usvg::Tree::from_str(&svg, &options)
        .map_err(|e| PictureError(format!("the rail drawing could not be read back for the picture: {e}")))?;
    let (pw, ph) = (w.round() as u32, h.round() as u32);
    let mut pixmap = resvg::tiny_skia::Pixmap::new(pw, ph)
        .ok_or_else(|| PictureError(format!("cannot make a {pw} × {ph} picture")))?;
    resvg::render(&tree, resvg::tiny_skia::Transform::identity(), &mut pixmap.as_mut());
    pixmap.encode_png().map_err(|e| PictureError(format!("cannot encode the picture as PNG: {e}")))
}
