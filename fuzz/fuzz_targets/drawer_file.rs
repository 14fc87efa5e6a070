//! Raw bytes as a drawer file: placed errors or a drawer that saves and loads back the same.
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let Ok(text) = std::str::from_utf8(data) else { return };
    match lumenrail_bench::drawer::parse("fuzz.drawer.ron", text) {
        Ok(loaded) => {
            let saved = lumenrail_bench::drawer::to_text(&loaded.drawer);
            let back = lumenrail_bench::drawer::parse("round trip", &saved).expect("a saved valid drawer loads");
            assert_eq!(back.drawer, loaded.drawer);
            let wavelength = 587.5618;
            for item in &loaded.drawer.items {
                if let Some(f) = item.focal_mm(wavelength) {
                    assert!(!f.is_nan(), "{}: focal length NaN", item.label);
                }
            }
        }
        Err(e) => assert!(!e.diagnostics.is_empty()),
    }
});
