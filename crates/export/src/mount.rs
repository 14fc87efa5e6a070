//! The mount sheet's files for the machine shop: its table as CSV, the assembly drawing as SVG, and the
//! same drawing as plain ASCII DXF for drawing and machining programs. Every number comes from the
//! [`MountSheet`]; nothing is traced here. Lengths are the sheet's millimetres, or inches (25.4 mm each,
//! exactly) when asked.

use crate::rail::outline;
use lumenrail_bench::model::SurfaceSpec;
use lumenrail_bench::mount::{MountPart, MountSheet, length, sag_mm, unit};
use lumenrail_bench::report::fixed;
use svg::Document;
use svg::node::element::{Group, Line, Polygon, Polyline, Rectangle as Rect, Text};

/// The DXF layers the drawing is written on, in this order.
pub const DXF_LAYERS: [&str; 4] = ["OUTLINE", "AXIS", "DIMENSION", "APERTURE"];

/// Why a mount sheet file could not be made.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct MountFileError(pub String);

impl std::fmt::Display for MountFileError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&self.0)
    }
}

impl std::error::Error for MountFileError {}

/// Decimals shown for a length: 3 in mm (a micrometre), 4 in inches (a ten-thousandth).
fn digits(inch: bool) -> usize {
    if inch { 4 } else { 3 }
}

/// The CSV column names, each length column ending in its unit (`_mm` or `_in`).
pub fn csv_header(inch: bool) -> Vec<String> {
    let u = unit(inch);
    let mut h = vec!["part".to_string(), "kind".to_string(), "surface".to_string()];
    for name in [
        "reference_at",
        "reference_spacing",
        "vertex_at",
        "vertex_spacing",
        "diameter",
        "clear_aperture",
        "light_radius_on_axis",
        "light_radius_full_field",
        "sag_at_clear_aperture",
        "sag_at_diameter",
        "centre_thickness",
        "edge_thickness",
        "carrier_from",
        "carrier_to",
    ] {
        h.push(format!("{name}_{u}"));
    }
    h.push("no_light".to_string());
    h
}

/// The sheet as CSV: a header row with units ([`csv_header`]), then one row per surface in rail order
/// (a thin lens, iris or screen: its plane). The part's own figures repeat on each of its rows;
/// `vertex_spacing` is from the previous vertex along the rail (the previous part's last, or this
/// part's previous surface); empty cells are figures that do not apply or light that never arrives
/// (`no_light` says why). Numbers are written in full (they read back to the same bits).
pub fn mount_csv(sheet: &MountSheet, inch: bool) -> Result<String, MountFileError> {
    let mut w = csv::Writer::from_writer(Vec::new());
    let err = |e: csv::Error| MountFileError(format!("cannot write the mount sheet's CSV: {e}"));
    w.write_record(csv_header(inch)).map_err(err)?;
    let num = |v: Option<f64>| v.map_or_else(String::new, |v| format!("{}", length(v, inch)));
    for p in &sheet.parts {
        for (s, surf) in p.surfaces.iter().enumerate() {
            let spacing = if s == 0 { p.vertex_spacing_mm } else { Some(surf.vertex_mm - p.surfaces[s - 1].vertex_mm) };
            let record = vec![
                p.name.clone(),
                p.kind.to_string(),
                (s + 1).to_string(),
                num(Some(p.reference_mm)),
                num(p.reference_spacing_mm),
                num(Some(surf.vertex_mm)),
                num(spacing),
                num(Some(p.diameter_mm)),
                num(surf.clear_aperture_mm),
                num(surf.light_radius_on_axis_mm),
                num(surf.light_radius_full_field_mm),
                num(surf.sag_at_clear_aperture_mm),
                num(surf.sag_at_diameter_mm),
                num(p.centre_thickness_mm),
                num(p.edge_thickness_mm),
                num(Some(p.carrier_from_mm)),
                num(Some(p.carrier_to_mm)),
                surf.no_light.clone().unwrap_or_default(),
            ];
            w.write_record(record).map_err(err)?;
        }
    }
    let bytes = w.into_inner().map_err(|e| MountFileError(format!("cannot write the mount sheet's CSV: {e}")))?;
    String::from_utf8(bytes).map_err(|e| MountFileError(format!("the mount sheet's CSV is not text: {e}")))
}

