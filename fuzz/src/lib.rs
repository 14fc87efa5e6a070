//! The fuzz targets' checks, shared with the project's replay of every finding
//! (`crates/export/tests/fuzz_regressions.rs`), so both check the same things.

#[path = "../../crates/export/tests/support/fuzz_checks.rs"]
mod checks;
pub use checks::*;
