/* The crate's demo board as a C firmware configures it: the greenhouse
 * valve rail (24 V bus, 18-32 V, to 5 V / 2 A) on a 64 MHz timer with a
 * 12-bit, 3.3 V ADC, housekeeping at 5 kHz; StackConfig::demo() in the
 * crate's src/stack/config.rs with its law on ADC samples, field for
 * field. Demo values throughout: a
 * board needs its own. */
#ifndef DEMO_BOARD_H
#define DEMO_BOARD_H

#include "ripplectl.h"

/* The hysteretic law, 40 mV band around 5 V. */
extern const ripplectl_config DEMO_HYSTERETIC;

/* The constant on-time law (2.08 us, about 100 kHz at 24 V) with input
 * feed-forward to 100 kHz, the frequency trim and DC correction: the stack
 * of the crate's Rust firmware example (tests/target/examples/firmware.rs). */
extern const ripplectl_config DEMO_ON_TIME;

#endif
