//! Saving and loading: round trips, atomic saves, placed errors.

use lumenrail_bench::demos::DEMOS;
use lumenrail_bench::file::{load, parse, save, to_text};
use lumenrail_bench::model::{Bench, MaterialSpec, ObjectSpec, Part, PartKind, SurfaceSpec};
use proptest::prelude::*;

fn dir() -> std::path::PathBuf {
    let d = std::env::temp_dir().join(format!("lumenrail-file-{}", std::process::id()));
    std::fs::create_dir_all(&d).unwrap();
    d
}

#[test]
fn every_demo_round_trips_through_save_and_load() {
    for d in DEMOS {
        let bench = parse(d.name, d.text).unwrap().bench;
        let path = dir().join(format!("{}.bench.ron", d.name));
        save(&bench, &path).unwrap();
        let again = load(&path).unwrap().bench;
        let mut sorted = bench.clone();
        sorted.parts = bench.rail_order().into_iter().map(|i| bench.parts[i].clone()).collect();
        assert_eq!(again, sorted, "{}", d.name);
    }
}

#[test]
fn a_failed_save_leaves_the_old_file_intact() {
    let bench = parse("demo", DEMOS[0].text).unwrap().bench;
    let dir = dir().join("failed-save");
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join("keep.bench.ron");
    save(&bench, &path).unwrap();
    let before = std::fs::read(&path).unwrap();
    // Saving into a directory that does not exist fails before anything is renamed.
    assert!(save(&bench, &dir.join("missing-dir").join("x.bench.ron")).is_err());
    // Saving over a directory fails at the rename; the temporary file is cleaned up.
    let over = dir.join("a-dir.bench.ron");
    std::fs::create_dir_all(&over).unwrap();
    assert!(save(&bench, &over).is_err());
    let leftovers: Vec<_> = std::fs::read_dir(&dir)
        .unwrap()
        .filter_map(Result::ok)
        .filter(|e| e.file_name().to_string_lossy().ends_with(".tmp"))
        .collect();
    assert!(leftovers.is_empty());
    assert_eq!(std::fs::read(&path).unwrap(), before);
}

/// The names in a folder, sorted.
fn names_in(dir: &std::path::Path) -> Vec<String> {
    let mut names: Vec<String> =
        std::fs::read_dir(dir).unwrap().map(|e| e.unwrap().file_name().to_string_lossy().into_owned()).collect();
    names.sort();
    names
}

#[test]
fn a_failed_save_leaves_the_old_content_and_no_temporary_file() {
    let bench = parse("demo", DEMOS[0].text).unwrap().bench;
    let dir = tempfile::tempdir().unwrap();
    let keep = dir.path().join("keep.bench.ron");
    std::fs::write(&keep, "old bench").unwrap();
    // The target's folder does not exist.
    assert!(save(&bench, &dir.path().join("missing-dir").join("keep.bench.ron")).is_err());
    // The target is a folder, with a file in it: the rename fails.
    let over = dir.path().join("a-dir.bench.ron");
    std::fs::create_dir(&over).unwrap();
    std::fs::write(over.join("inside"), "untouched").unwrap();
    let e = save(&bench, &over).unwrap_err();
    assert_eq!(e.path, over);
    assert!(e.to_string().starts_with("cannot save "), "{e}");
    // A link to a file in a folder that does not exist.
    #[cfg(unix)]
    std::os::unix::fs::symlink("missing-dir/x.bench.ron", dir.path().join("dangling.bench.ron")).unwrap();
    #[cfg(unix)]
    assert!(save(&bench, &dir.path().join("dangling.bench.ron")).is_err());

    assert_eq!(std::fs::read_to_string(&keep).unwrap(), "old bench");
    assert!(over.is_dir());
    assert_eq!(names_in(&over), ["inside"]);
    assert_eq!(std::fs::read_to_string(over.join("inside")).unwrap(), "untouched");
    let mut expected = vec!["a-dir.bench.ron", "keep.bench.ron"];
    if cfg!(unix) {
        expected.insert(1, "dangling.bench.ron");
    }
    assert_eq!(names_in(dir.path()), expected, "no temporary file is left behind");
}

