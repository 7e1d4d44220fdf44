/* Bare-metal start-up for the Cortex-M4 of QEMU's mps2-an386: the vector
 * table (interrupt 0: the ADC, 1: the timer), .data copied and .bss zeroed,
 * the FPU switched on (the library is built for the hard-float ABI), then
 * main(). */
#include "startup.h"

extern uint32_t stack_top[], data_start[], data_end[], data_load[], bss_start[], bss_end[];

void reset_handler(void);

static void spin(void)
{
    for (;;) {
    }
}

void nmi_handler(void) __attribute__((weak, alias("spin")));
void hard_fault_handler(void) __attribute__((weak, alias("spin")));
void adc_irq_handler(void) __attribute__((weak, alias("spin")));
void timer_irq_handler(void) __attribute__((weak, alias("spin")));
void systick_handler(void) __attribute__((weak, alias("spin")));

typedef void (*vector)(void);

__attribute__((section(".vector_table"), used)) static const vector vectors[16 + 2] = {
    (vector)stack_top, reset_handler, nmi_handler, hard_fault_handler,
    spin, spin, spin, 0, 0, 0, 0, spin, spin, 0, spin, systick_handler,
    adc_irq_handler, timer_irq_handler,
};

/* Coprocessor access control: CP10 and CP11 (the FPU), full access. */
#define CPACR (*(volatile uint32_t *)0xE000ED88u)

void reset_handler(void)
{
    for (uint32_t *src = data_load, *dst = data_start; dst < data_end;) {
        *dst++ = *src++;
    }
    for (uint32_t *dst = bss_start; dst < bss_end;) {
        *dst++ = 0;
    }
    CPACR |= 0xFu << 20;
    __asm volatile("dsb\n\tisb" ::: "memory");
    main();
    spin();
}
