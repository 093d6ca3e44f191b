#!/usr/bin/env bash
# Minimise a target's working corpus into the committed one, tests/fuzz/corpus/<target>:
# libFuzzer's merge (what `cargo fuzz cmin` runs), keeping every covered edge but
# not every hit count (-use_counters=0), so the corpus stays a few tens of KB.
# Usage (from the repository's top): tests/fuzz/cmin.sh TARGET
set -euo pipefail
target=$1
bin=tests/fuzz/target/x86_64-unknown-linux-gnu/release/$target
out=tests/fuzz/corpus/$target
rm -rf "$out.new" && mkdir -p "$out.new"
nice -n 19 "$bin" -merge=1 -use_counters=0 -max_len=8192 "$out.new" "tests/fuzz/work/$target" 2>&1 | grep MERGE-OUTER | tail -1
rm -rf "$out" && mv "$out.new" "$out"
echo "$target: $(ls "$out" | wc -l) files, $(du -s --apparent-size "$out" | cut -f1) KB"
