//! The mount sheet's files read back by independent readers: the CSV by the `csv` crate, the SVG by
//! roxmltree (parsed) and resvg (rendered), the DXF by the `dxf` crate; the numbers in each are the
//! sheet's, in mm or divided by 25.4 exactly for inches.
#![allow(clippy::float_cmp)] // The CSV writes numbers in full and inches are one division: they must come back bit for bit.

use lumenrail_bench::demos::DEMOS;
use lumenrail_bench::evaluation::Evaluation;
use lumenrail_bench::model::Bench;
use lumenrail_bench::mount::{Datum, MountOptions, MountSheet};
use lumenrail_bench::report::fixed;
use lumenrail_export::mount::{DXF_LAYERS, csv_header, mount_csv, mount_dxf, mount_svg};

const JIG: &str = r#"(
    format: 1,
    title: "Workshop jig: five parts on a 700 mm rail",
    rail_length_mm: 700.0,
    wavelengths_nm: [486.1327, 587.5618, 656.2725],
    primary_wavelength: 1,
    object: Point(at_mm: 10.0, height_mm: 2.0),
    parts: [
        (name: "Field lens", at_mm: 110.0, kind: ThinLens(focal_mm: 80.0, diameter_mm: 30.0), carrier_mm: 18.0),
        (name: "Bi-x", at_mm: 230.0,
         kind: Singlet(front: Radius(60.0), back: Radius(-75.0), thickness_mm: 7.25, diameter_mm: 25.4,
                       material: Named("517642")), carrier_mm: 22.0),
        (name: "Pair", at_mm: 320.5,
         kind: Doublet(front: Conic(radius: 52.0, conic: -0.6), middle: Radius(-40.0), back: Flat,
                       thickness1_mm: 6.5, thickness2_mm: 2.75,
                       material1: Named("517642"), material2: Named("620364"), diameter_mm: 25.0)),
        (name: "Stop", at_mm: 380.0, kind: Iris(diameter_mm: 9.0), carrier_mm: 12.0),
        (name: "Card", at_mm: 620.0, kind: Screen(diameter_mm: 60.0)),
    ],
)"#;

fn bench(name: &str, text: &str) -> Bench {
    lumenrail_bench::file::parse(name, text).unwrap_or_else(|e| panic!("{e}")).bench
}

/// The jig and every demo, each with its sheet (centre datum, default margin).
fn sheets() -> Vec<(String, MountSheet)> {
    let mut out = vec![("jig".to_string(), bench("jig", JIG))];
    out.extend(DEMOS.iter().map(|d| (d.name.to_string(), bench(d.name, d.text))));
    out.into_iter().map(|(n, b)| (n, MountSheet::of(&Evaluation::of(&b), &MountOptions::default()))).collect()
}

/// Every length of one surface row as the sheet has it, in the CSV's column order (after part, kind,
/// surface).
fn row_values(sheet: &MountSheet) -> Vec<(String, usize, Vec<Option<f64>>)> {
    let mut rows = Vec::new();
    for p in &sheet.parts {
        for (s, surf) in p.surfaces.iter().enumerate() {
            let spacing = if s == 0 { p.vertex_spacing_mm } else { Some(surf.vertex_mm - p.surfaces[s - 1].vertex_mm) };
            rows.push((
                p.name.clone(),
                s + 1,
                vec![
                    Some(p.reference_mm),
                    p.reference_spacing_mm,
                    Some(surf.vertex_mm),
                    spacing,
                    Some(p.diameter_mm),
                    surf.clear_aperture_mm,
                    surf.light_radius_on_axis_mm,
                    surf.light_radius_full_field_mm,
                    surf.sag_at_clear_aperture_mm,
                    surf.sag_at_diameter_mm,
                    p.centre_thickness_mm,
                    p.edge_thickness_mm,
                    Some(p.carrier_from_mm),
                    Some(p.carrier_to_mm),
                ],
            ));
        }
    }
    rows
}

/// The CSV read back with the `csv` crate: units in every length column's name, one row per surface, and
/// every number the sheet's to the last bit; in inches, every length the sheet's divided by 25.4.
#[test]
fn csv_reads_back_to_the_sheets_numbers() {
    for (name, sheet) in sheets() {
        for inch in [false, true] {
            let text = mount_csv(&sheet, inch).unwrap();
            let mut reader = csv::Reader::from_reader(text.as_bytes());
            let header: Vec<String> = reader.headers().unwrap().iter().map(str::to_string).collect();
            assert_eq!(header, csv_header(inch));
            let suffix = if inch { "_in" } else { "_mm" };
            assert!(header[3..header.len() - 1].iter().all(|h| h.ends_with(suffix)), "{header:?}");
            let records: Vec<csv::StringRecord> = reader.records().map(Result::unwrap).collect();
            let want = row_values(&sheet);
            assert_eq!(records.len(), want.len(), "{name}");
            for (r, (part, surface, values)) in records.iter().zip(want) {
                assert_eq!(&r[0], part);
                assert_eq!(r[2].parse::<usize>().unwrap(), surface);
                for (c, v) in values.into_iter().enumerate() {
                    let cell = &r[3 + c];
                    match v {
                        None => assert!(cell.is_empty(), "{name} {part} {}: {cell}", header[3 + c]),
                        Some(mm) => {
                            let got: f64 = cell.parse().unwrap();
                            let want = if inch { mm / 25.4 } else { mm };
                            assert_eq!(got, want, "{name} {part} {}", header[3 + c]);
                        }
                    }
                }
            }
        }
    }
}

