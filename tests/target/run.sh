#!/usr/bin/env bash
# Build ripplectl's firmware stack for Cortex-M0 (thumbv6m, QEMU microbit)
# and Cortex-M4 (thumbv7em, QEMU mps2-an386), replay the host's bit-exact
# vectors (fast and slow path), count instructions per call, and check every
# run-time entry point links with panic-never. One line per measurement:
#   insns core=<m0|m4> op=<name> n=<count>
#   vectors core=<m0|m4> match=<true|false> count=<n>
# Exits non-zero on a mismatch, a budget overrun or a reachable panic; the
# table of counts goes to stderr either way.
set -euo pipefail
cd "$(dirname "$0")"
export CARGO_TERM_COLOR=never

run_qemu() { # machine cpu elf
    timeout 300 qemu-system-arm -machine "$1" -cpu "$2" -icount shift=0 -nographic \
        -semihosting-config enable=on,target=native -kernel "$3"
}

cargo run -q --release --features host --bin gen -- vectors.bin >&2

out=$(mktemp)
trap 'rm -f "$out"' EXIT
status=0
for spec in "m0 thumbv6m-none-eabi microbit cortex-m0" "m4 thumbv7em-none-eabihf mps2-an386 cortex-m4"; do
    read -r core target machine cpu <<<"$spec"
    cargo build -q --release --features target --target "$target" --bin vectors --bin insns --bin nopanic --example firmware >&2
    dir="target/$target/release"
    run_qemu "$machine" "$cpu" "$dir/vectors" | tee -a "$out" || status=1
    run_qemu "$machine" "$cpu" "$dir/insns" | tee -a "$out" || status=1
done

# Budgets (instructions per call) on the Cortex-M4; the Cortex-M0 gets twice
# as many. Keys are the `op=` names.
declare -A budget=([hysteretic_guard]=40 [on_time_guard]=60 [estimator_turn_off]=80 [estimator_turn_on]=80 [estimator_sample]=80 [supervisor]=40)
grep -q "vectors core=m0 match=true" "$out" || { echo "m0 vectors did not match" >&2; status=1; }
grep -q "vectors core=m4 match=true" "$out" || { echo "m4 vectors did not match" >&2; status=1; }
while read -r _ core op n; do
    op=${op#op=}; n=${n#n=}; core=${core#core=}
    limit=${budget[$op]:-}
    [ -n "$limit" ] || continue
    [ "$core" = m0 ] && limit=$((2 * limit))
    if [ "$n" -gt "$limit" ]; then
        echo "budget overrun: core=$core op=$op n=$n > $limit" >&2
        status=1
    fi
done < <(grep '^insns ' "$out")

# The README's table, on stderr: instructions per call, both cores.
n_of() { sed -n "s/^insns core=$1 op=$2 n=\([0-9]*\)$/\1/p" "$out"; }
{
    echo "| call | Cortex-M0 | Cortex-M4 | budget M4 (M0) |"
    echo "|---|---|---|---|"
    while IFS='|' read -r op label; do
        limit=${budget[$op]:-}
        b="-"; [ -n "$limit" ] && b="$limit ($((2 * limit)))"
        echo "| $label | $(n_of m0 "$op") | $(n_of m4 "$op") | $b |"
    done <<'ROWS'
hysteretic_guard|hysteretic law + guard, per sample
on_time_guard|on-time law + guard, per sample
passthrough_guard|comparator pass-through + guard, per edge
estimator_turn_off|current estimator, per turn-off
estimator_turn_on|current estimator, per turn-on (completes a cycle)
estimator_sample|current estimator, per output reading
supervisor|supervisor's own share, per sample
supervisor_stack|whole stack (supervisor, estimator, law, guard), per sample, regulating
supervisor_stack_limited|whole stack, per sample, every cycle ended by the current limit
housekeeping|slow path, per housekeeping tick (on-time stack: feed-forward, trim, DC correction, observer, losses)
hysteretic_f64|f64 hysteretic oracle, per sample (code to volts included)
guard_f64|f64 guard oracle, per call (ticks to seconds included)
ROWS
} >&2
exit $status
