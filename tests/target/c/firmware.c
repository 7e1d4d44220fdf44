/* A whole C firmware around the library (built for the Cortex-M4, linked,
 * measured by run.sh, not run): the C twin of the Rust example
 * tests/target/examples/firmware.rs, on the same stack, the crate's demo
 * board under the constant on-time law with input feed-forward, the
 * frequency trim, DC correction and the averaged-model observer
 * (demo_board.c).
 *
 *   ADC conversion done (output and input scanned) -> adc_irq_handler()
 *       ripplectl_conversion_done -> the stack -> set_gate / arm / disarm
 *   timer compare -> timer_irq_handler()
 *       ripplectl_compare_fired -> the stack -> set_gate / arm / disarm
 *   SysTick, 10 kHz -> systick_handler()
 *       ripplectl_housekeeping (UVLO, soft-start, hiccup, losses,
 *       feed-forward and trim, DC correction, observer)
 *   main loop -> ripplectl_read_telemetry, ripplectl_read_faults
 *
 * A board's vendor code puts the handlers in its vector table (the timer's
 * at the highest priority) and writes the callbacks on its GPIO and timer
 * registers. The stand-ins below keep the example free of any one vendor's
 * registers: the gate pin, the compare, the counter and the ADC's results
 * are words in RAM. Each handler masks interrupts around its call, so that
 * no two calls on the state overlap (the Rust example's critical section).
 *
 * The configuration is a `static const` in flash (demo_board.c);
 * ripplectl_init converts it once at start-up and refuses a bad value by
 * name. The state lives in .bss.
 *
 * Caution: a power stage under firmware control can burn, shock and destroy
 * loads. Bring a board up from a current-limited bench supply and keep a
 * hardware current limit that does not depend on this code. */
#include <stdint.h>

#include "demo_board.h"
#include "ripplectl.h"
#include "startup.h"

/* Stand-ins for the gate pin's output register, the timer's compare
 * register and its enable, the free-running counter and the ADC's result
 * registers. */
static volatile uint32_t gate_level, compare, compare_enable, counter;
static volatile uint32_t adc_output, adc_input;

static bool set_gate(void *context, bool high)
{
    (void)context;
    gate_level = high;
    return true;
}

static void arm(void *context, uint32_t at, bool ends_pulse)
{
    (void)context;
    /* A real timer: write the compare register, select the output action
     * (ends_pulse: clear on match), enable the interrupt, and pend it at
     * once if the counter already passed `at`. */
    compare = at;
    compare_enable = 1u | ((uint32_t)ends_pulse << 1);
}

static void disarm(void *context)
{
    (void)context;
    compare_enable = 0;
}

static uint32_t now(void *context)
{
    (void)context;
    return counter;
}

/* The power stage's whole firmware state. */
static ripplectl stage;

void adc_irq_handler(void)
{
    uint16_t output = (uint16_t)adc_output, input = (uint16_t)adc_input;
    uint32_t mask = irq_save();
    ripplectl_conversion_done(&stage, output, input, counter);
    irq_restore(mask);
}

void timer_irq_handler(void)
{
    uint32_t mask = irq_save();
    ripplectl_compare_fired(&stage, counter);
    irq_restore(mask);
}

void systick_handler(void)
{
    uint32_t mask = irq_save();
    ripplectl_housekeeping(&stage, counter, -1);
    irq_restore(mask);
}

/* SysTick (core clock, taken here as the timer's 64 MHz) and the NVIC. */
#define SYST_CSR (*(volatile uint32_t *)0xE000E010u)
#define SYST_RVR (*(volatile uint32_t *)0xE000E014u)
#define SYST_CVR (*(volatile uint32_t *)0xE000E018u)
#define NVIC_ISER0 (*(volatile uint32_t *)0xE000E100u)

/* What a telemetry task would send on (a bus, a log). */
static volatile ripplectl_telemetry last_telemetry;
static volatile ripplectl_fault last_fault;

int main(void)
{
    static const ripplectl_board board = {
        .context = 0,
        .set_gate = set_gate,
        .arm = arm,
        .disarm = disarm,
        .now = now,
        .active_low = false,
        .hardware_pulse_end = true,
    };
    ripplectl_config_error error;
    if (ripplectl_init(&stage, &DEMO_ON_TIME, &board, &error) != RIPPLECTL_ERROR_OK) {
        /* error.parameter names the refused field: report it, stay off. */
        for (;;) {
            __asm volatile("wfi");
        }
    }
    SYST_RVR = (uint32_t)((float)DEMO_ON_TIME.clock_hz / DEMO_ON_TIME.slow.housekeeping_hz) - 1u;
    SYST_CVR = 0;
    SYST_CSR = 0x7u; /* core clock, interrupt, enable */
    NVIC_ISER0 = 0x3u; /* the ADC and the timer */
    for (;;) {
        __asm volatile("wfi");
        ripplectl_telemetry t;
        ripplectl_fault log[RIPPLECTL_FAULT_LOG_LEN];
        uint32_t mask = irq_save();
        ripplectl_read_telemetry(&stage, &t);
        size_t n = ripplectl_read_faults(&stage, log, RIPPLECTL_FAULT_LOG_LEN);
        irq_restore(mask);
        last_telemetry = t;
        if (n > 0) {
            last_fault = log[n - 1];
        }
    }
}
