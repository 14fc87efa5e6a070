//! Raw bytes as a bench file: the loader must answer with a bench or placed errors, never panic; a bench
//! it accepts goes through everything downstream (`lumenrail_fuzz::check_bench`).
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let Ok(text) = std::str::from_utf8(data) else { return };
    match lumenrail_bench::file::parse("fuzz.bench.ron", text) {
        Ok(loaded) => lumenrail_fuzz::check_bench(&loaded.bench),
        Err(e) => {
            assert!(!e.diagnostics.is_empty());
            for d in &e.diagnostics {
                assert!(d.place.line >= 1 && d.place.col >= 1, "{d}");
            }
        }
    }
});
