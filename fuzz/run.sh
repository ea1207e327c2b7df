#!/usr/bin/env bash
# Runs one fuzz target for a while and keeps a timestamped log.
# Usage, from the repository root: fuzz/run.sh TARGET [SECONDS] [extra libFuzzer flags]
# The working corpus is fuzz/corpus/TARGET (new inputs go there); the
# committed seeds fuzz/seeds/TARGET are read too. Log: fuzz/logs/TARGET.log
set -euo pipefail
target=$1
secs=${2:-600}
shift $(( $# < 2 ? $# : 2 ))
cd "$(dirname "$0")/.."
mkdir -p "fuzz/corpus/$target" fuzz/logs
dict=()
[ -f "fuzz/dicts/$target.dict" ] && dict=(-dict="fuzz/dicts/$target.dict")
# PREBUILT=1 runs the binary of the last `cargo fuzz build` as it is (while
# others edit the library, `cargo fuzz run` would rebuild it first, minutes
# on a busy machine)
if [ "${PREBUILT:-0}" = 1 ]; then
    mkdir -p "fuzz/artifacts/$target"
    run=(fuzz/target/x86_64-unknown-linux-gnu/release/"$target" -artifact_prefix="fuzz/artifacts/$target/"
        "fuzz/corpus/$target" "fuzz/seeds/$target")
else
    run=(cargo +nightly fuzz run "$target" "fuzz/corpus/$target" "fuzz/seeds/$target" --)
fi
# one rayon thread: the cutter's parallel variants would take a second core
RAYON_NUM_THREADS=1 "${run[@]}" -max_total_time="$secs" -print_final_stats=1 "${dict[@]}" "$@" 2>&1 |
    while IFS= read -r line; do printf '%s %s\n' "$(date +%H:%M:%S)" "$line"; done |
    tee "fuzz/logs/$target.log"
