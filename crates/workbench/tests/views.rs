//! The analysis views used as a person uses them (egui_kittest, no display): switch views, pick the plane,
//! drag a part and see the views follow in the same frame, export CSV and PNG.

use egui::Key;
use egui_kittest::Harness;
use egui_kittest::kittest::Queryable as _;
use lumenrail_bench::report::{Report, fixed};
use lumenrail_bench::views::{Plane, Point, ViewKind, Views};
use lumenrail_workbench::Workbench;

fn harness(demo: &str) -> Harness<'static, Workbench> {
    let mut h = Harness::builder()
        .with_size(egui::vec2(1400.0, 900.0))
        .build_ui_state(|ui, wb: &mut Workbench| wb.ui(ui), Workbench::demo(demo));
    h.run();
    h
}

/// The on-axis primary RMS radius as the spot view's figure line shows it, µm with three decimals.
fn shown_on_axis_rms(h: &Harness<'_, Workbench>) -> String {
    h.get_by_label_contains("on-axis 587.6 nm: RMS").value().unwrap_or_default()
}

fn expected_on_axis_rms(wb: &Workbench) -> String {
    let views = Views::of(&lumenrail_bench::evaluation::Evaluation::of(&wb.bench), &wb.views.request);
    let s = views
        .spot
        .unwrap()
        .series
        .into_iter()
        .find(|s| s.point == Point::OnAxis && (s.wavelength_nm - 587.5618).abs() < 1e-9);
    format!("RMS {} µm", fixed(s.unwrap().rms_mm * 1e3, 3))
}

#[test]
fn each_view_tab_shows_its_plot_and_figures() {
    let mut h = harness("camera-meniscus");
    assert_eq!(h.state().views.tab, ViewKind::Spot);
    assert!(shown_on_axis_rms(&h).contains(&expected_on_axis_rms(h.state())));
    for (tab, text) in [
        ("fan", "Transverse ray error"),
        ("sweep", "RMS spot radius through focus"),
        ("colour", "where every material of the bench is valid"),
        ("field", "Across the field"),
    ] {
        h.get_by_label(tab).click();
        h.run();
        assert_eq!(h.state().views.tab.word(), tab);
        assert!(h.query_by_label_contains(text).is_some(), "{tab}");
    }
    // The sweep's least on-axis RMS is the readout's best focus.
    h.get_by_label("sweep").click();
    h.run();
    let best = Report::of(&h.state().bench).screens[0].best_focus_at_mm.unwrap();
    assert!(h.query_by_label_contains(&format!("at {} mm", fixed(best, 4))).is_some());
}

#[test]
fn dragging_the_film_plane_updates_the_spot_view_in_the_same_frame() {
    let mut h = harness("camera-meniscus");
    let before = shown_on_axis_rms(&h);
    let start = h.get_by_label("Film plane").rect().center();
    h.drag_at(start);
    h.run();
    for k in 1..=4 {
        h.hover_at(start + egui::vec2(-10.0 * k as f32, 0.0));
        h.run();
        // Mid-drag, every frame's spot figures belong to the layout on screen.
        assert!(shown_on_axis_rms(&h).contains(&expected_on_axis_rms(h.state())), "step {k}");
    }
    h.drop_at(start + egui::vec2(-40.0, 0.0));
    h.run();
    assert_ne!(shown_on_axis_rms(&h), before, "the film plane moved");
    assert!(shown_on_axis_rms(&h).contains(&expected_on_axis_rms(h.state())));
}

#[test]
fn choosing_best_focus_as_the_plane_moves_the_spot_there() {
    let mut h = harness("camera-meniscus");
    h.get_by_label("plane").click();
    h.run();
    h.get_by_label("best focus").click();
    h.run();
    assert!(h.query_by_label_contains("At best focus").is_some());
    // At best focus the on-axis RMS is the report's best-focus figure.
    let best = Report::of(&h.state().bench).screens[0].best_rms_spot_um.unwrap();
    assert!(shown_on_axis_rms(&h).contains(&format!("RMS {} µm", fixed(best, 3))), "{}", shown_on_axis_rms(&h));
}

