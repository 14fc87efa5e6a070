//! The tolerance window as a person uses it: View, Tolerance run opens the sensitivities and budget of
//! the bench (the same numbers as `lumenrail tolerance`, from the one evaluation), the Monte Carlo runs
//! in the background with a progress bar and Cancel, and its figures are those of the bench crate's run
//! for the same options.

use egui::Key;
use egui_kittest::Harness;
use egui_kittest::kittest::Queryable;
use lumenrail_bench::arrange::Progress;
use lumenrail_bench::tolerance::{Distribution, MonteCarloOptions, ToleranceRun, monte_carlo};
use lumenrail_workbench::Workbench;

fn harness(wb: Workbench) -> Harness<'static, Workbench> {
    let mut h =
        Harness::builder().with_size(egui::vec2(1400.0, 900.0)).build_ui_state(|ui, wb: &mut Workbench| wb.ui(ui), wb);
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

fn open_window(h: &mut Harness<'_, Workbench>) {
    h.get_by_label("View").click();
    h.run();
    h.get_by_label("Tolerance run (sensitivities, budget, Monte Carlo)").click();
    h.run();
}

/// Steps frames until the Monte Carlo stops (the window keeps drawing meanwhile).
fn until_done(h: &mut Harness<'_, Workbench>) {
    h.step();
    for _ in 0..3000 {
        if !h.state().tolerance.running() {
            break;
        }
        std::thread::sleep(std::time::Duration::from_millis(10));
        h.step();
    }
    h.step();
    h.run();
}

/// The window shows each lens's sensitivities and the budget; Run Monte Carlo with 300 trials, seed 9,
/// normal and refocused gives exactly the figures of the bench crate's run with those options.
#[test]
fn the_tolerance_window_shows_sensitivities_and_runs_the_monte_carlo() {
    let mut h = harness(Workbench::demo("camera-meniscus"));
    open_window(&mut h);
    let run = ToleranceRun::of(&h.state().evaluation).unwrap().0;
    let decentre = format!("{:.2}", run.sensitivities[0].decentre_image_um.unwrap());
    let _ = h.get_by_label(&decentre);
    let _ = h.get_by_label_contains("Depth of focus ±");
    let _ = h.get_by_label_contains("common shop practice");
    replace_text(&mut h, "trials", "300");
    replace_text(&mut h, "seed", "9");
    h.get_by_label("normal (σ = a/3, truncated at ±a)").click();
    h.run();
    h.get_by_label("refocus each trial").click();
    h.run();
    h.get_by_label("Run Monte Carlo").click();
    until_done(&mut h);
    let (_, shown) = h.state().tolerance.result.clone().expect("the Monte Carlo finished");
    let (run, perturber) = ToleranceRun::of(&h.state().evaluation).unwrap();
    let options = MonteCarloOptions { trials: 300, seed: 9, distribution: Distribution::NORMAL, refocus: true };
    let expected = monte_carlo(&perturber, &run.limits, &options, &Progress::default()).unwrap();
    assert_eq!(shown, expected);
    let _ = h.get_by_label_contains("RMS spot µm (50/90/98 %)");
    assert!(h.state().status.contains("300 trials done"), "{}", h.state().status);
}

/// A long run shows its progress and Cancel; Cancel stops it and says so; a bad trial count is refused
/// in words.
#[test]
fn a_long_monte_carlo_shows_progress_and_cancels() {
    let mut h = harness(Workbench::demo("camera-meniscus"));
    open_window(&mut h);
    replace_text(&mut h, "trials", "1000000");
    h.get_by_label("Run Monte Carlo").click();
    h.step();
    h.step();
    assert!(h.state().tolerance.running());
    assert!(h.state().tolerance.fraction().is_some());
    h.get_by_label("Cancel").click();
    until_done(&mut h);
    assert!(h.state().tolerance.result.is_none());
    assert!(h.state().status.contains("cancelled"), "{}", h.state().status);
    replace_text(&mut h, "trials", "lots");
    h.get_by_label("Run Monte Carlo").click();
    h.run();
    let _ = h.get_by_label_contains("must be a whole number");
}

/// View, Lengths in inches switches the ruler and the mount sheet to inches (the relay's 100 mm spacing
/// reads 3.937 in: 25.4 mm each) and leaves the bench in mm.
#[test]
fn the_inch_option_shows_inches_and_keeps_millimetres() {
    let mut h = harness(Workbench::demo("unit-relay"));
    let before = h.state().bench.clone();
    h.get_by_label("View").click();
    h.run();
    h.get_by_label("Lengths in inches (ruler and mount sheet; files stay in mm)").click();
    h.run();
    assert!(h.state().inch && h.state().mount.inch);
    h.get_by_label("View").click();
    h.run();
    h.get_by_label("Mount sheet (for the machine shop)").click();
    h.run();
    let _ = h.get_by_label_contains("3.937");
    assert_eq!(h.state().bench, before, "display only: the bench stays in mm");
}
