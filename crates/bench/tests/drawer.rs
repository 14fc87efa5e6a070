//! The drawer file and the starter drawer: round trips, placed errors, the asset, and every starter item's
//! focal length recomputed by a paraxial trace written here.
#![allow(clippy::float_cmp)] // Stock diameters, tenth-of-a-mm thicknesses, R = −2f of whole mm and an equiconvex crown's mirrored radii are written, not computed: they must match bit for bit.

use lumenrail_bench::drawer::{self, Drawer, DrawerItem, load, parse, save, starter, to_text};
use lumenrail_bench::model::{MaterialSpec, PartKind, SurfaceSpec};

const ASSET: &str = include_str!("../../../assets/drawers/starter.drawer.ron");
const D_NM: f64 = 587.5618;
const F_NM: f64 = 486.1327;
const C_NM: f64 = 656.2725;

fn dir() -> std::path::PathBuf {
    let d = std::env::temp_dir().join(format!("lumenrail-drawer-{}", std::process::id()));
    std::fs::create_dir_all(&d).unwrap();
    d
}

#[test]
fn the_asset_is_the_starter_drawer_saved_as_text() {
    let text = to_text(&starter());
    // Line by line first, so that a difference reads as one line.
    for (k, (asset, made)) in ASSET.lines().zip(text.lines()).enumerate() {
        assert_eq!(asset, made, "line {}: run `lumenrail drawer starter > assets/drawers/starter.drawer.ron`", k + 1);
    }
    assert!(ASSET == text, "the asset and starter() differ in length");
}

#[test]
fn the_asset_loads_clean_and_holds_a_sensible_stock() {
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("../../assets/drawers/starter.drawer.ron");
    let loaded = load(&path).unwrap_or_else(|e| panic!("{e}"));
    assert!(loaded.warnings.is_empty(), "{:?}", loaded.warnings);
    let items = &loaded.drawer.items;
    assert!((40..=60).contains(&items.len()), "{} items", items.len());
    assert!(items.iter().all(|i| (1..=3).contains(&i.quantity)));
    for word in ["singlet", "doublet", "mirror", "iris"] {
        assert!(items.iter().any(|i| i.kind_word() == word), "{word}");
    }
    for d in [12.7, 25.4, 50.8] {
        assert!(items.iter().any(|i| i.mechanical_diameter_mm == d), "{d}");
    }
    assert!(path.to_string_lossy().ends_with(drawer::EXTENSION));
}

#[test]
fn drawers_round_trip_exactly() {
    let mut d = starter();
    d.items.push(DrawerItem {
        label: "teaching lens \"blue dot\"".into(),
        quantity: 3,
        mechanical_diameter_mm: 40.0,
        notes: String::new(),
        part: PartKind::ThinLens { focal_mm: -123.456789012345, diameter_mm: 38.0 },
    });
    let text = to_text(&d);
    assert_eq!(parse("t", &text).unwrap().drawer, d);
    let path = dir().join("round.drawer.ron");
    save(&d, &path).unwrap();
    assert_eq!(load(&path).unwrap().drawer, d);
    assert_eq!(std::fs::read_to_string(&path).unwrap(), text);
    // One line per item, and an empty note is not written.
    assert_eq!(text.lines().filter(|l| l.trim_start().starts_with("(label:")).count(), d.items.len());
    assert!(!text.lines().last().is_some_and(|l| l.contains("notes: \"\"")));
    assert!(!text.contains("notes: \"\""));
}

