#!/bin/sh
# Runs every fuzz target of attest for a fixed time, one after another.
#
#   tests/fuzz/run.sh [SECONDS]   (default 600 per target)
#
# Needs cargo-fuzz (`cargo install cargo-fuzz`). The toolchain is stable,
# and libFuzzer's coverage instrumentation needs unstable rustc flags, so
# the script sets RUSTC_BOOTSTRAP=1 for the fuzz build only. The address
# sanitizer is off (`-s none`): attest is safe Rust, so what we hunt is
# panics, and without it the targets run several times faster.
#
# libFuzzer grows its corpus in tests/fuzz/grown/<target>/ (not committed),
# seeded from the committed tests/fuzz/corpus/<target>/. A crash is saved
# under tests/fuzz/artifacts/<target>/; turn it into a regression test in
# tests/bad_inputs/ or a unit test before fixing it.
set -eu
seconds="${1:-600}"
here="$(cd "$(dirname "$0")" && pwd)"
root="$(cd "$here/../.." && pwd)"
cd "$root"
export RUSTC_BOOTSTRAP=1
for target in plan data stats; do
    mkdir -p "tests/fuzz/grown/$target"
    echo "== $target: ${seconds}s"
    cargo fuzz run --fuzz-dir tests/fuzz -s none "$target" \
        "tests/fuzz/grown/$target" "tests/fuzz/corpus/$target" \
        -- -max_total_time="$seconds" -max_len=4096 -timeout=10 -print_final_stats=1
done
