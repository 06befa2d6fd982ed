#!/bin/sh
# Runs the data-reading benchmark (10 million rows) in release mode.
# Usage, from the repository root: sh tests/bench/run.sh
set -e
cargo test --release --test data_bench -- --ignored --nocapture