#[cfg(unix)]
#[test]
fn a_save_keeps_the_old_files_permissions() {
    use std::os::unix::fs::PermissionsExt;
    let bench = parse("demo", DEMOS[0].text).unwrap().bench;
    let dir = tempfile::tempdir().unwrap();
    for mode in [0o640, 0o600, 0o604, 0o664] {
        let path = dir.path().join(format!("mode-{mode:o}.bench.ron"));
        std::fs::write(&path, "old").unwrap();
        std::fs::set_permissions(&path, std::fs::Permissions::from_mode(mode)).unwrap();
        save(&bench, &path).unwrap();
        let kept = std::fs::metadata(&path).unwrap().permissions().mode() & 0o7777;
        assert_eq!(kept, mode, "{mode:o} became {kept:o}");
        assert_eq!(std::fs::read_to_string(&path).unwrap(), to_text(&bench));
    }
}

#[cfg(unix)]
#[test]
fn a_new_file_gets_the_permissions_of_any_new_file() {
    use std::os::unix::fs::PermissionsExt;
    let bench = parse("demo", DEMOS[0].text).unwrap().bench;
    let dir = tempfile::tempdir().unwrap();
    let reference = dir.path().join("reference");
    std::fs::File::create(&reference).unwrap();
    let path = dir.path().join("new.bench.ron");
    save(&bench, &path).unwrap();
    let mode = |p: &std::path::Path| std::fs::metadata(p).unwrap().permissions().mode() & 0o7777;
    assert_eq!(mode(&path), mode(&reference), "not the private mode of a temporary file");
}

#[cfg(unix)]
#[test]
fn saving_through_a_symlink_updates_the_file_it_points_to() {
    let bench = parse("demo", DEMOS[0].text).unwrap().bench;
    let dir = tempfile::tempdir().unwrap();
    let real_dir = dir.path().join("real");
    std::fs::create_dir(&real_dir).unwrap();
    let real = real_dir.join("keep.bench.ron");
    std::fs::write(&real, "old bench").unwrap();
    let link = dir.path().join("link.bench.ron");
    std::os::unix::fs::symlink("real/keep.bench.ron", &link).unwrap();
    // A link to the link.
    let link2 = dir.path().join("link2.bench.ron");
    std::os::unix::fs::symlink("link.bench.ron", &link2).unwrap();

    save(&bench, &link).unwrap();
    assert_eq!(std::fs::read_to_string(&real).unwrap(), to_text(&bench));
    assert!(std::fs::symlink_metadata(&link).unwrap().file_type().is_symlink());
    assert_eq!(std::fs::read_link(&link).unwrap(), std::path::Path::new("real/keep.bench.ron"));

    let mut other = bench.clone();
    other.title = "through two links".into();
    save(&other, &link2).unwrap();
    assert_eq!(std::fs::read_to_string(&real).unwrap(), to_text(&other));
    assert!(std::fs::symlink_metadata(&link2).unwrap().file_type().is_symlink());
    assert!(std::fs::symlink_metadata(&link).unwrap().file_type().is_symlink());
    assert_eq!(names_in(dir.path()), ["link.bench.ron", "link2.bench.ron", "real"]);
    assert_eq!(names_in(&real_dir), ["keep.bench.ron"]);
}

#[cfg(unix)]
#[test]
fn saving_through_a_link_to_a_file_not_yet_written_creates_that_file() {
    let bench = parse("demo", DEMOS[0].text).unwrap().bench;
    let dir = tempfile::tempdir().unwrap();
    let real_dir = dir.path().join("real");
    std::fs::create_dir(&real_dir).unwrap();
    // The link lives in its own folder, so its relative target is taken from there, not from the cwd.
    let links = dir.path().join("links");
    std::fs::create_dir(&links).unwrap();
    let link = links.join("new.bench.ron");
    std::os::unix::fs::symlink("../real/new.bench.ron", &link).unwrap();
    let link2 = links.join("via.bench.ron");
    std::os::unix::fs::symlink("new.bench.ron", &link2).unwrap();

    save(&bench, &link2).unwrap();
    assert_eq!(std::fs::read_to_string(real_dir.join("new.bench.ron")).unwrap(), to_text(&bench));
    assert!(std::fs::symlink_metadata(&link).unwrap().file_type().is_symlink());
    assert!(std::fs::symlink_metadata(&link2).unwrap().file_type().is_symlink());
    assert_eq!(load(&link2).unwrap().bench, load(&real_dir.join("new.bench.ron")).unwrap().bench);
    assert_eq!(names_in(&links), ["new.bench.ron", "via.bench.ron"]);
    assert_eq!(names_in(&real_dir), ["new.bench.ron"]);
}

