/* The host's vectors (tests/target/vectors.bin, format in tests/target/src/
 * lib.rs) replayed through the C interface on the Cortex-M4, every output
 * word compared.
 *
 * Replayed: the records of the two whole stacks, the hysteretic one
 * (operations 6-8) and the on-time one (12-14: the random calls and the
 * closed loop), each through its own ripplectl state configured at run time
 * from demo_board.c, with the one-call-per-interrupt entry points. The other
 * operations exercise parts alone (a law in its guard, the estimator, the
 * configuration's thresholds), which the C interface does not expose; they
 * are skipped, and do not touch the stacks (each record acts on one object).
 *
 * The entry points drive a board, not return a command: the board here
 * records what they did (the pin, the compare), and the words are read
 * back from it:
 *   conversion, timer: [gate | armed << 1, deadline or 0, state, 0]
 *   housekeeping:      [state | stopped << 8, reference, on-time, hash]
 * A stop is the housekeeping call's disarm (a stop turns the gate off
 * without a deadline; nothing else disarms there in a sampled stack). The
 * timer's reading (`now`) is the record's instant, so an edge is timed
 * where the host's stack timed it, and the compare ends pulses in software,
 * so a timer record acts at its own instant as the host's on_timer did.
 *
 * Prints `vectors core=m4-c match=<true|false> count=<records replayed>`,
 * and the call stack the library used: `stack core=m4-c op=<init|calls>
 * bytes=<n>`. */
#include <stddef.h>
#include <stdint.h>

#include "demo_board.h"
#include "ripplectl.h"
#include "semihosting.h"
#include "startup.h"

/* vectors.S */
extern const uint32_t vectors_bin[];

enum { MAGIC = 0x564c5052u, WORDS_IN = 3, WORDS_OUT = 4 };

/* The operations replayed (tests/target/src/lib.rs, module `op`). */
enum {
    OP_STACK_CONVERSION = 6,
    OP_STACK_TIMER = 7,
    OP_STACK_HOUSEKEEPING = 8,
    OP_COT_STACK_CONVERSION = 12,
    OP_COT_STACK_TIMER = 13,
    OP_COT_STACK_HOUSEKEEPING = 14,
};

/* What a stack's board saw. */
struct board {
    bool pin_high;
    bool armed;
    uint32_t deadline;
    uint32_t now;
    uint32_t disarms;
};

static bool set_gate(void *context, bool high)
{
    ((struct board *)context)->pin_high = high;
    return true;
}

static void arm(void *context, uint32_t at, bool ends_pulse)
{
    struct board *b = context;
    (void)ends_pulse;
    b->armed = true;
    b->deadline = at;
}

static void disarm(void *context)
{
    struct board *b = context;
    b->armed = false;
    b->disarms++;
}

static uint32_t now(void *context)
{
    return ((struct board *)context)->now;
}

/* A stack under test: its state, its board. */
struct stack {
    ripplectl state;
    struct board board;
};

static struct stack hysteretic, on_time;

static bool start(struct stack *s, const ripplectl_config *config)
{
    const ripplectl_board board = {
        .context = &s->board,
        .set_gate = set_gate,
        .arm = arm,
        .disarm = disarm,
        .now = now,
        .active_low = false,
        .hardware_pulse_end = false,
    };
    ripplectl_config_error error;
    if (ripplectl_init(&s->state, config, &board, &error) == RIPPLECTL_ERROR_OK) {
        return true;
    }
    semihosting_print("configuration refused: ");
    semihosting_print(error.parameter);
    semihosting_print("\n");
    return false;
}

/* The words of a fast-path call: the command as the board carried it out. */
static void command_words(struct stack *s, uint32_t out[WORDS_OUT])
{
    out[0] = (uint32_t)s->board.pin_high | ((uint32_t)s->board.armed << 1);
    out[1] = s->board.armed ? s->board.deadline : 0u;
    out[2] = ripplectl_read_state(&s->state);
    out[3] = 0;
}

/* FNV-1a style fold of the slow path's figures (tests/target/src/lib.rs,
 * `housekeeping_words`). */
