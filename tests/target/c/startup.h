/* Bare-metal start-up for the Cortex-M4 of QEMU's mps2-an386: the vector
 * table, RAM set-up, the FPU switched on, then main(). */
#ifndef STARTUP_H
#define STARTUP_H

#include <stdint.h>

/* The firmware's entry, called once RAM and the FPU are ready. */
int main(void);

/* Interrupt handlers a firmware may define (weak defaults spin). */
void adc_irq_handler(void);
void timer_irq_handler(void);
void systick_handler(void);

/* Interrupts off; returns the previous PRIMASK for irq_restore. */
static inline uint32_t irq_save(void)
{
    uint32_t primask;
    __asm volatile("mrs %0, primask\n\tcpsid i" : "=r"(primask)::"memory");
    return primask;
}

/* Interrupts back as irq_save found them. */
static inline void irq_restore(uint32_t primask)
{
    __asm volatile("msr primask, %0" ::"r"(primask) : "memory");
}

#endif
