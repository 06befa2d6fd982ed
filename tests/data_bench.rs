//! Entry point for the on-demand data benchmark in tests/bench/; its only
//! test is ignored, so `cargo test` compiles it but never runs it.

#[path = "bench/read_bench.rs"]
mod read_bench;