/// Renders an SVG text with resvg (the bundled font loaded, as the rail picture does); panics on error.
fn render(svg: &str) -> resvg::tiny_skia::Pixmap {
    let mut options = resvg::usvg::Options::default();
    let fonts = options.fontdb_mut();
    fonts.load_font_data(epaint_default_fonts::UBUNTU_LIGHT.to_vec());
    let family = fonts.faces().next().and_then(|f| f.families.first()).map(|(name, _)| name.clone()).unwrap();
    fonts.set_sans_serif_family(family);
    let tree = resvg::usvg::Tree::from_str(svg, &options).unwrap();
    let size = tree.size().to_int_size();
    let mut pixmap = resvg::tiny_skia::Pixmap::new(size.width(), size.height()).unwrap();
    resvg::render(&tree, resvg::tiny_skia::Transform::identity(), &mut pixmap.as_mut());
    pixmap
}

/// The SVG parsed by roxmltree and rendered by resvg without error: the title block carries the title,
/// the units and the date; each part has one dimension from the datum whose text is the sheet's
/// reference position (3 decimals in mm, 4 in inches) and whose line is as long as that position at the
/// drawing's one scale; each clear aperture is drawn at that scale too (to 2e-3 mm: coordinates are
/// written to 1e-3 px).
#[test]
fn svg_parses_renders_and_carries_the_numbers() {
    for (name, sheet) in sheets() {
        for inch in [false, true] {
            let text = mount_svg(&sheet, inch, "2031-04-05");
            let doc = roxmltree::Document::parse(&text).unwrap_or_else(|e| panic!("{name}: {e}"));
            let pixmap = render(&text);
            assert!(pixmap.pixels().iter().any(|p| p.red() < 100), "{name}: something is drawn in black");
            let by_id = |id: &str| doc.descendants().find(|n| n.attribute("id") == Some(id)).unwrap();
            assert_eq!(by_id("title").text().unwrap().trim(), sheet.title);
            assert!(by_id("units").text().unwrap().trim().starts_with(if inch { "units: in" } else { "units: mm" }));
            assert_eq!(by_id("date").text().unwrap().trim(), "date: 2031-04-05");
            let f = |v: f64| if inch { fixed(v / 25.4, 4) } else { fixed(v, 3) };
            let dims: Vec<_> = by_id("dimensions").children().filter(|n| n.attribute("data-part").is_some()).collect();
            assert_eq!(dims.len(), sheet.parts.len(), "{name}");
            let attr = |n: roxmltree::Node, a: &str| -> f64 { n.attribute(a).unwrap().parse().unwrap() };
            let datum_x = {
                let l = by_id("datum").children().find(|n| n.tag_name().name() == "line").unwrap();
                attr(l, "x1")
            };
            // The drawing's scale from the part farthest from the datum (its rounding matters least there).
            fn line_of<'a, 'i>(g: &roxmltree::Node<'a, 'i>) -> roxmltree::Node<'a, 'i> {
                g.children().find(|n| n.attribute("class") == Some("dimension-line")).unwrap()
            }
            let (far_g, far_p) = dims
                .iter()
                .zip(&sheet.parts)
                .max_by(|a, b| a.1.reference_mm.abs().total_cmp(&b.1.reference_mm.abs()))
                .expect("a part");
            let far = line_of(far_g);
            let s = (attr(far, "x2") - attr(far, "x1")) / far_p.reference_mm;
            // Coordinates are written to 1e-3 px: each length carries ±1e-3 px and the scale adds as much
            // again scaled by ref/ref_max ≤ 1, so 2.5e-3 px over the scale bounds the error in mm.
            let tol = 2.5e-3 / s.abs();
            for (g, p) in dims.iter().zip(&sheet.parts) {
                assert_eq!(g.attribute("data-part"), Some(p.name.as_str()));
                let value = g.children().find(|n| n.attribute("class") == Some("dimension")).unwrap();
                assert_eq!(value.text().unwrap().trim(), f(p.reference_mm), "{name} {}", p.name);
                let l = line_of(g);
                assert!((attr(l, "x1") - datum_x).abs() < 1e-9, "{name}: from the datum");
                assert!(((attr(l, "x2") - attr(l, "x1")) / s - p.reference_mm).abs() < tol, "{name} {}", p.name);
            }
            let drawn: Vec<_> = doc.descendants().filter(|n| n.attribute("class") == Some("clear-aperture")).collect();
            let cas: Vec<f64> =
                sheet.parts.iter().flat_map(|p| p.surfaces.iter().filter_map(|s| s.clear_aperture_mm)).collect();
            assert_eq!(drawn.len(), cas.len(), "{name}");
            for (n, ca) in drawn.into_iter().zip(cas) {
                let len = (attr(n, "y2") - attr(n, "y1")).abs() / s;
                assert!((len - ca).abs() < tol, "{name}: clear aperture {len} vs {ca}");
                assert_eq!(n.attribute("data-value").unwrap(), f(ca));
            }
        }
    }
}