#[test]
fn helpers_name_the_kind_and_give_focal_lengths() {
    let s = starter();
    let by_label = |l: &str| s.items.iter().find(|i| i.label == l).unwrap_or_else(|| panic!("{l}"));
    let pcx = by_label("plano-convex 25.4 f100");
    assert_eq!(pcx.kind_word(), "singlet");
    assert!((pcx.optical_diameter_mm() - 22.86).abs() < 1e-12);
    assert!((pcx.focal_mm(D_NM).unwrap() - 100.0).abs() < 1e-9);
    assert_eq!(by_label("achromat 25.4 f100").kind_word(), "doublet");
    assert_eq!(by_label("concave mirror 25.4 f100").kind_word(), "mirror");
    assert_eq!(by_label("flat mirror 25.4").focal_mm(D_NM), None);
    assert_eq!(by_label("iris 25.4").kind_word(), "iris");
    assert_eq!(by_label("iris 25.4").focal_mm(D_NM), None);
    let thin = DrawerItem {
        label: "t".into(),
        quantity: 1,
        mechanical_diameter_mm: 30.0,
        notes: String::new(),
        part: PartKind::ThinLens { focal_mm: -80.0, diameter_mm: 25.0 },
    };
    assert_eq!(thin.kind_word(), "thin lens");
    assert!((thin.focal_mm(D_NM).unwrap() + 80.0).abs() < 1e-9);
}

// ---- An independent paraxial trace -------------------------------------------------------------------
//
// The y-nu trace (recalled from memory; Smith, Modern Optical Engineering, chapter on paraxial ray tracing;
// Hecht, Optics, for the thick lens): at a surface of curvature c between indices n and n',
// n'u' = nu − y c (n' − n); from one surface to the next, y' = y + t (n'u')/n'. A mirror is n' = −n. For a
// ray entering parallel at height y₁, the effective focal length is f = −y₁ / (n'u') after the last surface
// (air, index ±1).

/// The two-term Cauchy index n = A + B/λ² with n(d) = nd and n(F) − n(C) = (nd − 1)/Vd (DESIGN.md), solved
/// here from its definition.
fn cauchy(nd: f64, vd: f64, nm: f64) -> f64 {
    let b = (nd - 1.0) / vd / (F_NM.powi(-2) - C_NM.powi(-2));
    nd + b * (nm.powi(-2) - D_NM.powi(-2))
}

fn index(m: &MaterialSpec, nm: f64) -> f64 {
    match *m {
        MaterialSpec::Abbe { nd, vd } => cauchy(nd, vd, nm),
        ref other => panic!("the starter drawer uses glass codes only, not {other:?}"),
    }
}

fn curvature(s: &SurfaceSpec) -> f64 {
    match *s {
        SurfaceSpec::Flat => 0.0,
        SurfaceSpec::Radius(r) => 1.0 / r,
        SurfaceSpec::Conic { radius, .. } => 1.0 / radius,
    }
}

/// Effective focal length at `nm` by the y-nu trace, or `None` for a part without power.
fn traced_focal_mm(part: &PartKind, nm: f64) -> Option<f64> {
    // (curvature, index after, thickness to the next surface)
    let surfaces: Vec<(f64, f64, f64)> = match part {
        PartKind::Singlet { front, back, thickness_mm, material, .. } => {
            vec![(curvature(front), index(material, nm), *thickness_mm), (curvature(back), 1.0, 0.0)]
        }
        PartKind::Doublet { front, middle, back, thickness1_mm, thickness2_mm, material1, material2, .. } => vec![
            (curvature(front), index(material1, nm), *thickness1_mm),
            (curvature(middle), index(material2, nm), *thickness2_mm),
            (curvature(back), 1.0, 0.0),
        ],
        PartKind::Mirror { surface, .. } => vec![(curvature(surface), -1.0, 0.0)],
        PartKind::ThinLens { focal_mm, .. } => return Some(*focal_mm),
        PartKind::Iris { .. } | PartKind::Screen { .. } | PartKind::Eye { .. } => return None,
    };
    let (mut y, mut nu, mut n) = (1.0_f64, 0.0_f64, 1.0_f64);
    for (c, n_after, t) in surfaces {
        nu -= y * c * (n_after - n);
        n = n_after;
        y += t * nu / n;
    }
    (nu != 0.0).then(|| -1.0 / nu)
}