const BOM: &str = "\u{feff}";

fn one_lens_screen() -> &'static str {
    lumenrail_bench::demos::find("one-lens-screen").unwrap().text
}

/// The line and column of the first diagnostic.
fn place_of(e: &lumenrail_bench::file::LoadError) -> (usize, usize) {
    (e.diagnostics[0].place.line, e.diagnostics[0].place.col)
}

#[test]
fn a_byte_order_mark_at_the_start_is_skipped() {
    let plain = parse("one-lens-screen", one_lens_screen()).unwrap();
    let marked = parse("one-lens-screen", &format!("{BOM}{}", one_lens_screen())).unwrap();
    assert_eq!(marked, plain);
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("bom.bench.ron");
    std::fs::write(&path, [b"\xEF\xBB\xBF".as_slice(), one_lens_screen().as_bytes()].concat()).unwrap();
    assert_eq!(load(&path).unwrap(), plain);
}

#[test]
fn after_a_byte_order_mark_errors_keep_their_line_and_column() {
    let dir = tempfile::tempdir().unwrap();
    let cases = [
        // A syntax error on line 1: the column counts the visible characters.
        ("(   ]".to_string(), (1, 5)),
        // Characters, not bytes: `é` is two bytes and one column.
        ("(é, ]".to_string(), (1, 3)),
        // A misspelt field further down (placed just after its name).
        (one_lens_screen().replace("rail_length_mm:", "rail_lenght_mm:"), (5, 19)),
        // A validation finding, placed by the text's own locator.
        (one_lens_screen().replace("primary_wavelength: 1", "primary_wavelength: 7"), (7, 5)),
    ];
    for (k, (text, place)) in cases.iter().enumerate() {
        let plain = parse("f", text).unwrap_err();
        assert_eq!(place_of(&plain), *place, "{plain}");
        let marked = parse("f", &format!("{BOM}{text}")).unwrap_err();
        assert_eq!(marked, plain);
        let path = dir.path().join(format!("case-{k}.bench.ron"));
        std::fs::write(&path, format!("{BOM}{text}")).unwrap();
        let loaded = load(&path).unwrap_err();
        assert_eq!(place_of(&loaded), *place, "{loaded}");
        assert_eq!(loaded.diagnostics[0].message, plain.diagnostics[0].message);
    }
    // Only the first mark is skipped; another one is text, and refused where it stands.
    assert_eq!(place_of(&parse("f", &format!("{BOM}{BOM}(")).unwrap_err()), (1, 1));
    // Bytes that are not UTF-8 on line 1 are placed after the mark too.
    let path = dir.path().join("not-utf8.bench.ron");
    std::fs::write(&path, b"\xEF\xBB\xBF(x\xFF").unwrap();
    assert_eq!(place_of(&load(&path).unwrap_err()), (1, 3));
}

fn surface() -> impl Strategy<Value = SurfaceSpec> {
    prop_oneof![
        Just(SurfaceSpec::Flat),
        prop_oneof![-500.0..-30.0f64, 30.0..500.0f64].prop_map(SurfaceSpec::Radius),
        (prop_oneof![-500.0..-30.0f64, 30.0..500.0f64], -3.0..1.0f64)
            .prop_map(|(radius, conic)| SurfaceSpec::Conic { radius, conic }),
    ]
}

fn material() -> impl Strategy<Value = MaterialSpec> {
    prop_oneof![
        Just(MaterialSpec::Named("fused-silica".into())),
        (1.3..2.0f64).prop_map(MaterialSpec::Index),
        (1.4..1.9f64, 20.0..90.0f64).prop_map(|(nd, vd)| MaterialSpec::Abbe { nd, vd }),
        Just(MaterialSpec::Sellmeier { b: vec![1.1819], c: vec![0.011313] }),
    ]
}

