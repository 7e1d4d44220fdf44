#!/usr/bin/env bash
# Build ripplectl's firmware stack for Cortex-M0 (thumbv6m, QEMU microbit),
# Cortex-M4 (thumbv7em, QEMU mps2-an386) and RV32IMC (riscv32imc, QEMU
# virt), replay the host's bit-exact vectors (fast and slow path), count
# instructions per call, check every run-time entry point links with
# panic-never, and measure the size probes. Then the C interface (ffi/) on
# the Cortex-M4: the static library linked with arm-none-eabi-gcc into C
# images (c/), the vectors replayed through it, a C firmware measured. One
# line per measurement:
#   vectors core=<m0|m4|rv32|m4-c> match=<true|false> count=<n>
#   insns core=<m0|m4|rv32> op=<name> n=<count>
#   flash core=<m0|m4|rv32> part=<name> features=<all-parts|none> bytes=<n>
#   ram core=<m0|m4|rv32> part=<name> features=<all-parts|none> bytes=<n>
#   float_symbols core=<m0|m4|rv32> part=<name> features=<all-parts|none> n=<count>
#   stack core=m4-c op=<init|calls> bytes=<n>
# Writes counts.csv (every insns line of every core). Exits non-zero on a
# mismatch, a budget overrun, a reachable panic, a footprint over its
# ceiling or the Cortex-M0 stack's targets, or a float routine linked; the README's tables go to
# stderr either way. `features=` says which of the crate's optional parts
# the image was built with: `all-parts` (every one: the vectors, counts and
# every probe but one), or `none` (the `stack` probe of a hysteretic
# firmware built without any, `size_stack_minimal`: law and guard,
# supervisor, estimator, driver).
set -euo pipefail
cd "$(dirname "$0")"
export CARGO_TERM_COLOR=never

# The Rust toolchain's own LLVM tools (`rustup component add llvm-tools`).
tools=$(dirname "$(ls "$(rustc --print sysroot)"/lib/rustlib/*/bin/llvm-size | head -n 1)")
llvm_size=$tools/llvm-size
llvm_nm=$tools/llvm-nm

# Each core's QEMU board (Debian's qemu-system-arm and qemu-system-misc).
# `-bios none`: the RV32 image starts at the reset address itself.
declare -A qemu=(
    [m0]="qemu-system-arm -machine microbit -cpu cortex-m0"
    [m4]="qemu-system-arm -machine mps2-an386 -cpu cortex-m4"
    [rv32]="qemu-system-riscv32 -machine virt -bios none"
)
run_qemu() { # core elf
    # shellcheck disable=SC2086 # the board's words
    timeout 300 ${qemu[$1]} -icount shift=0 -nographic \
        -semihosting-config enable=on,target=native -kernel "$2"
}

# Soft-float and double-precision helpers, by symbol name (demangled):
# the ARM EABI's (__aeabi_dadd, __aeabi_fmul, __aeabi_i2d, __aeabi_cdcmple,
# ...), the GNU names (__adddf3, __extendsfdf2, __fixdfsi, __floatsidf,
# __ltsf2, __powidf2, ...), compiler_builtins' float module, libm's
# functions in Rust and C spelling.
float_re='^(__aeabi_(d|f|c[df]r?cmp|u?i2[df]|u?l2[df])|__(add|sub|mul|div|neg|extend|trunc|fix|float|eq|ne|lt|le|gt|ge|unord|cmp|pow)[a-z0-9]*[sdh]f[a-z0-9]*$|libm::|compiler_builtins::float::|(round|floor|ceil|trunc|sqrt|exp2?|log(2|10)?|pow|sin|cos|tan|fabs|fmod|fmin|fmax|fma)f?$)'

