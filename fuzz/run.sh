#!/usr/bin/env bash
# Run each fuzz target for a fixed time and print how many inputs it ran.
#
#   fuzz/run.sh [SECONDS_PER_TARGET] [TARGET...]     (default 240 s; all targets)
#
# Needs cargo-fuzz (`cargo install cargo-fuzz`). Only the stable toolchain
# is installed here, so RUSTC_BOOTSTRAP=1 lets it accept the nightly flags
# cargo-fuzz passes (-Zsanitizer=address and friends).
#
# Seeds come from fuzz/seeds/ (committed; rebuilt by fuzz/make_seeds.py);
# what a run discovers goes to fuzz/corpus/<target>/ (not committed). A
# crash or a slow input (over 10 s) stops the run and leaves the input in
# fuzz/artifacts/<target>/; turn it into a test in
# tests/fuzz_regressions.rs before fixing it.
set -euo pipefail
cd "$(dirname "$0")/.."
secs="${1:-240}"
shift || true
targets=("$@")
if [ ${#targets[@]} -eq 0 ]; then
    targets=(parse eval units cases session network)
fi
export RUSTC_BOOTSTRAP=1
seeds_of() {
    case "$1" in
        units) echo fuzz/seeds/units ;;
        cases) echo fuzz/seeds/cases ;;
        session) echo fuzz/seeds/session ;;
        network) echo fuzz/seeds/network ;;
        *) echo fuzz/seeds/sheets ;;
    esac
}
cargo fuzz build -O
mkdir -p fuzz/logs
for t in "${targets[@]}"; do
    mkdir -p "fuzz/corpus/$t"
    log="fuzz/logs/$t.log"
    echo "== $t: ${secs}s"
    cargo fuzz run -O "$t" "fuzz/corpus/$t" "$(seeds_of "$t")" -- \
        -max_total_time="$secs" -timeout=10 -max_len=4096 -rss_limit_mb=2048 \
        -print_final_stats=1 >"$log" 2>&1 || {
        echo "!! $t stopped with a finding; see $log and fuzz/artifacts/$t/"
        tail -40 "$log"
        exit 1
    }
    runs=$(grep -o 'stat::number_of_executed_units: *[0-9]*' "$log" | grep -o '[0-9]*$' | tail -1)
    cov=$(grep -o 'cov: [0-9]*' "$log" | tail -1)
    echo "   $t ran clean: ${runs:-?} executions, $cov"
done