static uint32_t figures_hash(const ripplectl_telemetry *t)
{
    const uint32_t figures[8] = {
        (uint32_t)t->vin,
        (uint32_t)t->vout,
        (uint32_t)t->losses.output,
        (uint32_t)t->losses.total,
        t->observer_valid ? (uint32_t)t->observer_current : 0x80000000u,
        (uint32_t)t->current,
        t->efficiency,
        t->faults,
    };
    uint32_t h = 0x811c9dc5u;
    for (size_t i = 0; i < 8; i++) {
        h = (h ^ figures[i]) * 0x01000193u;
    }
    return h;
}

static void housekeeping(struct stack *s, uint32_t t, uint32_t out[WORDS_OUT])
{
    uint32_t disarms = s->board.disarms;
    ripplectl_housekeeping(&s->state, t, -1);
    ripplectl_telemetry tel;
    ripplectl_read_telemetry(&s->state, &tel);
    out[0] = (uint32_t)tel.state | ((uint32_t)(s->board.disarms != disarms) << 8);
    out[1] = tel.reference_code;
    out[2] = tel.on_time_ticks;
    out[3] = figures_hash(&tel);
}

/* Perform one record's call; false for an operation not replayed. */
static bool step(uint32_t op, uint32_t a, uint32_t t, uint32_t out[WORDS_OUT])
{
    struct stack *s = op >= OP_COT_STACK_CONVERSION ? &on_time : &hysteretic;
    uint16_t output = (uint16_t)a, input = (uint16_t)(a >> 16);
    s->board.now = t;
    switch (op) {
    case OP_STACK_CONVERSION:
    case OP_COT_STACK_CONVERSION:
        ripplectl_conversion_done(&s->state, output, input, t);
        command_words(s, out);
        return true;
    case OP_STACK_TIMER:
    case OP_COT_STACK_TIMER:
        ripplectl_compare_fired(&s->state, t);
        command_words(s, out);
        return true;
    case OP_STACK_HOUSEKEEPING:
    case OP_COT_STACK_HOUSEKEEPING:
        housekeeping(s, t, out);
        return true;
    default:
        return false;
    }
}

/* The call stack's low-water mark: paint the region below the stack
 * pointer, run, find the deepest word changed. */
enum { PAINT = 0x5a5aa5a5u, PAINT_WORDS = 16384 };

static uint32_t *stack_pointer(void)
{
    uint32_t *sp;
    __asm volatile("mov %0, sp" : "=r"(sp));
    return sp;
}

static __attribute__((noinline)) void paint(uint32_t *below)
{
    for (uint32_t *p = below - PAINT_WORDS; p < below - 64; p++) {
        *p = PAINT;
    }
}

static uint32_t used_bytes(uint32_t *below)
{
    uint32_t *p = below - PAINT_WORDS;
    while (p < below && *p == PAINT) {
        p++;
    }
    return (uint32_t)((below - p) * sizeof *p);
}

static void print_stack(const char *op, uint32_t bytes)
{
    semihosting_print("stack core=m4-c op=");
    semihosting_print(op);
    semihosting_print(" bytes=");
    semihosting_print_u32(bytes);
    semihosting_print("\n");
}

int main(void)
{
    uint32_t *sp = stack_pointer();
    paint(sp);
    bool ok = start(&hysteretic, &DEMO_HYSTERETIC) && start(&on_time, &DEMO_ON_TIME);
    print_stack("init", used_bytes(sp));
    paint(sp);
    uint32_t count = 0, mismatches = 0;
    if (ok && vectors_bin[0] == MAGIC) {
        uint32_t records = vectors_bin[1];
        for (uint32_t k = 0; k < records; k++) {
            const uint32_t *in = &vectors_bin[2 + k * (WORDS_IN + WORDS_OUT)];
            const uint32_t *expected = in + WORDS_IN;
            uint32_t got[WORDS_OUT];
            if (!step(in[0], in[1], in[2], got)) {
                continue;
            }
            count++;
            for (size_t j = 0; j < WORDS_OUT; j++) {
                if (got[j] != expected[j]) {
                    mismatches++;
                    break;
                }
            }
        }
    }
    print_stack("calls", used_bytes(sp));
    ok = ok && count > 0 && mismatches == 0;
    if (mismatches != 0) {
        semihosting_print("vectors core=m4-c mismatches=");
        semihosting_print_u32(mismatches);
        semihosting_print("\n");
    }
    semihosting_print("vectors core=m4-c match=");
    semihosting_print(ok ? "true" : "false");
    semihosting_print(" count=");
    semihosting_print_u32(count);
    semihosting_print("\n");
    semihosting_exit(ok);
}
