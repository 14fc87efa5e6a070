//! End-to-end tests of the real `lumenrail` binary: demos, reports, and bad input of every kind. Bad input
//! must exit 2 with a `file:line:col: message` naming the problem, and never panic.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn bin() -> Command {
    Command::new(env!("CARGO_BIN_EXE_lumenrail"))
}

fn run(args: &[&str]) -> Output {
    bin().args(args).output().expect("the binary runs")
}

fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("lumenrail-cli-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    dir.join(name)
}

fn write(name: &str, contents: impl AsRef<[u8]>) -> PathBuf {
    let p = scratch(name);
    std::fs::write(&p, contents).unwrap();
    p
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

fn demo(name: &str) -> String {
    String::from_utf8(run(&["demos", name]).stdout).unwrap()
}

/// Runs `check` and `report` on `path`; both must exit 2, print `path:line:col:` and the expected words,
/// and not panic.
fn assert_bad(path: &Path, line: Option<usize>, words: &[&str]) {
    for args in [vec!["check"], vec!["report"], vec!["report", "--json"]] {
        let mut a = args.clone();
        let p = path.to_str().unwrap();
        a.push(p);
        let o = run(&a);
        let err = stderr(&o);
        assert_eq!(o.status.code(), Some(2), "{a:?}: {err}");
        assert!(!err.contains("panicked"), "{err}");
        let first = err.lines().next().unwrap_or("");
        assert!(first.starts_with(&format!("{p}:")), "{first}");
        let place: Vec<&str> = first[p.len() + 1..].splitn(3, ':').collect();
        let l: usize = place[0].parse().unwrap_or_else(|_| panic!("line in {first}"));
        let _: usize = place[1].parse().unwrap_or_else(|_| panic!("column in {first}"));
        if let Some(line) = line {
            assert_eq!(l, line, "{first}");
        }
        for w in words {
            assert!(err.contains(w), "expected {w:?} in {err}");
        }
        assert!(o.stdout.is_empty() || args.len() == 1, "no report for a bad file");
    }
}

/// The one-lens demo with one piece of text replaced.
fn edited(from: &str, to: &str) -> String {
    let text = demo("one-lens-screen");
    assert!(text.contains(from), "{from}");
    text.replacen(from, to, 1)
}

#[test]
fn demos_list_and_print_and_report() {
    let o = run(&["demos"]);
    assert!(o.status.success());
    let list = String::from_utf8(o.stdout).unwrap();
    assert!(list.lines().count() >= 10);
    for name in list.lines().map(|l| l.split_whitespace().next().unwrap()) {
        let p = write(&format!("{name}.bench.ron"), demo(name));
        let o = run(&["check", p.to_str().unwrap()]);
        assert!(o.status.success(), "{name}: {}", stderr(&o));
        let o = run(&["report", "--json", p.to_str().unwrap()]);
        assert!(o.status.success(), "{name}: {}", stderr(&o));
        let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
        for key in [
            "title",
            "primary_wavelength_nm",
            "first_order",
            "stop",
            "images",
            "screens",
            "aberrations",
            "afocal",
            "warnings",
        ] {
            assert!(v.get(key).is_some(), "{name}: key {key}");
        }
        for key in [
            "efl_mm",
            "bfl_mm",
            "ffl_mm",
            "front_focus_at_mm",
            "back_focus_at_mm",
            "front_principal_at_mm",
            "back_principal_at_mm",
        ] {
            assert!(v["first_order"].get(key).is_some(), "{name}: first_order.{key}");
        }
        for key in ["marginal_lsa_mm", "chromatic_focal_shift_mm", "airy_radius_um", "working_f_number"] {
            assert!(v["aberrations"].get(key).is_some(), "{name}: aberrations.{key}");
        }
        let text = run(&["report", p.to_str().unwrap()]);
        assert!(String::from_utf8(text.stdout).unwrap().contains("Images"));
    }
    let o = run(&["demos", "one-lens-scren"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("one-lens-screen"));
}

#[test]
fn report_json_has_the_image_figures() {
    let p = write("one.bench.ron", demo("one-lens-screen"));
    let o = run(&["report", "--json", p.to_str().unwrap()]);
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    let img = &v["images"][0];
    assert_eq!(img["after_part"], "Projection lens");
    assert!((img["at_mm"].as_f64().unwrap() - 450.0).abs() < 1e-9);
    assert!((img["magnification"].as_f64().unwrap() + 0.5).abs() < 1e-12);
    assert_eq!(img["real"], true);
    assert_eq!(img["erect"], false);
    assert_eq!(v["screens"][0]["part"], "Screen");
    assert!(v["afocal"].is_null());
}

#[test]
fn empty_and_truncated_files() {
    assert_bad(&write("empty.bench.ron", ""), Some(1), &["empty"]);
    let text = demo("one-lens-screen");
    assert_bad(&write("truncated.bench.ron", &text[..text.len() / 2]), None, &[]);
}

#[test]
fn wrong_type_unknown_kind_unknown_field() {
    assert_bad(
        &write("type.bench.ron", edited("rail_length_mm: 1000.0", "rail_length_mm: \"long\"")),
        Some(5),
        &["float"],
    );
    assert_bad(
        &write("kind.bench.ron", edited("kind: Screen(diameter_mm: 80.0)", "kind: Prism(diameter_mm: 80.0)")),
        Some(11),
        &["Prism", "Screen"],
    );
    assert_bad(
        &write("field.bench.ron", edited("Screen(diameter_mm: 80.0)", "Screen(diamter_mm: 80.0)")),
        Some(11),
        &["diamter_mm", "diameter_mm"],
    );
    assert_bad(&write("top.bench.ron", edited("title:", "colour: 1,\n    title:")), Some(4), &["colour"]);
}

#[test]
fn unknown_material_suggests_the_nearest_names() {
    let text = demo("plano-convex-curved-first").replace("Named(\"517642\")", "Named(\"fused-silca\")");
    assert_bad(&write("glass.bench.ron", text), Some(11), &["fused-silca", "fused-silica", "Plano-convex f100"]);
}

#[test]
fn bad_numbers_name_the_part_and_the_field() {
    for bad in ["-5.0", "0.0", "NaN", "inf"] {
        let p = write(&format!("num{bad}.bench.ron"), edited("diameter_mm: 40.0", &format!("diameter_mm: {bad}")));
        assert_bad(&p, Some(10), &["Projection lens", "diameter"]);
    }
    let p = write("focal.bench.ron", edited("focal_mm: 100.0", "focal_mm: 0.0"));
    assert_bad(&p, Some(10), &["Projection lens", "focal length"]);
    let p = write("radius0.bench.ron", demo("plano-convex-curved-first").replace("Radius(51.7)", "Radius(0.0)"));
    assert_bad(&p, Some(11), &["Flat"]);
    let p = write("edge.bench.ron", demo("colour-singlet").replace("Radius(103.4)", "Radius(13.0)"));
    assert_bad(&p, Some(11), &["edge thickness"]);
    let p = write("small-r.bench.ron", demo("colour-singlet").replace("Radius(103.4)", "Radius(10.0)"));
    assert_bad(&p, Some(11), &["smaller than the semi-diameter"]);
    let p = write("wl.bench.ron", demo("colour-singlet").replace("486.1327", "250.0"));
    assert_bad(&p, Some(11), &["250 nm", "outside"]);
}

#[test]
fn newer_format_is_refused_clearly() {
    let p = write("format.bench.ron", edited("format: 1", "format: 99,\n    lens_coatings: []"));
    assert_bad(&p, Some(3), &["format 99", "newer"]);
}

#[test]
fn duplicate_names_overlapping_glass_and_parts_off_the_rail() {
    let p = write("dup.bench.ron", edited("name: \"Screen\"", "name: \"Projection lens\""));
    assert_bad(&p, Some(11), &["Projection lens", "unique"]);
    let glass = demo("colour-singlet").replace(
        "        (name: \"Screen\"",
        "        (name: \"Second lens\", at_mm: 52.0, kind: Singlet(front: Radius(103.4), back: Radius(-103.4), thickness_mm: 5.0, diameter_mm: 25.0, material: Named(\"517642\"))),\n        (name: \"Screen\"",
    );
    assert_bad(&write("overlap.bench.ron", glass), Some(12), &["overlap", "Crown singlet", "Second lens"]);
    let p = write("beyond.bench.ron", edited("at_mm: 450.0", "at_mm: 1450.0"));
    assert_bad(&p, Some(11), &["Screen", "beyond the rail"]);
}

#[test]
fn carriers_that_overlap_are_a_warning_not_an_error() {
    let p = write("carrier.bench.ron", edited("at_mm: 450.0", "at_mm: 310.0"));
    let o = run(&["check", p.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    assert!(stderr(&o).contains(":11:") && stderr(&o).contains("warning: the carriers"), "{}", stderr(&o));
    assert!(stderr(&o).contains("15.0 mm"), "{}", stderr(&o));
}

#[test]
fn garbage_binary_directories_and_missing_files() {
    let garbage: Vec<u8> = (0..20_000_000u32).map(|i| (i.wrapping_mul(2_654_435_761) >> 24) as u8).collect();
    assert_bad(&write("garbage.bench.ron", garbage), Some(1), &["at most"]);
    let mut bytes = demo("one-lens-screen").into_bytes();
    bytes.splice(40..40, [0xff, 0xfe, 0x00]);
    assert_bad(&write("binary.bench.ron", bytes), Some(1), &["UTF-8"]);
    let dir = scratch("a-directory.bench.ron");
    std::fs::create_dir_all(&dir).unwrap();
    assert_bad(&dir, Some(1), &["directory"]);
    assert_bad(&scratch("no-such-file.bench.ron"), Some(1), &["no such file"]);
    assert_bad(&write("text.bench.ron", "hello, optics"), Some(1), &[]);
    assert_bad(&write("deep.bench.ron", "(".repeat(10_000)), None, &[]);
}

#[test]
fn untraceable_benches_exit_1_and_say_which_part_and_why() {
    // A strongly curved back surface: the edge of the on-axis beam meets it beyond the critical angle.
    let tir = demo("plano-convex-curved-first").replace(
        "Singlet(front: Radius(51.7), back: Flat, thickness_mm: 5.0, diameter_mm: 25.4, material: Named(\"517642\"))",
        "Singlet(front: Flat, back: Radius(-14.0), thickness_mm: 14.0, diameter_mm: 25.4, material: Named(\"785258\"))",
    );
    let p = write("tir.bench.ron", tir);
    let o = run(&["report", p.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(1), "{}", stderr(&o));
    let out = String::from_utf8(o.stdout).unwrap();
    assert!(out.contains("total internal reflection") && out.contains("Plano-convex f100"), "{out}");
    let o = run(&["report", "--json", p.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(1));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert!(v["trace_failure"].as_str().unwrap().contains("Plano-convex f100"));
    // `check` only validates: the bench is valid.
    assert_eq!(run(&["check", p.to_str().unwrap()]).status.code(), Some(0));

    // A pinhole at the paraxial focus of a lens with strong spherical aberration: the real rays from the
    // edge of the stop cross the axis well before it and are blocked.
    let pinhole = demo("plano-convex-flat-first").replace(
        "        (name: \"Screen\"",
        "        (name: \"Pinhole\", at_mm: 155.0, kind: Iris(diameter_mm: 0.01)),\n        (name: \"Screen\"",
    );
    let p = write("pinhole.bench.ron", pinhole);
    let o = run(&["report", p.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(1), "{}", stderr(&o));
    let out = String::from_utf8(o.stdout).unwrap();
    assert!(out.contains("blocked by \"Pinhole\""), "{out}");

    let screens_only = demo("one-lens-screen").replace(
        "        (name: \"Projection lens\", at_mm: 300.0, kind: ThinLens(focal_mm: 100.0, diameter_mm: 40.0), carrier_mm: 25.0),\n",
        "",
    );
    let p = write("screens.bench.ron", screens_only);
    let o = run(&["report", p.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(1), "{}", stderr(&o));
}

#[test]
fn help_reads_well_and_carries_the_safety_caution() {
    let o = run(&["--help"]);
    assert!(o.status.success());
    let h = String::from_utf8(o.stdout).unwrap();
    for w in ["report", "check", "demos", "materials", "sun", "laser"] {
        assert!(h.contains(w), "{w}");
    }
    let o = run(&["materials"]);
    assert!(String::from_utf8(o.stdout).unwrap().contains("Malitson"));
}

/// `lumenrail export` writes a view's CSV (header with units, one row per ray) and its PNG without a
/// window. A script recomputes the report's on-axis RMS spot radius from the Gauss-rings spot CSV:
/// Σw(x² + y²)/Σw over the on-axis rows at the primary wavelength. Six Gauss rings integrate the on-axis
/// aberration polynomial through degree 11 in ρ², so the 6-ring grid meets the report's converged figure
/// to 1e-9 relative (measured: 3.5e-12).
#[test]
fn export_writes_csv_and_png_a_script_can_use() {
    let bench = write("camera.bench.ron", demo("camera-meniscus"));
    let (csv, png) = (scratch("spot.csv"), scratch("spot.png"));
    let o = run(&[
        "export",
        bench.to_str().unwrap(),
        "--view",
        "spot",
        "--grid",
        "gauss-rings",
        "--csv",
        csv.to_str().unwrap(),
        "--png",
        png.to_str().unwrap(),
    ]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let text = std::fs::read_to_string(&csv).unwrap();
    let mut lines = text.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    assert_eq!(&header[..4], ["point", "wavelength_nm", "x_mm", "y_mm"]);
    let col = |name: &str| header.iter().position(|h| *h == name).unwrap();
    let (sw, sr2) = lines
        .map(|l| l.split(',').collect::<Vec<_>>())
        .filter(|r| r[0] == "on-axis" && r[1] == "587.5618")
        .fold((0.0, 0.0), |(sw, sr2), r| {
            let (x, y, w): (f64, f64, f64) =
                (r[col("x_mm")].parse().unwrap(), r[col("y_mm")].parse().unwrap(), r[col("weight")].parse().unwrap());
            (sw + w, sr2 + w * (x * x + y * y))
        });
    let rms_um = (sr2 / sw).sqrt() * 1e3;
    let report: serde_json::Value =
        serde_json::from_slice(&run(&["report", "--json", bench.to_str().unwrap()]).stdout).unwrap();
    let want = report["screens"][0]["rms_spot_um"].as_f64().unwrap();
    assert!((rms_um / want - 1.0).abs() < 1e-9, "{rms_um} vs {want}");
    let bytes = std::fs::read(&png).unwrap();
    assert_eq!(&bytes[..8], b"\x89PNG\r\n\x1a\n");

    // Every other view exports too, with a header and rows.
    for view in ["fan", "sweep", "colour", "field"] {
        let out = scratch(&format!("{view}.csv"));
        let o = run(&["export", bench.to_str().unwrap(), "--view", view, "--csv", out.to_str().unwrap()]);
        assert_eq!(o.status.code(), Some(0), "{view}: {}", stderr(&o));
        assert!(std::fs::read_to_string(&out).unwrap().lines().count() > 10, "{view}");
    }
}

/// Export refuses what it cannot do, saying why, and writes nothing half-done.
#[test]
fn export_refuses_bad_requests() {
    let bench = write("camera2.bench.ron", demo("camera-meniscus"));
    let b = bench.to_str().unwrap();
    let o = run(&["export", b, "--view", "spot"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("--csv"), "{}", stderr(&o));
    let o = run(&["export", b, "--view", "spot", "--plane", "Lamp", "--csv", "/tmp/never.csv"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("--plane Lamp"), "{}", stderr(&o));
    let o = run(&["export", b, "--view", "splat", "--csv", "/tmp/never.csv"]);
    assert_eq!(o.status.code(), Some(2));
    // A directory that does not exist: exit 2, and the target's directory holds no temporary file.
    let target = scratch("missing-dir").join("x.csv");
    let o = run(&["export", b, "--view", "spot", "--csv", target.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
    assert!(stderr(&o).contains("x.csv"));
    // An afocal bench has no image plane: the spot view says so and exits 1.
    let telescope = write("scope.bench.ron", demo("keplerian-telescope"));
    let out = scratch("scope.csv");
    let o = run(&["export", telescope.to_str().unwrap(), "--view", "spot", "--csv", out.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(1), "{}", stderr(&o));
    assert!(stderr(&o).contains("afocal"), "{}", stderr(&o));
    assert!(!out.exists());
    // Its colour view still exports: the focus is at infinity, but the lateral colour is not asked for.
    let o = run(&["export", telescope.to_str().unwrap(), "--view", "colour", "--csv", out.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    assert!(!stderr(&o).contains("panicked"));
}

/// `lumenrail export FILE --view rail --svg OUT --text OUT` writes the rail drawing (an SVG an XML reader
/// takes) and the readout's figures as text, with no display.
#[test]
fn export_rail_writes_the_drawing_and_the_readout() {
    let bench = write("rail.bench.ron", demo("unit-relay"));
    let (svg, text) = (scratch("rail.svg"), scratch("rail.txt"));
    let o = run(&[
        "export",
        bench.to_str().unwrap(),
        "--view",
        "rail",
        "--svg",
        svg.to_str().unwrap(),
        "--text",
        text.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    let drawing = std::fs::read_to_string(&svg).unwrap();
    assert!(drawing.starts_with("<svg") && drawing.contains("Relay A") && drawing.contains("mm from the datum"));
    let readout = std::fs::read_to_string(&text).unwrap();
    assert!(readout.contains("Aperture stop: Relay A"), "{readout}");
    let o = run(&["export", bench.to_str().unwrap(), "--view", "rail"]);
    assert_eq!(o.status.code(), Some(2), "no output asked for");
    // The PNG at the size asked for, read back by the image crate's decoder.
    let png = scratch("rail.png");
    let args = ["export", bench.to_str().unwrap(), "--view", "rail", "--png", png.to_str().unwrap(), "--size"];
    let o = run(&[&args[..], &["1500x640"]].concat());
    assert!(o.status.success(), "{}", stderr(&o));
    let picture = image::open(&png).unwrap();
    assert_eq!((picture.width(), picture.height()), (1500, 640));
    let o = run(&[&args[..], &["wide"]].concat());
    assert_eq!(o.status.code(), Some(2), "a size that is not WxH");
    assert!(stderr(&o).contains("WIDTHxHEIGHT"), "{}", stderr(&o));
}

/// The starter drawer as `lumenrail drawer starter` prints it.
fn starter_drawer() -> String {
    let o = run(&["drawer", "starter"]);
    assert!(o.status.success(), "{}", stderr(&o));
    String::from_utf8(o.stdout).unwrap()
}

#[test]
fn drawer_starter_prints_the_asset_and_check_accepts_it() {
    let text = starter_drawer();
    let asset = Path::new(env!("CARGO_MANIFEST_DIR")).join("assets/drawers/starter.drawer.ron");
    assert_eq!(text, std::fs::read_to_string(&asset).unwrap());
    for p in [asset, write("mine.drawer.ron", &text)] {
        let o = run(&["check", p.to_str().unwrap()]);
        assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
        let out = String::from_utf8(o.stdout).unwrap();
        assert!(out.contains("valid (") && out.contains(" items, 0 warnings)"), "{out}");
    }
}

#[test]
fn drawer_list_prints_one_line_per_item() {
    let text = starter_drawer();
    let items = text.lines().filter(|l| l.trim_start().starts_with("(label:")).count();
    let p = write("list.drawer.ron", &text);
    let o = run(&["drawer", "list", p.to_str().unwrap()]);
    assert!(o.status.success(), "{}", stderr(&o));
    let out = String::from_utf8(o.stdout).unwrap();
    assert_eq!(out.lines().count(), items);
    let line = out.lines().find(|l| l.starts_with("plano-convex 25.4 f100 ")).expect("the f100 plano-convex");
    for w in ["singlet", "f   100.000 mm", "diameter  25.4 mm", "quantity 3"] {
        assert!(line.contains(w), "{w:?} in {line}");
    }
    let iris = out.lines().find(|l| l.starts_with("iris 25.4 ")).unwrap();
    assert!(iris.contains("iris") && iris.contains("none") && iris.contains("quantity 2"), "{iris}");
}

#[test]
fn bad_drawers_exit_2_with_the_place() {
    let text = starter_drawer();
    let line_of = |needle: &str| text.lines().position(|l| l.contains(needle)).unwrap() + 1;
    // A zero quantity, at the item's line.
    let bad =
        text.replacen("(label: \"achromat 25.4 f100\", quantity: 3", "(label: \"achromat 25.4 f100\", quantity: 0", 1);
    let p = write("zero.drawer.ron", bad);
    for args in [vec!["check"], vec!["drawer", "list"]] {
        let mut a = args.clone();
        a.push(p.to_str().unwrap());
        let o = run(&a);
        let err = stderr(&o);
        assert_eq!(o.status.code(), Some(2), "{a:?}: {err}");
        let place = format!("{}:{}:", p.display(), line_of("achromat 25.4 f100"));
        assert!(err.starts_with(&place) && err.contains("quantity is 0"), "{err}");
        assert!(o.stdout.is_empty());
    }
    // A newer format, and a bench handed over as a drawer.
    let p = write("newer.drawer.ron", text.replacen("format: 1", "format: 3", 1));
    let err = stderr(&run(&["check", p.to_str().unwrap()]));
    assert!(err.starts_with(&format!("{}:2:5:", p.display())) && err.contains("this drawer is format 3"), "{err}");
    let p = write("bench.drawer.ron", demo("one-lens-screen"));
    let o = run(&["check", p.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("unknown field `rail_length_mm`"), "{}", stderr(&o));
    let o = run(&["drawer", "list", scratch("missing.drawer.ron").to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("no such file"));
}

/// `lumenrail arrange BENCH --drawer FILE`: the f = 100 mm thin lens halfway between object and screen
/// for m = −1 over 400 mm (Gaussian imaging), as text, as JSON, and written as a bench that reports the
/// aims met; an impossible aim exits 1 with the nearest misses; the report gains an `aims` key.
#[test]
fn arrange_places_the_drawer_lens_that_meets_the_aims() {
    let bench = write(
        "aims.bench.ron",
        r#"(format: 1, title: "aims", rail_length_mm: 500.0, wavelengths_nm: [587.5618], primary_wavelength: 0,
            object: Point(at_mm: 0.0, height_mm: 1.0), parts: [(name: "Screen", at_mm: 400.0, kind: Screen(diameter_mm: 40.0))],
            aims: [SharpOn(screen: "Screen", rms_um: 1.0), Magnification(value: -1.0, tolerance: 0.001)])"#,
    );
    let drawer = write(
        "small.drawer.ron",
        r#"(format: 1, title: "small", items: [
            (label: "f50", quantity: 1, mechanical_diameter_mm: 25.4, part: ThinLens(focal_mm: 50.0, diameter_mm: 22.0)),
            (label: "f100", quantity: 1, mechanical_diameter_mm: 25.4, part: ThinLens(focal_mm: 100.0, diameter_mm: 22.0))])"#,
    );
    let out = scratch("arranged.bench.ron");
    let args = ["arrange", bench.to_str().unwrap(), "--drawer", drawer.to_str().unwrap(), "--parts", "1"];
    let o = run(&[&args[..], &["--write", out.to_str().unwrap()]].concat());
    assert!(o.status.success(), "{}", stderr(&o));
    let text = String::from_utf8_lossy(&o.stdout);
    assert!(text.contains("1. \"f100\" at 200.000 mm (2 of 2 aims met"), "{text}");
    let o = run(&["report", out.to_str().unwrap(), "--json"]);
    let json: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(json["aims"].as_array().unwrap().len(), 2);
    assert!(json["aims"].as_array().unwrap().iter().all(|a| a["met"] == true), "{}", json["aims"]);
    let o = run(&[&args[..], &["--json"]].concat());
    let json: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(json["candidates"][0]["parts"][0]["label"], "f100");
    // m = −3 over 400 mm needs f = 75 mm: none in the drawer. Exit 1, the nearest misses listed.
    let impossible =
        write("impossible.bench.ron", std::fs::read_to_string(&bench).unwrap().replace("value: -1.0", "value: -3.0"));
    let o = run(&["arrange", impossible.to_str().unwrap(), "--drawer", drawer.to_str().unwrap(), "--parts", "1"]);
    assert_eq!(o.status.code(), Some(1), "{}", stderr(&o));
    assert!(String::from_utf8_lossy(&o.stdout).contains("nearest misses"));
    assert!(!stderr(&o).contains("panicked"));
    // A bad drawer is placed like a bad bench.
    let bad = write(
        "bad.drawer.ron",
        "(format: 1, title: \"x\", items: [(label: \"a\", quantity: 0, mechanical_diameter_mm: 25.4, part: ThinLens(focal_mm: 50.0, diameter_mm: 22.0))])",
    );
    let o = run(&["arrange", bench.to_str().unwrap(), "--drawer", bad.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("bad.drawer.ron:1:"), "{}", stderr(&o));
}

/// `lumenrail mount-sheet`: a text table by default, JSON in mm, and the CSV, SVG and DXF written
/// atomically; with `--inch` every CSV length is the JSON's millimetres divided by 25.4, exactly.
#[test]
#[allow(clippy::float_cmp)] // The CSV writes numbers in full and an inch is one division: bit for bit.
fn mount_sheet_prints_the_table_and_writes_the_shop_files() {
    let bench = write("mount.bench.ron", demo("unit-relay"));
    let b = bench.to_str().unwrap();
    let o = run(&["mount-sheet", b]);
    assert!(o.status.success(), "{}", stderr(&o));
    let table = String::from_utf8(o.stdout).unwrap();
    assert!(
        table.starts_with("Mount sheet: ") && table.contains("Relay A") && table.contains("Lengths in mm"),
        "{table}"
    );

    let o = run(&["mount-sheet", b, "--json", "--datum", "left", "--margin", "1"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(v["datum"], "carrier-left-edge");
    assert_eq!(v["margin_mm"].as_f64(), Some(1.0));
    let parts = v["parts"].as_array().unwrap();

    let (csv, svg, dxf) = (scratch("mount.csv"), scratch("mount.svg"), scratch("mount.dxf"));
    let o = run(&[
        "mount-sheet",
        b,
        "--csv",
        csv.to_str().unwrap(),
        "--svg",
        svg.to_str().unwrap(),
        "--dxf",
        dxf.to_str().unwrap(),
        "--inch",
        "--datum",
        "left",
        "--margin",
        "1",
        "--date",
        "2031-04-05",
    ]);
    assert!(o.status.success(), "{}", stderr(&o));
    assert!(o.stdout.is_empty(), "files asked for: no table");
    let table = std::fs::read_to_string(&csv).unwrap();
    let mut lines = table.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    assert_eq!(header[3], "reference_at_in");
    let col = |name: &str| header.iter().position(|h| *h == name).unwrap();
    let mut rows = 0;
    for line in lines {
        let cells: Vec<&str> = line.split(',').collect();
        let part = parts.iter().find(|p| p["name"] == cells[0]).unwrap();
        let reference: f64 = cells[col("reference_at_in")].parse().unwrap();
        assert_eq!(reference, part["reference_mm"].as_f64().unwrap() / 25.4, "{line}");
        let diameter: f64 = cells[col("diameter_in")].parse().unwrap();
        assert_eq!(diameter, part["diameter_mm"].as_f64().unwrap() / 25.4, "{line}");
        let surface: usize = cells[2].parse().unwrap();
        let vertex: f64 = cells[col("vertex_at_in")].parse().unwrap();
        assert_eq!(vertex, part["vertices_mm"][surface - 1].as_f64().unwrap() / 25.4, "{line}");
        if let Some(ca) = part["surfaces"][surface - 1]["clear_aperture_mm"].as_f64() {
            let got: f64 = cells[col("clear_aperture_in")].parse().unwrap();
            assert_eq!(got, ca / 25.4, "{line}");
        }
        rows += 1;
    }
    assert_eq!(rows, parts.iter().map(|p| p["surfaces"].as_array().unwrap().len()).sum::<usize>());
    let drawing = std::fs::read_to_string(&svg).unwrap();
    assert!(drawing.starts_with("<svg") && drawing.contains("date: 2031-04-05") && drawing.contains("units: in"));
    let cad = std::fs::read_to_string(&dxf).unwrap();
    assert!(cad.contains("$INSUNITS") && cad.contains("OUTLINE") && cad.contains("DIMENSION"));

    for bad in [&["--margin=-1"][..], &["--margin", "NaN"][..], &["--datum", "middle"][..]] {
        let o = run(&[&["mount-sheet", b][..], bad].concat());
        assert_eq!(o.status.code(), Some(2), "{bad:?}: {}", stderr(&o));
        assert!(!stderr(&o).contains("panicked"));
    }
    let o = run(&["mount-sheet", b, "--margin=-1"]);
    assert!(stderr(&o).contains("the margin must be"), "{}", stderr(&o));
}

/// `lumenrail tolerance`: text by default, JSON with the documented keys, the same figures for the same
/// seed, and a bad limit refused at its place.
#[test]
fn tolerance_prints_the_run_and_its_json() {
    let bench = write("tolerance.bench.ron", demo("camera-meniscus"));
    let b = bench.to_str().unwrap();
    let o = run(&["tolerance", b, "--trials", "200"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let text = String::from_utf8(o.stdout).unwrap();
    for words in ["Tolerance run: ", "Sensitivities", "depth of focus", "common practice", "Monte Carlo: 200 trials"] {
        assert!(text.contains(words), "{words}: {text}");
    }
    assert!(!text.contains("NaN") && !text.contains("inf"), "{text}");
    let json = |seed: &str| -> serde_json::Value {
        let o = run(&["tolerance", b, "--trials", "200", "--seed", seed, "--json", "--refocus", "--normal"]);
        assert!(o.status.success(), "{}", stderr(&o));
        serde_json::from_slice(&o.stdout).unwrap()
    };
    let v = json("5");
    for key in ["title", "plane_mm", "nominal_rms_um", "limits", "sensitivities", "budget", "monte_carlo"] {
        assert!(!v[key].is_null(), "{key}: {v}");
    }
    for key in ["rss_axial_mm", "worst_axial_mm", "rss_lateral_um", "worst_lateral_um", "contributions"] {
        assert!(!v["budget"][key].is_null(), "budget.{key}");
    }
    for key in ["rms_um", "lateral_um", "axial_mm", "histogram", "refocus_mm"] {
        assert!(!v["monte_carlo"][key].is_null(), "monte_carlo.{key}");
    }
    assert_eq!(v["monte_carlo"]["rms_um"]["p90"], json("5")["monte_carlo"]["rms_um"]["p90"]);
    let bad = demo("camera-meniscus").replace("\n)", "\n    tolerances: [(part: \"Nobody\")],\n)");
    let bad = write("bad-tolerance.bench.ron", bad);
    let o = run(&["tolerance", bad.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(2));
    assert!(
        stderr(&o).contains("bad-tolerance.bench.ron:") && stderr(&o).contains("no part named \"Nobody\""),
        "{}",
        stderr(&o)
    );
}

/// `lumenrail install-desktop` writes an entry that the freedesktop.org validator accepts (desktop-file-utils'
/// `desktop-file-validate`, an independent reader; CI installs it, and where it is missing only the
/// structure is checked here) and icons that decode as what they claim to be.
#[test]
fn install_desktop_writes_a_valid_entry_and_the_icon() {
    let home = scratch("xdg-data");
    let out = run(&["install-desktop", "--data-home", home.to_str().unwrap()]);
    assert!(out.status.success(), "{}", stderr(&out));
    let entry = home.join("applications/lumenrail.desktop");
    let text = std::fs::read_to_string(&entry).unwrap();
    let exe = Path::new(env!("CARGO_BIN_EXE_lumenrail"));
    assert!(text.contains(&format!("\nExec=\"{}\" %f\n", exe.display())), "{text}");
    assert!(text.contains("\nIcon=lumenrail\n") && text.contains("\nType=Application\n"), "{text}");
    match Command::new("desktop-file-validate").arg(&entry).output() {
        Ok(v) => assert!(
            v.status.success() && v.stdout.is_empty(),
            "desktop-file-validate: {}{}",
            String::from_utf8_lossy(&v.stdout),
            stderr(&v)
        ),
        Err(_) => assert!(std::env::var_os("CI").is_none(), "CI must have desktop-file-validate (desktop-file-utils)"),
    }
    let png = image::open(home.join("icons/hicolor/256x256/apps/lumenrail.png")).unwrap();
    assert_eq!((png.width(), png.height()), (256, 256));
    let svg = std::fs::read_to_string(home.join("icons/hicolor/scalable/apps/lumenrail.svg")).unwrap();
    assert!(svg.contains("<svg") && svg.contains("viewBox=\"0 0 256 256\""));
    // A data folder that cannot be made is a clear error, not a panic.
    let blocked = write("not-a-folder", "a file where the folder would go");
    let out = run(&["install-desktop", "--data-home", blocked.to_str().unwrap()]);
    assert_eq!(out.status.code(), Some(1));
    assert!(stderr(&out).contains("cannot make the folder"), "{}", stderr(&out));
}