/// The drawing's width, px.
pub const MOUNT_SVG_WIDTH: f64 = 1200.0;

const MARGIN: f64 = 40.0;
const TOP: f64 = 30.0;
const DIMENSION_STEP: f64 = 28.0;
const TITLE_BLOCK: (f64, f64) = (460.0, 96.0);

/// The rail extent the drawings cover, mm: from the datum (or anything before it) to the rail's end
/// (or anything beyond it).
fn extent(sheet: &MountSheet) -> (f64, f64) {
    let mut lo = 0.0f64;
    let mut hi = sheet.rail_length_mm.max(1.0);
    for p in &sheet.parts {
        lo = lo.min(p.carrier_from_mm).min(p.vertices_mm[0]);
        hi = hi.max(p.carrier_to_mm).max(p.vertices_mm[p.vertices_mm.len() - 1]);
    }
    if let Some(o) = sheet.object_at_mm {
        lo = lo.min(o);
        hi = hi.max(o);
    }
    (lo, hi)
}

/// Half the height a part takes in the drawing, mm: its diameter or its clear apertures, whichever is
/// larger (an iris: its blades reach 2 mm beyond the opening's edge, or half its opening more).
fn half_height(p: &MountPart) -> f64 {
    let ca = p.surfaces.iter().filter_map(|s| s.clear_aperture_mm).fold(0.0, f64::max);
    let body = if p.kind == "iris" { iris_outer(p) } else { 0.5 * p.diameter_mm };
    body.max(0.5 * ca)
}

fn iris_outer(p: &MountPart) -> f64 {
    0.5 * p.diameter_mm + (0.25 * p.diameter_mm).max(2.0)
}

/// A polyline in rail coordinates (z, y), mm.
type Path = Vec<(f64, f64)>;

/// Outline pieces of one part: closed polygons (glass) and open polylines.
fn part_outline(p: &MountPart) -> (Vec<Path>, Vec<Path>) {
    let semi = 0.5 * p.diameter_mm;
    let faces: Vec<(f64, SurfaceSpec)> = p.surfaces.iter().map(|s| (s.vertex_mm, s.shape)).collect();
    let at = p.vertices_mm[0];
    match p.kind {
        "singlet" | "doublet" => (outline(&faces, semi), Vec::new()),
        "mirror" => {
            let shape = faces[0].1;
            let pts = (0..=24)
                .map(|k| {
                    let y = semi * (1.0 - k as f64 / 12.0);
                    (at + sag_mm(&shape, y.abs()).unwrap_or(0.0), y)
                })
                .collect();
            (Vec::new(), vec![pts])
        }
        "iris" => {
            let outer = iris_outer(p);
            (Vec::new(), vec![vec![(at, semi), (at, outer)], vec![(at, -semi), (at, -outer)]])
        }
        _ => (Vec::new(), vec![vec![(at, semi), (at, -semi)]]),
    }
}

/// The plane where a surface's clear aperture's rim lies, and its half width: (z, half), mm.
fn aperture_line(surf: &lumenrail_bench::mount::MountSurface) -> Option<(f64, f64)> {
    let ca = surf.clear_aperture_mm?;
    Some((surf.vertex_mm + surf.sag_at_clear_aperture_mm.unwrap_or(0.0), 0.5 * ca))
}

