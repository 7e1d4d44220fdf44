/* Output and exit through the debugger's semihosting interface (QEMU with
 * -semihosting-config enable=on,target=native): enough for a test image. */
#ifndef SEMIHOSTING_H
#define SEMIHOSTING_H

#include <stdbool.h>
#include <stdint.h>

/* Print a NUL-terminated string on the host's console. */
void semihosting_print(const char *text);

/* Print `n` in decimal. */
void semihosting_print_u32(uint32_t n);

/* End the emulation: exit status 0 when `success`, 1 otherwise. */
void semihosting_exit(bool success) __attribute__((noreturn));

#endif