fn kind() -> impl Strategy<Value = PartKind> {
    prop_oneof![
        (prop_oneof![-300.0..-5.0f64, 5.0..300.0f64], 1.0..50.0f64)
            .prop_map(|(focal_mm, diameter_mm)| PartKind::ThinLens { focal_mm, diameter_mm }),
        (surface(), surface(), 1.0..10.0f64, 5.0..25.0f64, material()).prop_map(
            |(front, back, thickness_mm, diameter_mm, material)| PartKind::Singlet {
                front,
                back,
                thickness_mm,
                diameter_mm,
                material
            }
        ),
        (1.0..30.0f64).prop_map(|diameter_mm| PartKind::Iris { diameter_mm }),
        (1.0..80.0f64).prop_map(|diameter_mm| PartKind::Screen { diameter_mm }),
        (surface(), 5.0..50.0f64).prop_map(|(surface, diameter_mm)| PartKind::Mirror { surface, diameter_mm }),
    ]
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 128, ..ProptestConfig::default() })]

    /// Save then load gives the same bench (parts in rail order), whatever its numbers.
    #[test]
    fn saving_and_loading_round_trips(
        title in "[ -~]{0,40}",
        parts in prop::collection::vec(("[A-Za-z0-9 ]{1,12}", 0.0..900.0f64, kind(), prop::option::of(0.0..40.0f64)), 0..8),
        distant in any::<bool>(),
    ) {
        let bench = Bench {
            format: 1,
            title,
            rail_length_mm: 1000.0,
            wavelengths_nm: vec![486.1327, 587.5618],
            primary_wavelength: 1,
            wavelength_weights: if distant { vec![1.0, 2.5] } else { Vec::new() },
            object: if distant { ObjectSpec::Distant { field_deg: 1.5, beam_diameter_mm: 8.0 } } else { ObjectSpec::Point { at_mm: 0.0, height_mm: -2.5 } },
            parts: parts.into_iter().map(|(name, at_mm, kind, carrier_mm)| Part { name, at_mm, kind, carrier_mm, from_drawer: None, coatings: Vec::new() }).collect(),
            aims: Vec::new(),
            laser: None,
            tolerances: Vec::new(),
        };
        let text = to_text(&bench);
        let back: Bench = ron::from_str(&text).unwrap();
        let mut sorted = bench.clone();
        sorted.parts = bench.rail_order().into_iter().map(|i| bench.parts[i].clone()).collect();
        prop_assert_eq!(back, sorted);
    }
}

/// Wavelength weights: optional (a format-1 file without them loads as before and saves without them);
/// given, they round-trip, and a wrong count or a negative weight is placed at the field.
#[test]
fn wavelength_weights_are_optional_checked_and_kept() {
    let plain = parse("f", one_lens_screen()).unwrap().bench;
    assert!(plain.wavelength_weights.is_empty());
    assert!(!to_text(&plain).contains("wavelength_weights"));
    let weighted = one_lens_screen()
        .replace("primary_wavelength: 1,", "primary_wavelength: 1,\n    wavelength_weights: [1.0, 2.0, 1.0],");
    let b = parse("f", &weighted).unwrap().bench;
    assert_eq!(b.wavelength_weights, vec![1.0, 2.0, 1.0]);
    assert_eq!(parse("f", &to_text(&b)).unwrap().bench, b);
    for (bad, words) in [
        ("[1.0, 2.0]", "2 weights for 3 wavelengths"),
        ("[1.0, -2.0, 1.0]", "at least 0"),
        ("[0.0, 0.0, 0.0]", "all 0"),
    ] {
        let text = weighted.replace("[1.0, 2.0, 1.0]", bad);
        let e = parse("f", &text).unwrap_err();
        assert_eq!(place_of(&e), (8, 5), "{e}");
        assert!(e.diagnostics[0].message.contains(words), "{e}");
    }
}