/// The assembly drawing as SVG text: the side view to scale (the same scale along and across the rail),
/// the axis from the datum, each part's outline (lenses by their true profiles, [`outline`]), each
/// surface's clear aperture as a dashed red line across the plane of its rim, a dimension line from the
/// datum to each part's reference position with its number, and a title block with the bench's title,
/// the units, the datum and `date` (given by the caller, so the file is the same each time it is made).
/// Lengths in mm, or inches when `inch`.
pub fn mount_svg(sheet: &MountSheet, inch: bool, date: &str) -> String {
    let u = unit(inch);
    let d = digits(inch);
    let (lo, hi) = extent(sheet);
    let s = (MOUNT_SVG_WIDTH - 2.0 * MARGIN) / (hi - lo);
    let tallest = sheet.parts.iter().map(half_height).fold(1.0, f64::max);
    let axis_y = TOP + 24.0 + tallest * s;
    let x = |z: f64| MARGIN + (z - lo) * s;
    let y = |h: f64| axis_y - h * s;
    let pts =
        |p: &[(f64, f64)]| p.iter().map(|&(z, h)| format!("{:.3},{:.3}", x(z), y(h))).collect::<Vec<_>>().join(" ");
    let band_bottom = axis_y + tallest * s + 10.0;
    let dims_bottom = band_bottom + DIMENSION_STEP * (sheet.parts.len() as f64 + 0.5);
    let height = dims_bottom + TITLE_BLOCK.1 + 20.0;
    let width = MOUNT_SVG_WIDTH;

    let text = |x: f64, y: f64, size: f64, anchor: &str, content: &str| {
        Text::new(content)
            .set("x", format!("{x:.3}"))
            .set("y", format!("{y:.3}"))
            .set("font-size", size)
            .set("text-anchor", anchor)
    };
    let line = |x1: f64, y1: f64, x2: f64, y2: f64| {
        Line::new()
            .set("x1", format!("{x1:.3}"))
            .set("y1", format!("{y1:.3}"))
            .set("x2", format!("{x2:.3}"))
            .set("y2", format!("{y2:.3}"))
    };

    let mut doc = Document::new()
        .set("width", width)
        .set("height", format!("{height:.3}"))
        .set("viewBox", format!("0 0 {width} {height:.3}"))
        .set("font-family", "sans-serif")
        .add(Rect::new().set("width", width).set("height", format!("{height:.3}")).set("fill", "white"));

    // The axis, dash-dotted, from the drawing's left end to its right, and the datum's mark at rail 0.
    doc = doc.add(
        line(x(lo), axis_y, x(hi), axis_y)
            .set("id", "axis")
            .set("stroke", "black")
            .set("stroke-width", 0.8)
            .set("stroke-dasharray", "12 3 2 3"),
    );
    doc = doc.add(
        Group::new()
            .set("id", "datum")
            .add(line(x(0.0), y(tallest), x(0.0), dims_bottom).set("stroke", "black").set("stroke-width", 1.2))
            .add(text(x(0.0) + 3.0, TOP + 12.0, 11.0, "start", "datum 0")),
    );

    // The parts and their clear apertures.
    let mut parts = Group::new().set("id", "parts");
    for p in &sheet.parts {
        let (closed, open) = part_outline(p);
        let mut g = Group::new().set("data-part", p.name.as_str()).set("class", "part");
        for poly in closed {
            g = g.add(
                Polygon::new()
                    .set("points", pts(&poly))
                    .set("fill", "rgb(225,235,250)")
                    .set("stroke", "black")
                    .set("stroke-width", 1.2),
            );
        }
        for poly in open {
            g = g.add(
                Polyline::new()
                    .set("points", pts(&poly))
                    .set("fill", "none")
                    .set("stroke", "black")
                    .set("stroke-width", if p.kind == "mirror" || p.kind == "iris" { 2.5 } else { 1.5 }),
            );
        }
        for surf in &p.surfaces {
            if let Some((z, half)) = aperture_line(surf) {
                g = g.add(
                    line(x(z), y(half), x(z), y(-half))
                        .set("class", "clear-aperture")
                        .set("data-value", fixed(length(2.0 * half, inch), d))
                        .set("stroke", "rgb(200,30,30)")
                        .set("stroke-width", 1.0)
                        .set("stroke-dasharray", "4 2"),
                );
            }
        }
        g = g.add(text(x(p.vertices_mm[0]), y(half_height(p)) - 6.0, 11.0, "middle", &p.name).set("class", "label"));
        parts = parts.add(g);
    }
    doc = doc.add(parts);

    // Dimension lines from the datum to each part's reference position, one a row, with the number.
    let mut dims = Group::new().set("id", "dimensions").set("stroke", "black").set("stroke-width", 0.8);
    for (k, p) in sheet.parts.iter().enumerate() {
        let yd = band_bottom + DIMENSION_STEP * (k as f64 + 1.0);
        let (x0, x1) = (x(0.0), x(p.reference_mm));
        let dir = if x1 >= x0 { 1.0 } else { -1.0 };
        let head = |xt: f64, sgn: f64| {
            Polyline::new()
                .set(
                    "points",
                    format!(
                        "{:.3},{:.3} {xt:.3},{yd:.3} {:.3},{:.3}",
                        xt - sgn * 6.0,
                        yd - 2.5,
                        xt - sgn * 6.0,
                        yd + 2.5
                    ),
                )
                .set("fill", "black")
        };
        let value = fixed(length(p.reference_mm, inch), d);
        dims = dims.add(
            Group::new()
                .set("data-part", p.name.as_str())
                .add(line(x1, y(0.0), x1, yd + 4.0).set("stroke-dasharray", "2 2").set("class", "extension"))
                .add(line(x0, yd, x1, yd).set("class", "dimension-line"))
                .add(head(x1, dir))
                .add(head(x0, -dir))
                .add(
                    text(0.5 * (x0 + x1), yd - 4.0, 11.0, "middle", &value)
                        .set("class", "dimension")
                        .set("stroke", "none")
                        .set("fill", "black"),
                )
                .add(
                    text(x1 + dir * 4.0, yd + 4.0, 10.0, if dir > 0.0 { "start" } else { "end" }, &p.name)
                        .set("stroke", "none"),
                ),
        );
    }
    doc = doc.add(dims);

    // The title block, bottom right.
    let (bw, bh) = TITLE_BLOCK;
    let (bx, by) = (width - MARGIN - bw, dims_bottom + 10.0);
    let overall = |v: Option<f64>| v.map_or_else(|| "—".to_string(), |v| format!("{} {u}", fixed(length(v, inch), d)));
    let rows = [
        ("title", sheet.title.clone(), 14.0),
        (
            "units",
            format!(
                "units: {} ({}); drawn to scale, heights as lengths",
                u,
                if inch { "inches, 25.4 mm each" } else { "millimetres" }
            ),
            11.0,
        ),
        ("datum", format!("reference: {}; positions from the datum at rail 0", sheet.datum.words()), 11.0),
        (
            "overall",
            format!(
                "overall: vertex to vertex {}; object to last screen {}",
                overall(sheet.vertex_length_mm),
                overall(sheet.object_to_last_screen_mm)
            ),
            11.0,
        ),
        ("date", format!("date: {date}"), 11.0),
    ];
    let mut block = Group::new().set("id", "title-block").add(
        Rect::new()
            .set("x", format!("{bx:.3}"))
            .set("y", format!("{by:.3}"))
            .set("width", bw)
            .set("height", bh)
            .set("fill", "none")
            .set("stroke", "black")
            .set("stroke-width", 1.2),
    );
    for (k, (id, content, size)) in rows.into_iter().enumerate() {
        block = block.add(text(bx + 8.0, by + 20.0 + 17.0 * k as f64, size, "start", &content).set("id", id));
    }
    doc = doc.add(block);
    doc.to_string()
}