#[test]
fn views_export_by_path_as_csv_and_png() {
    let dir = std::env::temp_dir().join(format!("lumenrail-views-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let mut h = harness("camera-meniscus");
    let csv = dir.join("spot.csv");
    h.get_by_label("File").click();
    h.run();
    h.get_by_label("Export view CSV by path…").click();
    h.run();
    let field = "Path of the CSV table:";
    h.get_by_label(field).focus();
    h.run();
    h.key_press_modifiers(egui::Modifiers::COMMAND, Key::A);
    h.run();
    h.get_by_label(field).type_text(csv.to_str().unwrap());
    h.run();
    h.get_by_label("Export").click();
    h.run();
    let text = std::fs::read_to_string(&csv).unwrap_or_else(|e| panic!("{e}: {}", h.state().status));
    assert!(text.starts_with("point,wavelength_nm,x_mm,y_mm"));
    // Three wavelengths, two points, a 127-ray hexapolar grid each, none vignetted.
    assert_eq!(text.lines().count(), 1 + 6 * 127);

    h.get_by_label("field").click();
    h.run();
    let png = dir.join("field.png");
    assert!(h.state_mut().export_view(ViewKind::Field, true, &png), "{}", h.state().status);
    let img = image::open(&png).unwrap();
    assert_eq!((img.width(), img.height()), (1800, 960));
    // A failed export (a directory that does not exist) says so and leaves no file.
    let bad = dir.join("no-such-dir").join("x.csv");
    assert!(!h.state_mut().export_view(ViewKind::Spot, false, &bad));
    assert!(h.state().status.contains("x.csv"), "{}", h.state().status);
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn clicking_a_screen_points_the_spot_view_at_it() {
    let mut h = harness("camera-meniscus");
    assert!(h.query_by_label_contains("At screen \"Film plane\"").is_some());
    let mut second = h.state().new_part("screen");
    second.name = "Ground glass".into();
    second.at_mm = 170.0;
    h.state_mut().apply(lumenrail_workbench::Edit::Add(second), None);
    h.state_mut().selected = None;
    h.run();
    // Automatic: the first screen beyond the lens.
    assert!(h.query_by_label_contains("At screen \"Film plane\"").is_some());
    h.get_by_label("Ground glass").click();
    h.run();
    assert!(h.query_by_label_contains("At screen \"Ground glass\" (170.000 mm)").is_some());
}

/// Dragging a part is one revision per frame: one compilation and one analysis, whatever the rail, the
/// readout, the focal marks of the selected part and the open view draw; frames without a change compile
/// and analyse nothing (the bench crate's thread-local counters).
#[test]
fn a_moved_part_is_evaluated_once_and_every_panel_projects_it() {
    use lumenrail_bench::evaluation::counters;
    for tab in ViewKind::ALL {
        let mut h = harness("camera-meniscus");
        h.state_mut().views.tab = tab;
        h.state_mut().selected = Some(1);
        h.run();
        let before = counters();
        h.run();
        assert_eq!(counters(), before, "{tab:?}: an unchanged frame evaluated again");
        let at = h.state().bench.parts[1].at_mm + 0.5;
        h.state_mut().apply(lumenrail_workbench::Edit::Move { index: 1, at_mm: at }, Some("test"));
        h.run();
        let after = counters();
        assert_eq!(after.compilations - before.compilations, 1, "{tab:?}");
        assert_eq!(after.analyses - before.analyses, 1, "{tab:?}");
    }
}

/// At 1280 × 800 and 1600 × 1000 with a part selected, the views panel's controls stay between the part
/// sheet and the readout (they wrap instead of running under the readout), every panel stays inside the
/// window, and the side panels keep their widths.
#[test]
fn at_both_window_sizes_every_panel_stays_in_its_area() {
    for (w, h_px) in [(1280.0, 800.0), (1600.0, 1000.0)] {
        for demo in ["camera-meniscus", "unit-relay", "colour-achromat"] {
            let mut wb = Workbench::demo(demo);
            wb.selected = Some(0);
            let mut h = Harness::builder()
                .with_size(egui::vec2(w, h_px))
                .build_ui_state(|ui, wb: &mut Workbench| wb.ui(ui), wb);
            h.run();
            let window = egui::Rect::from_min_size(egui::Pos2::ZERO, egui::vec2(w, h_px));
            let readout = h.get_by_label("Readout").rect();
            let sheet = h.get_by_label("Part sheet").rect();
            for control in ["Export PNG…", "Export CSV…", "pupil pattern", "spot", "field"] {
                let r = h.get_by_label(control).rect();
                assert!(r.max.x <= readout.min.x && r.min.x >= sheet.max.x, "{demo} {w}: {control} at {r:?}");
                assert!(r.max.y <= h_px, "{demo} {w}: {control} below the window: {r:?}");
            }
            for panel in [readout, sheet] {
                assert!(window.contains_rect(panel), "{demo} {w}: {panel:?} leaves the window");
            }
            assert!(readout.min.x >= w - 560.0 - 1.0, "{demo} {w}: the readout widened to {readout:?}");
            // The rail's parts are drawn between the side panels.
            let first = &h.state().bench.parts[0].name.clone();
            let part = h.get_by_label(first).rect();
            assert!(part.min.x >= sheet.max.x - 1.0 && part.max.x <= readout.min.x + 1.0, "{demo} {w}: {part:?}");
        }
    }
}

/// Types `path` (and a size) into File, Export drawing and presses Enter.
fn export_drawing(h: &mut egui_kittest::Harness<'_, Workbench>, path: &std::path::Path, size: Option<&str>) {
    h.get_by_label("File").click();
    h.run();
    h.get_by_label("Export drawing (SVG, PNG or text) by path…").click();
    h.run();
    if let Some(size) = size {
        let field = "Size (width x height, pixels for PNG):";
        h.get_by_label(field).focus();
        h.run();
        h.key_press_modifiers(egui::Modifiers::COMMAND, Key::A);
        h.run();
        h.get_by_label(field).type_text(size);
        h.run();
    }
    let field = "Path of the drawing (.svg or .png; .txt for the readout):";
    h.get_by_label(field).focus();
    h.run();
    h.key_press_modifiers(egui::Modifiers::COMMAND, Key::A);
    h.run();
    h.get_by_label(field).type_text(path.to_str().unwrap());
    h.run();
    h.key_press(Key::Enter);
    h.run();
}

/// File, Export drawing writes the rail drawing the workbench shows: SVG, PNG at the size typed, and the
/// readout as text.
#[test]
fn the_rail_drawing_exports_as_svg_png_and_text_from_the_file_menu() {
    let dir = std::env::temp_dir().join(format!("lumenrail-drawing-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let mut h = harness("unit-relay");
    let svg_path = dir.join("rail.svg");
    export_drawing(&mut h, &svg_path, None);
    let svg = std::fs::read_to_string(&svg_path).unwrap_or_else(|e| panic!("{e}: {}", h.state().status));
    assert!(svg.contains("Relay B") && svg.contains("Camera plane"));
    let png_path = dir.join("rail.png");
    export_drawing(&mut h, &png_path, Some("1000x450"));
    let png = image::open(&png_path).unwrap_or_else(|e| panic!("{e}: {}", h.state().status));
    assert_eq!((png.width(), png.height()), (1000, 450));
    let txt_path = dir.join("readout.txt");
    export_drawing(&mut h, &txt_path, None);
    let text = std::fs::read_to_string(&txt_path).unwrap();
    assert_eq!(text, h.state().evaluation.report.to_text());
    // A size the drawing is not laid out for is refused in words, and nothing is written.
    let small = dir.join("small.png");
    export_drawing(&mut h, &small, Some("100x50"));
    assert!(!small.exists());
    assert!(h.state().status.contains("WIDTHxHEIGHT"), "{}", h.state().status);
    let _ = std::fs::remove_dir_all(&dir);
}

/// View, Mount sheet opens the sheet of the bench (the same text as `lumenrail mount-sheet`), switches to
/// inches (25.4 mm each: the relay's 100 mm spacing reads 3.937 in), and exports it as DXF by path.
#[test]
fn the_mount_sheet_window_shows_the_sheet_in_mm_or_inches_and_exports_it() {
    let mut h = harness("unit-relay");
    h.get_by_label("View").click();
    h.run();
    h.get_by_label("Mount sheet (for the machine shop)").click();
    h.run();
    let sheet = h.state_mut().mount_sheet().unwrap().to_text(false);
    let _ = h.get_by_label_contains(sheet.lines().nth(3).unwrap().trim());
    h.get_by_label("inches").click();
    h.run();
    let _ = h.get_by_label_contains("3.937");
    let path = std::env::temp_dir().join(format!("lumenrail-mount-{}.dxf", std::process::id()));
    h.get_by_label("Export (CSV, SVG or DXF)…").click();
    h.run();
    let field = "Path of the mount sheet (.csv, .svg or .dxf):";
    h.get_by_label(field).focus();
    h.run();
    h.key_press_modifiers(egui::Modifiers::COMMAND, Key::A);
    h.run();
    h.get_by_label(field).type_text(path.to_str().unwrap());
    h.run();
    h.key_press(Key::Enter);
    h.run();
    let dxf = std::fs::read_to_string(&path).unwrap_or_else(|e| panic!("{e}: {}", h.state().status));
    assert!(dxf.contains("SECTION") && dxf.contains("OUTLINE"), "not a DXF with our layers");
    let _ = std::fs::remove_file(&path);
}

/// A laser bench's readout gives the beam's 1/e² diameter at each part, its waists and the laser
/// caution, from the report's beam figures (the expander's output waist is 5 × 0.8 mm: telescope relation).
#[test]
fn the_readout_shows_the_laser_beam_and_its_caution() {
    let h = harness("laser-expander");
    let _ = h.get_by_label_contains("Laser beam at 632.8 nm");
    assert!(h.get_all_by_label_contains("Short lens S20: 0.").count() >= 1);
    assert_eq!(h.get_all_by_label_contains("Lumenrail classifies nothing").count(), 1, "the caution, once");
    let beam = h.state().evaluation.report.beam.clone().unwrap();
    let last = beam.waists.last().unwrap();
    assert!((last.diameter_mm - 4.0).abs() < 1e-3, "{last:?}");
}

/// Picking the beam tab on the laser expander shows the beam view: its caption and the real waist after
/// the short lens where S. A. Self's law puts it (Appl. Opt. 22, 658 (1983)): the laser's waist (w₀ =
/// 0.4 mm, z_R = πw₀²/λ) lies s = 80 mm before the f = 20 mm lens, so 1/s' = 1/f − 1/(s + z_R²/(s − f))
/// and w₀' = w₀/√((1 − s/f)² + (z_R/f)²). Its CSV, exported by path as a person does it, ends on the far
/// card at the report's beam diameter there (one source for both).
#[test]
fn picking_the_beam_view_shows_the_laser_beam_and_exports_it() {
    let mut h = harness("laser-expander");
    h.get_by_label("beam").click();
    h.run();
    assert_eq!(h.state().views.tab, ViewKind::Beam);
    assert!(h.query_by_label_contains("The laser beam's 1/e² diameter along the rail").is_some());
    let (w0, s_mm, f_mm) = (0.4_f64, 80.0_f64, 20.0_f64);
    let z_r = std::f64::consts::PI * w0 * w0 / 632.8e-6;
    let s_out = 1.0 / (1.0 / f_mm - 1.0 / (s_mm + z_r * z_r / (s_mm - f_mm)));
    let w_out = w0 / ((1.0 - s_mm / f_mm).powi(2) + (z_r / f_mm).powi(2)).sqrt();
    let waist = h.get_by_label_contains("waist after Short lens S20: at").value().unwrap_or_default();
    let want = format!("at {} mm, {} mm across", fixed(100.0 + s_out, 3), fixed(2.0 * w_out, 4));
    assert!(waist.contains(&want), "{waist} vs {want}");
    assert!(h.query_by_label_contains("no image plane").is_none(), "the afocal note does not concern the beam");

    let dir = std::env::temp_dir().join(format!("lumenrail-beam-view-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let csv = dir.join("beam.csv");
    h.get_by_label("File").click();
    h.run();
    h.get_by_label("Export view CSV by path…").click();
    h.run();
    let field = "Path of the CSV table:";
    h.get_by_label(field).focus();
    h.run();
    h.key_press_modifiers(egui::Modifiers::COMMAND, Key::A);
    h.run();
    h.get_by_label(field).type_text(csv.to_str().unwrap());
    h.run();
    h.get_by_label("Export").click();
    h.run();
    let text = std::fs::read_to_string(&csv).unwrap_or_else(|e| panic!("{e}: {}", h.state().status));
    assert!(text.starts_with("row,space_or_name,z_mm,diameter_mm"));
    let last = text.lines().rfind(|l| l.starts_with("envelope,")).unwrap();
    let cols: Vec<f64> = last.split(',').skip(2).map(|v| v.parse().unwrap()).collect();
    let card = h.state().evaluation.report.beam.clone().unwrap().screens[0].clone();
    assert!((cols[0] - card.at_mm).abs() < 1e-9, "{last}");
    assert!((cols[1] - card.diameter_mm).abs() < 1e-12 * card.diameter_mm, "{last} vs {card:?}");
    let _ = std::fs::remove_dir_all(&dir);
}
/// The wavefront and sharpness views (issue 16), picked by their tabs: each shows its plot's caption and
/// the same figures as the report (one source: the evaluation's sharpness figures).
#[test]
fn the_wavefront_and_sharpness_views_show_the_reports_figures() {
    let mut h = harness("camera-meniscus");
    h.get_by_label("wavefront").click();
    h.run();
    assert_eq!(h.state().views.tab, ViewKind::Wavefront);
    assert!(h.query_by_label_contains("Wavefront error on a sphere centred on the chief ray's point").is_some());
    let report = Report::of(&h.state().bench);
    let w = &report.wavefront[0];
    let line = h.get_by_label_contains("on-axis at 587.6 nm: RMS").value().unwrap_or_default();
    assert!(line.contains(&format!("RMS {} waves", fixed(w.rms_waves, 4))), "{line}");
    assert!(line.contains(&format!("Strehl {}", fixed(w.strehl, 3))), "{line}");
    h.get_by_label("sharpness").click();
    h.run();
    assert_eq!(h.state().views.tab, ViewKind::Sharpness);
    assert!(h.query_by_label_contains("grey: diffraction limit").is_some());
    let m = &report.mtf[0];
    let line = h.get_by_label_contains("on-axis: 50% at").value().unwrap_or_default();
    let t50 = m.tangential_50_per_mm.map(|v| fixed(v, 1)).unwrap();
    assert!(line.contains(&format!("50% at {t50}/mm T")), "{line}");
    // The readout says whether the image is diffraction-limited.
    let said = h.get_by_label_contains("Wavefront, on-axis point: RMS").value().unwrap_or_default();
    assert!(said.contains("not diffraction-limited") && !w.diffraction_limited, "{said}");
}

/// The wavefront's plane is chosen in the panel's plane list: automatic is the paraxial image (the
/// report's), and picking the screen refers the wavefront to the screen. The wavefront view draws each
/// point's map, the sharpness view each point's PSF picture and cut, each with its caption.
#[test]
fn the_wavefront_is_referred_to_the_plane_picked_in_the_list() {
    let mut h = harness("camera-meniscus");
    h.get_by_label("wavefront").click();
    h.run();
    assert!(h.query_by_label_contains("chief ray's point on the paraxial image at").is_some());
    assert_eq!(h.query_all_by_label_contains("blue −").count(), 2, "each point's map, with its scale");
    h.get_by_label("plane").click();
    h.run();
    assert!(h.query_by_label("automatic (paraxial image)").is_some());
    h.get_by_label("screen Film plane").click();
    h.run();
    assert_eq!(h.state().views.request.plane, Plane::Screen("Film plane".into()));
    assert!(h.query_by_label_contains("chief ray's point on screen \"Film plane\" at").is_some());
    h.get_by_label("sharpness").click();
    h.run();
    assert!(h.query_by_label_contains("at screen \"Film plane\" at").is_some());
    assert_eq!(h.query_all_by_label_contains("PSF of every wavelength by its weight").count(), 2);
    let views = h.state_mut().views().clone();
    assert_eq!(views.psf.len(), 2);
    let screen = h.state().evaluation.report.screens.iter().find(|s| s.part == "Film plane").unwrap().at_mm;
    assert!((views.sharpness.unwrap().image_at_mm - screen).abs() < 1e-12, "the screen's own position");
}