/// Found by fuzzing (bench_numbers, a timeout): a rail of 4e228 mm drew 4e225 scale ticks, and a
/// wavelength of 1e-320 nm was accepted. Both are refused where they stand.
#[test]
fn an_absurd_rail_or_wavelength_is_refused() {
    let long = one_lens_screen().replace("rail_length_mm: 1000.0", "rail_length_mm: 4.2641182955036555e228");
    let e = parse("f", &long).unwrap_err();
    assert!(e.diagnostics[0].message.contains("longer than the 100000 mm"), "{e}");
    let tiny = one_lens_screen().replace("486.1327", "1.325e-320");
    let e = parse("f", &tiny).unwrap_err();
    assert!(e.diagnostics[0].message.contains("outside the 100 to 100000 nm"), "{e}");
}

/// Found by fuzzing (bench_file): a part name holding a line break and a byte-order mark broke the
/// report's one-line-per-part text. A name is one line: control characters are refused at the name.
#[test]
fn a_name_with_a_line_break_is_refused_at_the_name() {
    let text = one_lens_screen().replace("name: \"Screen\"", "name: \"Scr\\neen\"");
    let e = parse("f", &text).unwrap_err();
    assert!(e.diagnostics[0].message.contains("a name is one line"), "{e}");
    assert_eq!(place_of(&e), (11, 10), "{e}");
}

/// Found by fuzzing (bench_numbers, NaN in the report): a thin lens of focal length 4e-323 mm and a
/// beam 1e-317 mm across passed validation and overflowed every power. Lengths are now 1 µm to 1 km.
#[test]
fn lengths_outside_a_micrometre_to_a_kilometre_are_refused() {
    let tiny_f = one_lens_screen().replace("focal_mm: 100.0", "focal_mm: 4e-323");
    let e = parse("f", &tiny_f).unwrap_err();
    assert!(e.diagnostics[0].message.contains("focal length"), "{e}");
    let tiny_d = one_lens_screen().replace("diameter_mm: 40.0", "diameter_mm: 1e-307");
    let e = parse("f", &tiny_d).unwrap_err();
    assert!(e.diagnostics[0].message.contains("outside the 0.001 to 1000000 mm"), "{e}");
}

/// Found by fuzzing (bench_numbers, NaN in the report): an object 1e-319 mm from a thin lens left its
/// pupils no size. An object on a part's surface, or nearer it than the least length, is refused at
/// the object.
#[test]
fn an_object_on_a_part_is_refused_at_the_object() {
    for at in ["300.0", "300.0000001"] {
        let text = one_lens_screen().replace("Point(at_mm: 0.0", &format!("Point(at_mm: {at}"));
        let e = parse("f", &text).unwrap_err();
        assert!(e.diagnostics[0].message.contains("lies on thin lens \"Projection lens\""), "{e}");
        assert_eq!(place_of(&e), (8, 5), "{e}");
    }
    let near = one_lens_screen().replace("Point(at_mm: 0.0", "Point(at_mm: 299.99");
    assert!(parse("f", &near).is_ok());
}

/// Found by fuzzing (bench_numbers, NaN and then inf in the instrument figures): an object point 5e-324 mm
/// off the axis gave no angle at 250 mm and a field-stop share that overflowed. A non-zero height below a
/// picometre (and a non-zero field angle below 1e-9°) is refused at the object; 0 and a picometre load.
#[test]
fn an_object_height_below_a_picometre_is_refused() {
    let with_height = |h: &str| one_lens_screen().replace("height_mm: 10.0", &format!("height_mm: {h}"));
    assert!(one_lens_screen().contains("height_mm: 10.0"));
    for h in ["5e-324", "-9e-10"] {
        let e = parse("f", &with_height(h)).unwrap_err();
        assert!(e.diagnostics[0].message.contains("below a picometre"), "{e}");
        assert_eq!(place_of(&e), (8, 5), "{e}");
    }
    // Found by fuzzing too (a view's CSV showed NaN): an object 3.8e146 mm off the axis.
    let e = parse("f", &with_height("3.8e146")).unwrap_err();
    assert!(e.diagnostics[0].message.contains("more than a kilometre"), "{e}");
    for h in ["0.0", "1e-9", "-1e-9", "1e6"] {
        assert!(parse("f", &with_height(h)).is_ok(), "{h}");
    }
}
