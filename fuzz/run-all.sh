#!/usr/bin/env bash
# Runs every fuzz target for N seconds each (default 60), one after another,
# single process each (the machine is shared), then prints each run's summary.
# Usage: fuzz/run-all.sh [seconds]      (from anywhere; needs cargo-fuzz)
set -euo pipefail
secs="${1:-60}"
cd "$(dirname "$0")"
mkdir -p logs
status=0
for target in parse_formula differentiate fit_problem read_table; do
    echo "== $target: ${secs}s"
    # Only the stable toolchain is installed: RUSTC_BOOTSTRAP lets it take the
    # nightly-only sanitizer flags cargo-fuzz passes.
    if RUSTC_BOOTSTRAP=1 cargo fuzz run "$target" -- \
        -max_total_time="$secs" -timeout=10 -print_final_stats=1 \
        > "logs/$target.log" 2>&1; then
        grep -E "^Done|stat::number_of_executed_units|stat::peak_rss_mb" "logs/$target.log" || true
    else
        status=1
        echo "!! $target failed: see fuzz/logs/$target.log and fuzz/artifacts/$target/"
        grep -E "panicked|ERROR" -A3 "logs/$target.log" | head -20 || true
    fi
done
exit "$status"
