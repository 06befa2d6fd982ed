#!/bin/sh
# Runs the tied exact-distribution benchmark in release mode.
# Usage, from the repository root: sh tests/bench/ties.sh
set -e
cargo test --release --test ties_bench -- --ignored --nocapture