/// The nominal focal length written in a label: its word `f100` or `f-50`.
fn nominal_mm(label: &str) -> Option<f64> {
    label.split_whitespace().find_map(|w| w.strip_prefix('f')?.parse().ok())
}

#[test]
fn every_starter_focal_length_is_its_nominal_value_by_an_independent_trace() {
    let mut checked = 0;
    for item in starter().items {
        let traced = traced_focal_mm(&item.part, D_NM);
        match nominal_mm(&item.label) {
            Some(f) => {
                let t = traced.unwrap_or_else(|| panic!("{}: no power", item.label));
                assert!((t - f).abs() <= 1e-9 * f.abs(), "{}: traced {t} mm, nominal {f} mm", item.label);
                let own = item.focal_mm(D_NM).unwrap();
                assert!((own - f).abs() <= 1e-9 * f.abs(), "{}: focal_mm {own}", item.label);
                assert!(item.notes.contains(&format!("f {f} mm at")), "{}: {}", item.label, item.notes);
                checked += 1;
            }
            None => {
                assert_eq!(traced, None, "{}", item.label);
                assert_eq!(item.focal_mm(D_NM), None, "{}", item.label);
            }
        }
    }
    assert!(checked >= 40, "{checked}");
}

/// Sag of a sphere of radius r at ρ (signed like r), for the design-rule checks.
fn sag(s: &SurfaceSpec, rho: f64) -> f64 {
    match *s {
        SurfaceSpec::Radius(r) => {
            assert!(r.abs() > rho, "radius {r} smaller than the semi-diameter {rho}");
            r - r.signum() * (r * r - rho * rho).sqrt()
        }
        _ => 0.0,
    }
}

#[test]
fn starter_lenses_keep_the_stated_thickness_and_aperture_rules() {
    for item in starter().items {
        let d = item.mechanical_diameter_mm;
        assert!((item.optical_diameter_mm() - 0.9 * d).abs() < 0.005 || item.kind_word() == "iris", "{}", item.label);
        let rho = 0.5 * d;
        let f = nominal_mm(&item.label).unwrap_or(0.0);
        let negative_centre = ((0.08 * d).max(1.5) * 10.0 - 1e-6).ceil() / 10.0;
        let min_edge = (0.06 * d).max(1.0);
        match &item.part {
            PartKind::Singlet { front, back, thickness_mm, .. } => {
                let edge = thickness_mm + sag(back, rho) - sag(front, rho);
                if f > 0.0 {
                    assert!(edge >= min_edge - 1e-9 && edge < min_edge + 0.1, "{}: edge {edge}", item.label);
                } else {
                    assert_eq!(*thickness_mm, negative_centre, "{}", item.label);
                }
            }
            PartKind::Doublet { front, middle, back, thickness1_mm, thickness2_mm, .. } => {
                let edge1 = thickness1_mm + sag(middle, rho) - sag(front, rho);
                let edge2 = thickness2_mm + sag(back, rho) - sag(middle, rho);
                assert!(edge1 >= min_edge - 1e-9 && edge1 < min_edge + 0.1, "{}: crown edge {edge1}", item.label);
                assert!(edge2 > 0.0, "{}: flint edge {edge2}", item.label);
                assert_eq!(*thickness2_mm, negative_centre, "{}", item.label);
                // Crown first, equiconvex, cemented.
                assert_eq!(sag(front, rho), -sag(middle, rho), "{}", item.label);
            }
            PartKind::Mirror { surface: SurfaceSpec::Radius(r), .. } => {
                assert_eq!(*r, -2.0 * f, "{}", item.label);
            }
            _ => {}
        }
    }
}

