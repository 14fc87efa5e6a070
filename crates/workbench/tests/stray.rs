//! The stray-focus map as a person meets it (egui_kittest, no display): the readout's table and the rail's
//! numbered marks on a laser bench, a coating typed into the part sheet changing both in the same frame,
//! and a refused coating saying why.

use egui::Key;
use egui_kittest::Harness;
use egui_kittest::kittest::Queryable as _;
use lumenrail_bench::model::Coating;
use lumenrail_workbench::Workbench;

fn harness(demo: &str) -> Harness<'static, Workbench> {
    let mut h = Harness::builder()
        .with_size(egui::vec2(1400.0, 900.0))
        .build_ui_state(|ui, wb: &mut Workbench| wb.ui(ui), Workbench::demo(demo));
    h.run();
    h
}

fn replace_text(h: &mut Harness<'_, Workbench>, label: &str, text: &str) {
    h.get_by_label(label).focus();
    h.run();
    h.key_press_modifiers(egui::Modifiers::COMMAND, Key::A);
    h.run();
    // Typing nothing over a selection leaves it: a person deletes it.
    h.key_press(Key::Backspace);
    h.run();
    h.get_by_label(label).type_text(text);
    h.run();
    h.key_press(Key::Enter);
    h.run();
}

/// The rail's marks are the report's strongest foci on the rail, numbered as the readout's table rows.
fn marks_match_the_report(wb: &Workbench) {
    let map = wb.evaluation.report.stray.as_ref().expect("a stray-focus map");
    let want: Vec<(usize, f64)> = map
        .marks()
        .into_iter()
        .filter(|(_, z, _)| (0.0..=wb.bench.rail_length_mm).contains(z))
        .map(|(k, z, _)| (k, z))
        .collect();
    let got: Vec<(usize, f64)> = wb.scene.stray.iter().map(|m| (m.rank, m.at_mm)).collect();
    assert_eq!(got, want);
}

/// On the spatial-filter demo the readout shows the stray-focus map and the rail its numbered marks; the
/// back face of the focusing lens bare (blank) turns it to 4.2 % (the Fresnel share of its glass at
/// 632.8 nm) and coating its front to 1 % sets that: both show at once, the marks following.
#[test]
fn a_coating_typed_in_the_part_sheet_changes_the_stray_map_live() {
    let mut h = harness("laser-pinhole");
    let _ = h.get_by_label_contains("Stray-focus map at 632.8 nm");
    let _ = h.get_by_label_contains("Reflections of a laser beam can injure eyes");
    assert!(h.get_all_by_label_contains("stray focus 1:").count() >= 1, "the strongest focus is marked on the rail");
    marks_match_the_report(h.state());

    h.get_by_label("Focuser F100").click();
    h.run();
    replace_text(&mut h, "front reflectance (%, blank: bare)", "1");
    replace_text(&mut h, "back reflectance (%, blank: bare)", "");
    let part = h.state().bench.part("Focuser F100").unwrap().clone();
    assert_eq!(part.coatings, vec![Coating::Percent(1.0), Coating::Bare]);
    let map = h.state().evaluation.report.stray.clone().unwrap();
    let front = map.surfaces.iter().find(|s| s.surface == "Focuser F100 (front)").unwrap();
    let back = map.surfaces.iter().find(|s| s.surface == "Focuser F100 (back)").unwrap();
    assert!(front.coated && (front.reflectance_percent - 1.0).abs() < 1e-12);
    assert!(!back.coated && (back.reflectance_percent - 4.195).abs() < 1e-3, "{back:?}");
    marks_match_the_report(h.state());
    // One undo step per typed field: two undos put the coatings back as the demo has them.
    h.state_mut().undo();
    h.state_mut().undo();
    h.run();
    let demo = h.state().bench.part("Focuser F100").unwrap().coatings.clone();
    assert_eq!(demo, vec![Coating::Percent(0.25), Coating::Percent(0.25)]);
}

/// A reflectance above 100 % is refused beside the field with the reason, and the bench keeps its coating.
#[test]
fn an_impossible_reflectance_is_refused_in_the_sheet() {
    let mut h = harness("laser-pinhole");
    h.get_by_label("Focuser F100").click();
    h.run();
    replace_text(&mut h, "front reflectance (%, blank: bare)", "150");
    let msg = h.get_by_label_contains("a reflectance is 0 to 100 %").value().unwrap_or_default();
    assert!(msg.contains("Focuser F100"), "{msg}");
    assert_eq!(h.state().bench.part("Focuser F100").unwrap().coatings[0], Coating::Percent(0.25));
}