/// The DXF read back with the `dxf` crate: the four layers; one axis line from the datum to the rail's
/// end; per part three DIMENSION entities (line, extension, text with the sheet's number); one APERTURE
/// line per clear aperture; the outlines (one closed polyline per glass element, a line for a thin lens
/// or screen, two for an iris's blades, a polyline for a mirror); in inches, the units say so and the
/// axis ends at the rail length over 25.4.
#[test]
fn dxf_reads_back_with_its_layers_and_entities() {
    use dxf::entities::EntityType;
    for (name, sheet) in sheets() {
        for inch in [false, true] {
            let text = mount_dxf(&sheet, inch).unwrap();
            assert!(text.is_ascii() && text.contains("SECTION"), "{name}: plain ASCII DXF");
            let drawing = dxf::Drawing::load(&mut text.as_bytes()).unwrap();
            let layers: Vec<String> = drawing.layers().map(|l| l.name.clone()).collect();
            for l in DXF_LAYERS {
                assert!(layers.iter().any(|n| n == l), "{name}: layer {l} in {layers:?}");
            }
            let want_units = if inch { dxf::enums::Units::Inches } else { dxf::enums::Units::Millimeters };
            assert_eq!(drawing.header.default_drawing_units, want_units);
            let on = |layer: &str| drawing.entities().filter(|e| e.common.layer == layer).collect::<Vec<_>>();
            let axis = on("AXIS");
            assert_eq!(axis.len(), 1, "{name}");
            let EntityType::Line(ref l) = axis[0].specific else { panic!("{name}: the axis is a line") };
            let rail = if inch { sheet.rail_length_mm / 25.4 } else { sheet.rail_length_mm };
            assert_eq!((l.p1.x, l.p1.y, l.p2.y), (0.0, 0.0, 0.0), "{name}");
            // The dxf crate writes a coordinate with 11 decimals (1e-11 in the file's unit).
            assert!((l.p2.x - rail).abs() < 1e-10, "{name}: {} vs {rail}", l.p2.x);
            if !inch {
                assert_eq!(l.p2.x, sheet.rail_length_mm, "{name}: whole mm read back exactly");
            }
            let dims = on("DIMENSION");
            assert_eq!(dims.len(), 3 * sheet.parts.len(), "{name}");
            let texts: Vec<String> = dims
                .iter()
                .filter_map(|e| match &e.specific {
                    EntityType::Text(t) => Some(t.value.clone()),
                    _ => None,
                })
                .collect();
            let want: Vec<String> = sheet
                .parts
                .iter()
                .map(|p| if inch { fixed(p.reference_mm / 25.4, 4) } else { fixed(p.reference_mm, 3) })
                .collect();
            assert_eq!(texts, want, "{name}");
            let cas = sheet.parts.iter().flat_map(|p| &p.surfaces).filter(|s| s.clear_aperture_mm.is_some()).count();
            assert_eq!(on("APERTURE").len(), cas, "{name}");
            let outlines: usize = sheet
                .parts
                .iter()
                .map(|p| match p.kind {
                    "singlet" => 1,
                    "doublet" => 2,
                    "iris" => 2,
                    _ => 1,
                })
                .sum();
            let outline = on("OUTLINE");
            assert_eq!(outline.len(), outlines, "{name}");
            let closed =
                outline.iter().filter(|e| matches!(&e.specific, EntityType::LwPolyline(p) if p.is_closed())).count();
            assert_eq!(closed, sheet.parts.iter().map(|p| p.elements.len()).sum::<usize>(), "{name}");
        }
    }
}

/// The datum changes the dimensions' numbers in every file: the left edge's are the centre's less half
/// the carrier.
#[test]
fn the_datum_moves_the_dimensions() {
    let b = bench("jig", JIG);
    let e = Evaluation::of(&b);
    let left = MountSheet::of(&e, &MountOptions { datum: Datum::CarrierLeftEdge, margin_mm: 0.5 });
    let svg = mount_svg(&left, false, "2031-04-05");
    let doc = roxmltree::Document::parse(&svg).unwrap();
    let texts: Vec<&str> = doc
        .descendants()
        .filter(|n| n.attribute("class") == Some("dimension"))
        .map(|n| n.text().unwrap().trim())
        .collect();
    assert_eq!(texts[0], "101.000", "the field lens's 18 mm carrier centred at 110 mm");
    assert_eq!(texts[1], fixed(0.5 * (230.0 + 237.25) - 11.0, 3));
    assert!(svg.contains("carrier left edge"));
}
