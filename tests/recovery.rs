//! End to end, the real program in a real window under Xvfb: an edit is made (by the hidden `--script`,
//! once the window is up), the workbench autosaves it, the very process that wrote the copy is killed with
//! SIGKILL, and the next start restores the edit from disk and saves it elsewhere.
//!
//! Needs `xvfb-run`; without it the test says so and passes, unless `LUMENRAIL_REQUIRE_DISPLAY` is set
//! (as `.ci/recovery-check` does), when it fails.
#![allow(clippy::float_cmp)] // A position typed into the script must come back bit for bit.

use std::path::Path;
use std::process::{Child, Command, Stdio};
use std::time::{Duration, Instant};

/// The autosaved note of the run, when one is there: its path and the pid it names.
fn note(recovery: &Path) -> Option<(std::path::PathBuf, u32)> {
    std::fs::read_dir(recovery).ok()?.filter_map(Result::ok).find_map(|e| {
        let name = e.file_name().to_string_lossy().into_owned();
        let pid = name.strip_prefix("unsaved-")?.strip_suffix(".json")?.parse().ok()?;
        Some((e.path(), pid))
    })
}

fn lumenrail(dir: &Path, args: &[&str]) -> Child {
    let xdg = dir.join("xdg");
    std::fs::create_dir_all(&xdg).unwrap();
    #[cfg(unix)]
    std::fs::set_permissions(&xdg, std::os::unix::fs::PermissionsExt::from_mode(0o700)).unwrap();
    Command::new("xvfb-run")
        .args(["-a", "-s", "-screen 0 1600x1000x24", env!("CARGO_BIN_EXE_lumenrail"), "--window", "1280x800"])
        .args(args)
        .env("LUMENRAIL_DATA_DIR", dir.join("data"))
        .env("XDG_DATA_HOME", dir.join("share"))
        .env("XDG_RUNTIME_DIR", &xdg)
        .stdin(Stdio::null())
        .spawn()
        .expect("xvfb-run starts")
}

fn wait(child: &mut Child, limit: Duration) -> Option<std::process::ExitStatus> {
    let start = Instant::now();
    while start.elapsed() < limit {
        if let Some(status) = child.try_wait().unwrap() {
            return Some(status);
        }
        std::thread::sleep(Duration::from_millis(100));
    }
    let _ = child.kill();
    let _ = child.wait();
    None
}

#[test]
fn an_edit_survives_sigkill_and_is_restored_at_the_next_start() {
    let have_xvfb = Command::new("xvfb-run").arg("--help").stdout(Stdio::null()).stderr(Stdio::null()).status().is_ok();
    if !have_xvfb {
        assert!(
            std::env::var_os("LUMENRAIL_REQUIRE_DISPLAY").is_none(),
            "LUMENRAIL_REQUIRE_DISPLAY is set but xvfb-run is missing"
        );
        eprintln!("skipped: xvfb-run is not installed, so no window can be opened (apt-get install xvfb xauth)");
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    let bench = dir.path().join("projector.bench.ron");
    let text = lumenrail_bench::demos::find("one-lens-screen").unwrap().text;
    std::fs::write(&bench, text).unwrap();
    let recovery = dir.path().join("data").join("recovery");
    let bench_arg = bench.to_str().unwrap();

    // First run: the lens is moved, and the workbench autosaves once idle.
    let mut first = lumenrail(dir.path(), &["--script", "move 0 323.5", bench_arg]);
    let start = Instant::now();
    let (note_path, pid) = loop {
        if let Some(found) = note(&recovery) {
            break found;
        }
        if let Some(status) = first.try_wait().unwrap() {
            panic!("the first run ended ({status}) before it autosaved");
        }
        assert!(start.elapsed() < Duration::from_secs(90), "no autosave within 90 s");
        std::thread::sleep(Duration::from_millis(100));
    };
    // The copy is complete once its note is there (the bench is written first, both atomically).
    let note_text = std::fs::read_to_string(&note_path).unwrap();
    assert!(note_text.contains("projector.bench.ron"), "{note_text}");
    // SIGKILL the process that wrote the copy: the pid its note names, the real workbench.
    let killed = Command::new("kill").args(["-KILL", &pid.to_string()]).status().unwrap();
    assert!(killed.success(), "kill -KILL {pid}");
    let status = wait(&mut first, Duration::from_secs(30)).expect("xvfb-run ends once its program is killed");
    assert!(!status.success(), "the killed run reported success");
    assert_eq!(std::fs::read_to_string(&bench).unwrap(), text, "the user's file was never written");
    assert!(note(&recovery).is_some(), "the copy outlives the killed process");

    // Second run: the copy is offered, restored, saved elsewhere, and the window quits.
    let out = dir.path().join("restored.bench.ron");
    let script = format!("restore; save-as {}; quit", out.display());
    let mut second = lumenrail(dir.path(), &["--script", &script, bench_arg]);
    let status = wait(&mut second, Duration::from_secs(90)).expect("the second run quits");
    assert!(status.success(), "the second run failed: {status}");
    let restored = lumenrail_bench::file::load(&out).unwrap().bench;
    assert_eq!(restored.parts[0].name, "Projection lens");
    assert_eq!(restored.parts[0].at_mm, 323.5);
    assert_eq!(std::fs::read_to_string(&bench).unwrap(), text, "the user's file was never written");
    assert!(note(&recovery).is_none(), "a copy is left after the user chose and saved");
}
