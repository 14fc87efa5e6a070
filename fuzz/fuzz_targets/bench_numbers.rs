//! Structured benches (`arbitrary`): every number of the object and of up to six parts chosen by the
//! fuzzer, so the numeric paths are explored past the parser. Benches that validation refuses are fine;
//! a valid one goes through everything downstream.
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|input: lumenrail_fuzz::Input| {
    if let Some(bench) = input.bench() {
        lumenrail_fuzz::check_bench(&bench);
    }
});