#[test]
fn achromats_bring_f_and_c_far_closer_together_than_a_singlet() {
    // The thin-lens achromat condition φ₁/V₁ + φ₂/V₂ = 0 makes the F and C focal lengths equal to first
    // order for elements of no thickness. In the thick doublet the marginal ray comes down inside the crown
    // before it meets the flint, so the flint's dispersion counts for less and a residual remains; the
    // starter drawer keeps its achromats slow enough for it to stay small.
    let mut achromats = 0;
    for item in starter().items.iter().filter(|i| i.kind_word() == "doublet") {
        let f = nominal_mm(&item.label).unwrap();
        let shift = traced_focal_mm(&item.part, F_NM).unwrap() - traced_focal_mm(&item.part, C_NM).unwrap();
        // A plano-convex singlet of the same power at the d line, in the achromat's crown.
        let PartKind::Doublet { material1, .. } = &item.part else { unreachable!() };
        let n = index(material1, D_NM);
        let singlet = PartKind::Singlet {
            front: SurfaceSpec::Radius((n - 1.0) * f),
            back: SurfaceSpec::Flat,
            thickness_mm: 4.0,
            diameter_mm: 20.0,
            material: material1.clone(),
        };
        assert!((traced_focal_mm(&singlet, D_NM).unwrap() - f).abs() < 1e-9 * f);
        let singlet_shift = traced_focal_mm(&singlet, F_NM).unwrap() - traced_focal_mm(&singlet, C_NM).unwrap();
        // Under 1/10 of the singlet's, and under the 6% that the module docs state.
        assert!(shift.abs() < 0.06 * singlet_shift.abs(), "{}: F−C {shift} mm against {singlet_shift} mm", item.label);
        achromats += 1;
    }
    assert!(achromats >= 6);
}

// ---- Bad files, placed ---------------------------------------------------------------------------------

const GOOD: &str = r#"(
    format: 1,
    title: "Workshop drawer",
    items: [
        (label: "lens A", quantity: 2, mechanical_diameter_mm: 25.4,
         part: ThinLens(focal_mm: 100.0, diameter_mm: 22.0)),
        (label: "lens B", quantity: 1, mechanical_diameter_mm: 25.4,
         notes: "label: not a key, in a note",
         part: Singlet(front: Radius(51.7), back: Flat, thickness_mm: 3.2, diameter_mm: 22.86,
                       material: Abbe(nd: 1.517, vd: 64.2))),
        (label: "stop", quantity: 1, mechanical_diameter_mm: 25.4, part: Iris(diameter_mm: 10.0)),
    ],
)
"#;

/// GOOD with `from` replaced by `to` on line `line` (from 1).
fn edited(line: usize, from: &str, to: &str) -> String {
    let mut lines: Vec<String> = GOOD.lines().map(String::from).collect();
    assert!(lines[line - 1].contains(from), "{from} on line {line}");
    lines[line - 1] = lines[line - 1].replacen(from, to, 1);
    lines.join("\n") + "\n"
}

/// The column (from 1) of `key` on line `line` of `text`.
fn col_of(text: &str, line: usize, key: &str) -> usize {
    text.lines().nth(line - 1).unwrap().find(key).unwrap() + 1
}

/// Parses `text`, which must fail with its first error at `line` (and `col` when given), and the words.
fn assert_error(text: &str, line: usize, col: Option<usize>, words: &[&str]) {
    let e = parse("bad.drawer.ron", text).expect_err("a bad drawer");
    let first = &e.diagnostics[0];
    let shown = e.to_string();
    assert!(shown.starts_with(&format!("bad.drawer.ron:{line}:")), "{shown}");
    assert_eq!(first.place.line, line, "{shown}");
    if let Some(col) = col {
        assert_eq!(first.place.col, col, "{shown}");
    }
    for w in words {
        assert!(shown.contains(w), "expected {w:?} in {shown}");
    }
}

#[test]
fn the_good_drawer_loads() {
    let d: Drawer = parse("good", GOOD).unwrap().drawer;
    assert_eq!(d.items.len(), 3);
    assert_eq!(d.items[1].notes, "label: not a key, in a note");
    assert!(parse("bom", &format!("\u{feff}{GOOD}")).is_ok());
}

