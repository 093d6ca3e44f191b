#!/usr/bin/env bash
# Run one fuzz target for 10^7 executions or 20 minutes, whichever comes first,
# niced, on its working corpus (tests/fuzz/work/<target>, seeded by make_seeds.py
# and the committed corpus). Build first with
#   cargo +nightly fuzz build --fuzz-dir tests/fuzz -s none
# Usage (from the repository's top): tests/fuzz/run.sh TARGET [SECONDS]
set -euo pipefail
target=$1
seconds=${2:-1200}
bin=tests/fuzz/target/x86_64-unknown-linux-gnu/release/$target
mkdir -p "tests/fuzz/work/$target" "tests/fuzz/artifacts/$target"
if [ -d "tests/fuzz/corpus/$target" ]; then
    cp -n tests/fuzz/corpus/"$target"/* "tests/fuzz/work/$target/" 2>/dev/null || true
fi
exec nice -n 19 "$bin" "tests/fuzz/work/$target" \
    -max_len=8192 -timeout=30 -runs=10000000 -max_total_time="$seconds" \
    -print_final_stats=1 -artifact_prefix="tests/fuzz/artifacts/$target/"
