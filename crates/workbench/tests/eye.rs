//! The eye on the workbench and the lab sheets from the File menu, driven as a person does: clicks and
//! typing.

use egui::Key;
use egui_kittest::Harness;
use egui_kittest::kittest::Queryable as _;
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
    h.get_by_label(label).type_text(text);
    h.run();
    h.key_press(Key::Enter);
    h.run();
}

/// The myopic eye demo: the readout says what the eye gets, the eye is a part on the rail, and its part
/// sheet edits the refractive error (typing −3 → 0 makes a distant scene sharp for it).
#[test]
fn the_eye_reads_out_and_edits_in_its_sheet() {
    let mut h = harness("myopic-eye");
    let _ = h.get_by_label_contains("Eye \"Student eye\"");
    let _ = h.get_by_label_contains("it cannot focus it: the light is beyond its far point");
    let _ = h.get_by_label_contains("spectacle lens of -3.11 D");
    h.get_by_label("Student eye").click();
    h.run();
    // Place corrector: the starter drawer holds no lens within 0.25 D of −3.11 D, and says so.
    h.get_by_label("Place corrector from the drawer").click();
    h.run();
    assert!(h.state().status.contains("no lens in the drawer"), "{}", h.state().status);
    // With a −3.00 D thin lens (f = −333.3 mm) in stock, it is placed 12 mm before the cornea.
    h.state_mut().drawer.drawer.items.push(lumenrail_bench::drawer::DrawerItem {
        label: "spectacle blank -3.00 D".into(),
        quantity: 1,
        mechanical_diameter_mm: 40.0,
        notes: String::new(),
        part: lumenrail_bench::model::PartKind::ThinLens { focal_mm: -1000.0 / 3.0, diameter_mm: 40.0 },
    });
    h.get_by_label("Place corrector from the drawer").click();
    h.run();
    let placed = h.state().bench.parts.iter().find(|p| p.from_drawer.as_deref() == Some("spectacle blank -3.00 D"));
    let placed = placed.unwrap_or_else(|| panic!("{}", h.state().status)).clone();
    assert!((placed.at_mm - 108.0).abs() < 1e-9, "{}", placed.at_mm);
    let eye = h.state().evaluation.report.eye.clone().unwrap();
    assert!(eye.defocus_d.abs() < 0.25, "within the quarter dioptre: {}", eye.defocus_d);
    h.state_mut().undo();
    // The part sheet's grid settles over a few frames after the bench changed under it.
    h.run_steps(8);
    h.get_by_label("Student eye").click();
    h.run_steps(8);
    replace_text(&mut h, "refractive error (D; negative: myopic)", "0");
    let eye = h.state().evaluation.report.eye.clone().expect("eye figures");
    assert!(eye.refraction_d.abs() < 1e-12 && eye.can_focus, "{eye:?}");
    let _ = h.get_by_label_contains("it can, and is focused on it");
}

/// File, Lab sheet: the autocollimation lab on Letter paper writes the class's PDF and its answer key.
#[test]
fn a_lab_sheet_is_written_from_the_file_menu() {
    let dir = std::env::temp_dir().join(format!("lumenrail-lab-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let mut h = harness("autocollimation");
    h.get_by_label("File").click();
    h.run();
    h.get_by_label("Lab sheet and answer key (PDF) by path…").click();
    h.run();
    h.get_by_label("autocollimation").click();
    h.run();
    h.get_by_label("Letter").click();
    h.run();
    let field = "Path of the class's PDF (the answer key goes beside it, ending -answers.pdf):";
    let path = dir.join("mirror-lab.pdf");
    h.get_by_label(field).focus();
    h.run();
    h.key_press_modifiers(egui::Modifiers::COMMAND, Key::A);
    h.run();
    h.get_by_label(field).type_text(path.to_str().unwrap());
    h.run();
    h.get_by_label("Write").click();
    h.run();
    let sheet = std::fs::read(&path).unwrap_or_else(|e| panic!("{e}: {}", h.state().status));
    let key = std::fs::read(dir.join("mirror-lab-answers.pdf")).unwrap();
    assert!(sheet.starts_with(b"%PDF") && key.starts_with(b"%PDF"));
    assert!(h.state().status.contains("answer key"), "{}", h.state().status);
    // A lab the bench cannot hold says why in the status line: a mirror bench has no screen.
    h.get_by_label("File").click();
    h.run();
    h.get_by_label("Lab sheet and answer key (PDF) by path…").click();
    h.run();
    h.get_by_label("displacement").click();
    h.run();
    h.get_by_label("Write").click();
    h.run();
    assert!(
        h.state().status.contains("needs a screen") || h.state().status.contains("no lab sheet"),
        "{}",
        h.state().status
    );
    std::fs::remove_dir_all(&dir).ok();
}

/// The eye's part sheet chooses its schematic eye: the reduced eye in place of Gullstrand's, as one undo
/// step. The spectacle lens for a −3 D myope at 12 mm is the same for both, since the error is set at the
/// cornea: F_s = F_o / (1 + d F_o) = −3 / (1 − 0.036) = −3.11 D (the vertex-distance formula; e.g.
/// Rabbetts, *Clinical Visual Optics*, ch. 4, from memory).
#[test]
fn the_eye_model_is_chosen_in_the_part_sheet() {
    use lumenrail_bench::model::{EyeModel, PartKind};
    let model = |h: &Harness<'_, Workbench>| {
        h.state().bench.parts.iter().find_map(|p| match p.kind {
            PartKind::Eye { model, .. } => Some(model),
            _ => None,
        })
    };
    let mut h = harness("myopic-eye");
    h.get_by_label("Student eye").click();
    h.run_steps(4);
    h.get_by_label("eye model").click();
    h.run();
    h.get_by_label("Emsley's reduced eye (one surface, 60 D)").click();
    h.run_steps(4);
    assert_eq!(model(&h), Some(EyeModel::Reduced));
    let _ = h.get_by_label_contains("spectacle lens of -3.11 D");
    h.state_mut().undo();
    h.run_steps(4);
    assert_eq!(model(&h), Some(EyeModel::Gullstrand));
}