#[test]
fn a_syntax_error_is_placed() {
    assert_error(&edited(5, "quantity: 2,", "quantity: 2"), 5, None, &[]);
    assert_error(&edited(11, "Iris(diameter_mm: 10.0)),", "Iris(diameter_mm: 10.0),"), 12, None, &[]);
}

#[test]
fn an_unknown_field_suggests_the_nearest() {
    let text = edited(5, "quantity", "quantty");
    assert_error(&text, 5, None, &["unknown field `quantty`", "did you mean `quantity`?"]);
}

#[test]
fn a_zero_quantity_is_placed_at_its_field() {
    let text = edited(7, "quantity: 1", "quantity: 0");
    assert_error(&text, 7, Some(col_of(&text, 7, "quantity")), &["singlet \"lens B\"", "quantity is 0"]);
}

#[test]
fn a_mechanical_diameter_below_the_optical_one_is_placed_at_the_right_item() {
    let text = edited(7, "mechanical_diameter_mm: 25.4", "mechanical_diameter_mm: 20.0");
    assert_error(
        &text,
        7,
        Some(col_of(&text, 7, "mechanical_diameter_mm")),
        &["singlet \"lens B\"", "20 mm is smaller than", "22.86 mm"],
    );
    let text = edited(11, "mechanical_diameter_mm: 25.4", "mechanical_diameter_mm: -1.0");
    assert_error(&text, 11, Some(col_of(&text, 11, "mechanical_diameter_mm")), &["positive number"]);
}

#[test]
fn duplicate_labels_are_refused_at_the_second() {
    let text = edited(11, "\"stop\"", "\"lens A\"");
    assert_error(
        &text,
        11,
        Some(col_of(&text, 11, "label")),
        &["two items are labelled \"lens A\"", "item 1 and item 3"],
    );
    let text = edited(11, "\"stop\"", "\"  \"");
    assert_error(&text, 11, Some(col_of(&text, 11, "label")), &["needs a label"]);
}

#[test]
fn a_screen_is_refused() {
    let text = edited(11, "Iris(", "Screen(");
    assert_error(&text, 11, Some(col_of(&text, 11, "part")), &["screen \"stop\"", "not kept in the drawer"]);
}

#[test]
fn a_newer_format_is_refused_before_anything_else() {
    let text = edited(2, "format: 1", "format: 2").replace("label:", "label_v2:");
    assert_error(&text, 2, Some(5), &["this drawer is format 2, newer than this Lumenrail reads (format 1)"]);
}

#[test]
fn a_part_is_checked_as_on_a_bench_at_its_own_field() {
    let text = edited(9, "Radius(51.7)", "Radius(5.0)");
    assert_error(&text, 9, Some(col_of(&text, 9, "front")), &["singlet \"lens B\"", "semi-diameter"]);
    let text = edited(10, "Abbe(nd: 1.517, vd: 64.2)", "Named(\"fused-silca\")");
    assert_error(&text, 10, Some(col_of(&text, 10, "material")), &["unknown material", "fused-silica"]);
    let text = edited(6, "focal_mm: 100.0", "focal_mm: 0.0");
    assert_error(&text, 6, Some(col_of(&text, 6, "focal_mm")), &["thin lens \"lens A\"", "non-zero"]);
}

#[test]
fn empty_binary_and_missing_files_say_drawer() {
    assert_error("  \n", 1, Some(1), &["empty", "drawer file"]);
    let bin = dir().join("binary.drawer.ron");
    std::fs::write(&bin, b"(format: 1, title: \"\xff\")").unwrap();
    let e = load(&bin).unwrap_err().to_string();
    assert!(e.contains(":1:") && e.contains("not UTF-8") && e.contains("drawer file"), "{e}");
    let e = load(&dir()).unwrap_err().to_string();
    assert!(e.contains("not a drawer file"), "{e}");
    let e = load(&dir().join("missing.drawer.ron")).unwrap_err().to_string();
    assert!(e.contains("no such file"), "{e}");
}
