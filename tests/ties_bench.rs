//! Entry point for the on-demand benchmark of the exact rank-test
//! distributions with ties in tests/bench/; its only test is ignored, so
//! `cargo test` compiles it but never runs it.

#[path = "bench/ties_bench.rs"]
mod ties_bench;
