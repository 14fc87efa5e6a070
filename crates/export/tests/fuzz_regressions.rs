//! Every input a fuzz run ever found a fault with, kept in `fuzz/regressions/` and replayed here on every
//! test run, through the same checks the fuzz targets make (see DEVELOPERS.md, Fuzzing); the demos are
//! replayed too, as the fuzzers' seeds.

#[path = "support/fuzz_checks.rs"]
mod fuzz_checks;

fn files(dir: &str) -> Vec<std::path::PathBuf> {
    let root = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("../..").join(dir);
    let mut out: Vec<_> =
        std::fs::read_dir(&root).map_or_else(|_| Vec::new(), |d| d.flatten().map(|e| e.path()).collect());
    out.retain(|p| p.is_file() && p.file_name().is_some_and(|n| n != ".gitkeep"));
    out.sort();
    out
}

#[test]
fn bench_file_findings_and_seeds_stay_fixed() {
    let mut inputs = files("fuzz/regressions/bench_file");
    inputs.extend(files("assets/demos"));
    assert!(inputs.len() >= 14);
    for path in inputs {
        let bytes = std::fs::read(&path).unwrap();
        let Ok(text) = std::str::from_utf8(&bytes) else { continue };
        if let Ok(loaded) = lumenrail_bench::file::parse("replay", text) {
            fuzz_checks::check_bench(&loaded.bench);
        }
    }
}

#[test]
fn drawer_file_findings_and_seeds_stay_fixed() {
    let mut inputs = files("fuzz/regressions/drawer_file");
    inputs.extend(files("assets/drawers"));
    for path in inputs {
        let bytes = std::fs::read(&path).unwrap();
        let Ok(text) = std::str::from_utf8(&bytes) else { continue };
        if let Ok(loaded) = lumenrail_bench::drawer::parse("replay", text) {
            let saved = lumenrail_bench::drawer::to_text(&loaded.drawer);
            assert_eq!(lumenrail_bench::drawer::parse("round trip", &saved).unwrap().drawer, loaded.drawer);
        }
    }
}

/// The structured target's findings, decoded as libFuzzer hands them to it (`arbitrary_take_rest`).
#[test]
fn bench_numbers_findings_stay_fixed() {
    use arbitrary::Arbitrary as _;
    for path in files("fuzz/regressions/bench_numbers") {
        let bytes = std::fs::read(&path).unwrap();
        let Ok(input) = fuzz_checks::Input::arbitrary_take_rest(arbitrary::Unstructured::new(&bytes)) else { continue };
        if let Some(bench) = input.bench() {
            if std::env::var_os("SHOW_BENCH").is_some() {
                eprintln!("{}\n{}", path.display(), lumenrail_bench::file::to_text(&bench));
            }
            fuzz_checks::check_bench(&bench);
        }
    }
}
