//! The `lumenrail` command: lay out optical benches and ray-trace them exactly.
fn main() {
    println!("lumenrail {}", env!("CARGO_PKG_VERSION"));
}