# Flash: the sections the image stores (vector table, code, constants, the
# initial values of .data; on RV32 also riscv-rt's `.init.rust` and the
# unwind tables of its start-up assembly, `.eh_frame`). RAM: the static
# state (.data, .bss, .uninit); the call stack, which both runtimes place
# at the top of RAM (riscv-rt as a NOLOAD `.stack` spanning the free RAM),
# is not included; nor are the board's stand-in registers, which sit
# outside the RAM region as a real part's peripherals do (build.rs,
# src/board.rs).
footprint() { # core part features elf
    local flash ram floats
    read -r flash ram < <("$llvm_size" -A "$4" | awk '
        /^\.(vector_table|text|init\.rust|rodata|eh_frame|data) / { f += $2 }
        /^\.(data|bss|uninit) / { r += $2 }
        END { print f + 0, r + 0 }')
    floats=$("$llvm_nm" -C -j --defined-only "$4" | sort -u | grep -E "$float_re" || true)
    if [ -n "$floats" ]; then
        echo "float routines in core=$1 part=$2 features=$3:" $floats >&2
    fi
    echo "flash core=$1 part=$2 features=$3 bytes=$flash"
    echo "ram core=$1 part=$2 features=$3 bytes=$ram"
    echo "float_symbols core=$1 part=$2 features=$3 n=$(printf '%s' "$floats" | grep -c . || true)"
}

cargo run -q --release --features host --bin gen -- vectors.bin >&2

out=$(mktemp)
trap 'rm -f "$out"' EXIT
status=0
parts="base law_guard estimator supervisor slow_path driver stack"
cores="m0 m4 rv32"
# The firmware example wires its interrupts the Cortex-M way (NVIC numbers,
# SysTick); on RV32 the `stack` probe measures the same `Handlers`.
for spec in "m0 thumbv6m-none-eabi --example firmware" "m4 thumbv7em-none-eabihf --example firmware" \
    "rv32 riscv32imc-unknown-none-elf"; do
    read -r core target example <<<"$spec"
    # shellcheck disable=SC2086 # `--example firmware` or nothing
    cargo build -q --release --features target --target "$target" --bins $example >&2
    dir="target/$target/release"
    run_qemu "$core" "$dir/vectors" | tee -a "$out" || status=1
    run_qemu "$core" "$dir/insns" | tee -a "$out" || status=1
    for part in $parts; do
        footprint "$core" "$part" all-parts "$dir/size_$part" | tee -a "$out"
    done
    [ -z "$example" ] || footprint "$core" firmware all-parts "$dir/examples/firmware" | tee -a "$out"
    # The stack without any optional part: the crate built again with none
    # of its part features (about 30 s per core the first time).
    cargo build -q --release --features minimal --target "$target" --bin size_stack_minimal >&2
    footprint "$core" stack none "$dir/size_stack_minimal" | tee -a "$out"
done

# The C interface: the library (the workspace's `firmware` profile: release,
# LTO, abort on panic) and the C images, built with Debian's
# gcc-arm-none-eabi for the Cortex-M4F's hard-float ABI, without a C
# library (semihosting and start-up are in c/).
c_out=$PWD/target/c
mkdir -p "$c_out"
lib=$(cargo build -q -p ripplectl-ffi --profile firmware --target thumbv7em-none-eabihf \
    --manifest-path ../../Cargo.toml --message-format=json |
    sed -n 's/.*"filenames":\["\([^"]*libripplectl_ffi\.a\)"\].*/\1/p')
[ -f "$lib" ] || { echo "the C interface's static library was not built" >&2; exit 1; }
c_flags=(-mcpu=cortex-m4 -mthumb -mfloat-abi=hard -mfpu=fpv4-sp-d16 -O2 -std=c11
    -ffreestanding -ffunction-sections -fdata-sections -Wall -Wextra -Werror -I../../ffi/include)
link_flags=(-nostdlib -nostartfiles -Wl,--gc-sections -Wl,-z,noexecstack -T c/link.ld)
c_objects=()
for src in firmware demo_board startup; do
    arm-none-eabi-gcc "${c_flags[@]}" -c "c/$src.c" -o "$c_out/$src.o"
    c_objects+=("$c_out/$src.o")
done
arm-none-eabi-gcc "${c_flags[@]}" -DVECTORS_BIN='"vectors.bin"' c/replay.c c/demo_board.c \
    c/startup.c c/semihosting.c c/vectors.S "${link_flags[@]}" "$lib" -lgcc -o "$c_out/replay"
run_qemu m4 "$c_out/replay" | tee -a "$out" || status=1
# The C firmware (c/firmware.c), and the same without ripplectl_init (its
# start-up configuration: SI units converted at run time, in floating
# point), which leaves what the entry points, telemetry and fault log cost.
arm-none-eabi-gcc "${c_objects[@]}" "${link_flags[@]}" "$lib" -lgcc -o "$c_out/firmware"
arm-none-eabi-gcc "${c_flags[@]}" -c c/without_init.c -o "$c_out/without_init.o"
arm-none-eabi-gcc "${c_objects[@]}" "$c_out/without_init.o" "${link_flags[@]}" \
    -Wl,--wrap=ripplectl_init "$lib" -lgcc -o "$c_out/runtime"
footprint m4 c_firmware all-parts "$c_out/firmware" | tee -a "$out"
footprint m4 c_runtime all-parts "$c_out/runtime" | tee -a "$out"
# The library's share of the C firmware's flash: the image less the C
# objects' own code, constants and initial data.
c_own=$("$llvm_size" -A "${c_objects[@]}" | awk '/^\.(vector_table|text|rodata|data)(\.| )/ { n += $2 } END { print n + 0 }')
c_flash=$(sed -n 's/^flash core=m4 part=c_firmware features=all-parts bytes=\([0-9]*\)$/\1/p' "$out")
echo "flash core=m4 part=c_library features=all-parts bytes=$((c_flash - c_own))" | tee -a "$out"
# No panic is reachable through the C interface, start-up included: a
# panic path would link core::panicking (the library's handler only spins).
for image in replay firmware runtime; do
    if "$llvm_nm" -C "$c_out/$image" | grep -q 'core::panicking'; then
        echo "a panic is reachable in the C image $image" >&2
        status=1
    fi
done

for core in $cores; do
    grep -q "vectors core=$core match=true" "$out" || { echo "$core vectors did not match" >&2; status=1; }
done
grep -q "vectors core=m4-c match=true" "$out" || { echo "m4 vectors through C did not match" >&2; status=1; }

# Budgets (instructions per call) on the Cortex-M4; the Cortex-M0 and RV32
# get twice as many. Keys are the `op=` names.
declare -A budget=([hysteretic_guard]=40 [on_time_guard]=60 [estimator_turn_off]=80 [estimator_turn_on]=80 [estimator_sample]=80 [supervisor]=40)
while read -r _ core op n; do
    op=${op#op=}; n=${n#n=}; core=${core#core=}
    limit=${budget[$op]:-}
    [ -n "$limit" ] || continue
    [ "$core" = m4 ] || limit=$((2 * limit))
    if [ "$n" -gt "$limit" ]; then
        echo "budget overrun: core=$core op=$op n=$n > $limit" >&2
        status=1
    fi
done < <(grep '^insns ' "$out")

# Footprint ceilings, bytes, per kind, core, part and feature set: each
# figure's value when it was last reviewed plus 10 %, or the earlier ceiling
# where that was lower (a regression guard, not a target; a review never
# loosens one; a new part's code may raise one, said where it does: the
# slow path's on M0 and M4, from 10 459 and 9 606, for the light-load
# start's sizing, 436 and 392 bytes). No part may link a float
# routine, but for the C firmware, whose configuration runs at start-up
# (its runtime without it links none).
declare -A ceiling=(
    [flash/m0/base/all-parts]=379 [ram/m0/base/all-parts]=0 [flash/m0/law_guard/all-parts]=5087
    [ram/m0/law_guard/all-parts]=221 [flash/m0/estimator/all-parts]=4303 [ram/m0/estimator/all-parts]=159
    [flash/m0/supervisor/all-parts]=8066 [ram/m0/supervisor/all-parts]=555 [flash/m0/slow_path/all-parts]=10850
    [ram/m0/slow_path/all-parts]=898 [flash/m0/driver/all-parts]=572 [ram/m0/driver/all-parts]=18
    [flash/m0/stack/all-parts]=14573 [ram/m0/stack/all-parts]=916 [flash/m0/firmware/all-parts]=14450
    [ram/m0/firmware/all-parts]=920 [flash/m0/stack/none]=8932 [ram/m0/stack/none]=564
    [flash/m4/base/all-parts]=1329 [ram/m4/base/all-parts]=0 [flash/m4/law_guard/all-parts]=6090
    [ram/m4/law_guard/all-parts]=221 [flash/m4/estimator/all-parts]=5078 [ram/m4/estimator/all-parts]=159
    [flash/m4/supervisor/all-parts]=9271 [ram/m4/supervisor/all-parts]=555 [flash/m4/slow_path/all-parts]=10000
    [ram/m4/slow_path/all-parts]=898 [flash/m4/driver/all-parts]=1501 [ram/m4/driver/all-parts]=18
    [flash/m4/stack/all-parts]=14406 [ram/m4/stack/all-parts]=916 [flash/m4/firmware/all-parts]=15739
    [ram/m4/firmware/all-parts]=920 [flash/m4/stack/none]=10222 [ram/m4/stack/none]=564
    [flash/rv32/base/all-parts]=597 [ram/rv32/base/all-parts]=0 [flash/rv32/law_guard/all-parts]=4090
    [ram/rv32/law_guard/all-parts]=221 [flash/rv32/estimator/all-parts]=5405 [ram/rv32/estimator/all-parts]=159
    [flash/rv32/supervisor/all-parts]=9159 [ram/rv32/supervisor/all-parts]=555 [flash/rv32/slow_path/all-parts]=11430
    [ram/rv32/slow_path/all-parts]=898 [flash/rv32/driver/all-parts]=852 [ram/rv32/driver/all-parts]=18
    [flash/rv32/stack/all-parts]=17532 [ram/rv32/stack/all-parts]=916 [flash/rv32/stack/none]=11672
    [ram/rv32/stack/none]=564 [flash/m4/c_firmware/all-parts]=75313 [ram/m4/c_firmware/all-parts]=1188
    [flash/m4/c_runtime/all-parts]=17226 [ram/m4/c_runtime/all-parts]=1188 [flash/m4/c_library/all-parts]=74142
)
while read -r kind core part features n; do
    core=${core#core=}; part=${part#part=}; features=${features#features=}; n=${n#*=}
    what="core=$core part=$part features=$features"
    if [ "$kind" = float_symbols ]; then
        [ "$n" -eq 0 ] || [ "$part" = c_firmware ] ||
            { echo "float routines linked: $what n=$n" >&2; status=1; }
        continue
    fi
    limit=${ceiling[$kind/$core/$part/$features]:-}
    [ -n "$limit" ] || { echo "no ceiling for $kind $what" >&2; status=1; continue; }
    if [ "$n" -gt "$limit" ]; then
        echo "footprint over its ceiling: $kind $what bytes=$n > $limit" >&2
        status=1
    fi
done < <(grep -E '^(flash|ram|float_symbols) ' "$out")

# The footprint targets of the whole stack on the Cortex-M0, for a
# hysteretic firmware built without optional parts: 8 KiB of flash, 512 B
# of RAM. Enforced: a build over either fails.
for kind in flash ram; do
    target=8192; [ "$kind" = ram ] && target=512
    n=$(sed -n "s/^$kind core=m0 part=stack features=none bytes=\([0-9]*\)$/\1/p" "$out")
    if [ -z "$n" ] || [ "$n" -gt "$target" ]; then
        echo "target not met: $kind core=m0 part=stack features=none bytes=${n:-none} > $target" >&2
        status=1
    fi
done

# counts.csv: every count of every core, for the simulator (see
# DEVELOPERS.md for the format).
{
    echo "core,op,n"
    sed -n 's/^insns core=\([a-z0-9]*\) op=\([a-z0-9_]*\) n=\([0-9]*\)$/\1,\2,\3/p' "$out" | LC_ALL=C sort
} >counts.csv

# The README's tables, on stderr.
n_of() { sed -n "s/^insns core=$1 op=$2 n=\([0-9]*\)$/\1/p" "$out"; }
fig() { # kind core part [features]
    sed -n "s/^$1 core=$2 part=$3 features=${4:-all-parts} [a-z]*=\([0-9]*\)$/\1/p" "$out"
}
{
    echo "| call | Cortex-M0 | Cortex-M4 | RV32IMC | budget M4 (M0, RV32) |"
    echo "|---|---|---|---|---|"
    while IFS='|' read -r op label; do
        limit=${budget[$op]:-}
        b="-"; [ -n "$limit" ] && b="$limit ($((2 * limit)))"
        echo "| $label | $(n_of m0 "$op") | $(n_of m4 "$op") | $(n_of rv32 "$op") | $b |"
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
handler_hyst_conversion|handler: conversion done, hysteretic stack (mean)
handler_hyst_conversion_max|handler: conversion done, hysteretic stack (worst seen)
handler_hyst_compare|handler: compare, hysteretic stack (at the armed deadline)
handler_hyst_housekeeping|handler: housekeeping, hysteretic stack
handler_lock_conversion|handler: conversion done, locked and dithered hysteretic stack (mean)
handler_lock_conversion_max|handler: conversion done, locked and dithered hysteretic stack (worst seen)
handler_lock_housekeeping|handler: housekeeping, locked and dithered hysteretic stack (lock, dither)
handler_cot_conversion|handler: conversion done, on-time stack (mean)
handler_cot_conversion_max|handler: conversion done, on-time stack (worst seen)
handler_cot_compare|handler: compare (on-time ended), on-time stack
handler_cot_housekeeping|handler: housekeeping, on-time stack
handler_edge_conversion|handler: conversion done (protections only), hysteretic stack on comparator edges
handler_edge_comparator|handler: comparator edge, hysteretic stack on comparator edges (mean)
handler_edge_comparator_max|handler: comparator edge, hysteretic stack on comparator edges (worst seen)
handler_edge_compare|handler: compare, hysteretic stack on comparator edges (at the armed deadline)
handler_edge_housekeeping|handler: housekeeping, hysteretic stack on comparator edges
handler_cotedge_conversion|handler: conversion done (protections only), on-time stack on comparator edges
handler_cotedge_comparator|handler: comparator edge, on-time stack on comparator edges (mean)
handler_cotedge_comparator_max|handler: comparator edge, on-time stack on comparator edges (worst seen)
handler_cotedge_compare|handler: compare (on-time ended), on-time stack on comparator edges
handler_cotedge_housekeeping|handler: housekeeping, on-time stack on comparator edges
handler_retrofit_comparator|handler: comparator edge, analog retrofit (mean)
handler_retrofit_comparator_max|handler: comparator edge, analog retrofit (worst seen)
handler_retrofit_start_conversion|handler: conversion done, analog retrofit in its soft-start (pulse bound, mean)
handler_retrofit_start_compare|handler: compare, analog retrofit in its soft-start (a bounded pulse ends, mean)
handler_retrofit_start_housekeeping|handler: housekeeping, analog retrofit in its soft-start
ROWS
    echo
    printf '| part | features |'
    for core in $cores; do printf ' flash %s | RAM %s | float routines %s |' "${core^^}" "${core^^}" "${core^^}"; done
    printf '\n|---|---|'
    for core in $cores; do printf -- '---|---|---|'; done
    echo
    for row in $(printf '%s/all-parts ' $parts) stack/none firmware/all-parts; do
        part=${row%/*}; features=${row#*/}
        printf '| %s | %s |' "$part" "$features"
        for core in $cores; do
            for kind in flash ram float_symbols; do
                printf ' %s |' "$(fig "$kind" "$core" "$part" "$features" | grep . || echo -)"
            done
        done
        echo
    done
    # The C images run on the Cortex-M4 only: its columns, dashes elsewhere.
    c_row() { # part flash ram floats
        printf '| %s | all-parts |' "$1"
        for core in $cores; do
            if [ "$core" = m4 ]; then printf ' %s | %s | %s |' "$2" "$3" "$4"; else printf ' - | - | - |'; fi
        done
        echo
    }
    for part in c_firmware c_runtime; do
        c_row "$part" "$(fig flash m4 "$part")" "$(fig ram m4 "$part")" "$(fig float_symbols m4 "$part")"
    done
    c_row c_library "$(fig flash m4 c_library)" - -
} >&2
exit $status