/// The assembly drawing as plain ASCII DXF (R2000, read by drawing and machining programs), in the
/// sheet's mm or, when `inch`, inches (the file's units say which), the rail along x and heights along y:
/// layer OUTLINE holds each part's outline (lenses as closed polylines of their true profiles, the
/// others as lines and polylines), AXIS the axis as one line from the datum to the rail's end, APERTURE a
/// line across each clear aperture at the plane of its rim, and DIMENSION, for each part, a line from the
/// datum to its reference position with an extension line and the number as text. The dimensions are
/// plain lines and text rather than DIMENSION entities, whose look depends on a reader's dimension
/// styles: these read the same everywhere.
pub fn mount_dxf(sheet: &MountSheet, inch: bool) -> Result<String, MountFileError> {
    use dxf::entities::{Entity, EntityType, Line as DLine, LwPolyline, Text as DText};
    use dxf::enums::{AcadVersion, Units};
    use dxf::tables::Layer;
    use dxf::{Color, Drawing, LwPolylineVertex, Point};

    let k = |mm: f64| length(mm, inch);
    let mut drawing = Drawing::new();
    drawing.header.version = AcadVersion::R2000;
    drawing.header.default_drawing_units = if inch { Units::Inches } else { Units::Millimeters };
    for (name, colour) in DXF_LAYERS.iter().zip([7u8, 8, 3, 1]) {
        drawing.add_layer(Layer { name: name.to_string(), color: Color::from_index(colour), ..Default::default() });
    }
    let on = |layer: &str, specific: EntityType| {
        let mut e = Entity::new(specific);
        e.common.layer = layer.to_string();
        e
    };
    let dline = |(z1, y1): (f64, f64), (z2, y2): (f64, f64)| {
        EntityType::Line(DLine::new(Point::new(k(z1), k(y1), 0.0), Point::new(k(z2), k(y2), 0.0)))
    };
    let poly = |pts: &[(f64, f64)], closed: bool| {
        let mut p = LwPolyline::default();
        p.set_is_closed(closed);
        p.vertices = pts.iter().map(|&(z, y)| LwPolylineVertex { x: k(z), y: k(y), ..Default::default() }).collect();
        EntityType::LwPolyline(p)
    };

    drawing.add_entity(on("AXIS", dline((0.0, 0.0), (sheet.rail_length_mm, 0.0))));
    let tallest = sheet.parts.iter().map(half_height).fold(1.0, f64::max);
    let step = (0.08 * tallest).max(2.0);
    let text_height = 0.6 * step;
    for (n, p) in sheet.parts.iter().enumerate() {
        let (closed, open) = part_outline(p);
        for c in closed {
            drawing.add_entity(on("OUTLINE", poly(&c, true)));
        }
        for o in open {
            let e = if o.len() == 2 { dline(o[0], o[1]) } else { poly(&o, false) };
            drawing.add_entity(on("OUTLINE", e));
        }
        for surf in &p.surfaces {
            if let Some((z, half)) = aperture_line(surf) {
                drawing.add_entity(on("APERTURE", dline((z, half), (z, -half))));
            }
        }
        let yd = -(tallest + step * (n as f64 + 1.5));
        drawing.add_entity(on("DIMENSION", dline((0.0, yd), (p.reference_mm, yd))));
        drawing.add_entity(on("DIMENSION", dline((p.reference_mm, 0.0), (p.reference_mm, yd - 0.3 * step))));
        let mut t = DText {
            location: Point::new(k(0.5 * p.reference_mm), k(yd + 0.2 * step), 0.0),
            text_height: k(text_height),
            value: fixed(length(p.reference_mm, inch), digits(inch)),
            ..Default::default()
        };
        t.second_alignment_point = t.location.clone();
        t.horizontal_text_justification = dxf::enums::HorizontalTextJustification::Center;
        drawing.add_entity(on("DIMENSION", EntityType::Text(t)));
    }
    let mut out = Vec::new();
    drawing.save(&mut out).map_err(|e| MountFileError(format!("cannot write the mount sheet's DXF: {e}")))?;
    String::from_utf8(out).map_err(|e| MountFileError(format!("the mount sheet's DXF is not text: {e}")))
}

pub use crate::date::today_utc;
