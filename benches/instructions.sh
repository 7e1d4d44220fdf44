#!/usr/bin/env bash
# Instructions the simulation loop executes a run and a switching cycle,
# for the two configurations `benches/simulator.rs` times: counted by
# valgrind's callgrind (Debian's `valgrind`) on `examples/repeat_runs.rs`,
# the loop alone (`run_firmware_with`). Unlike wall time, the count does
# not swing with the machine's load, so it compares across days and
# machines of one architecture, and is the same on every invocation.
# Printed, never checked: a figure to watch, as the README's Performance
# section says.
#
#   bash benches/instructions.sh
set -euo pipefail
cd "$(dirname "$0")/.."

command -v valgrind >/dev/null ||
    { echo "valgrind not found (Debian: apt-get install valgrind)" >&2; exit 1; }
cargo build -q --release --example repeat_runs
bin=${CARGO_TARGET_DIR:-target}/release/examples/repeat_runs

# `count SCENARIO RUNS`: "<instructions> <switching cycles>" over RUNS runs.
count() {
    local out
    out=$(valgrind --tool=callgrind --callgrind-out-file=/dev/null \
        --toggle-collect='*run_firmware_with*' "$bin" "$1" "$2" 2>&1)
    local instructions cycles
    instructions=$(sed -n 's/.*Collected : \([0-9]*\).*/\1/p' <<<"$out")
    cycles=$(sed -n 's/^[0-9]* runs, \([0-9]*\) switching cycles$/\1/p' <<<"$out")
    [ -n "$instructions" ] && [ -n "$cycles" ] ||
        { printf 'could not read the counts of %s:\n%s\n' "$1" "$out" >&2; exit 1; }
    echo "$instructions $cycles"
}

# The first run of a process also reads the committed handler cycle counts
# once: a run's count is the difference between three runs and one, halved.
printf '%-26s %14s %14s %10s %12s\n' scenario "first run" "a run after" cycles "per cycle"
for case in "-|default scenario" "tests/fixtures/sampled-1mhz.toml|sampled fixture"; do
    scenario=${case%%|*}
    read -r one cycles < <(count "$scenario" 1)
    read -r three _ < <(count "$scenario" 3)
    run=$(((three - one) / 2))
    printf '%-26s %14d %14d %10d %12d\n' "${case#*|}" "$one" "$run" "$cycles" $((run / cycles))
done
