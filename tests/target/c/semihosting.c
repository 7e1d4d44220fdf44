/* The ARM semihosting calls (operation in r0, argument in r1, `bkpt 0xAB` on
 * M-profile cores): the host's standard output opened as ":tt" in mode "w"
 * (SYS_OPEN, mode 4), SYS_WRITE to it, and SYS_EXIT. */
#include "semihosting.h"

#include <stddef.h>

enum { SYS_OPEN = 0x01, SYS_WRITE = 0x05, SYS_EXIT = 0x18 };
/* SYS_EXIT reasons: ADP_Stopped_ApplicationExit, ADP_Stopped_RunTimeErrorUnknown. */
enum { EXIT_APPLICATION = 0x20026, EXIT_RUNTIME_ERROR = 0x20023 };

static uint32_t call(uint32_t op, const void *arg)
{
    register uint32_t r0 __asm("r0") = op;
    register const void *r1 __asm("r1") = arg;
    __asm volatile("bkpt 0xAB" : "+r"(r0) : "r"(r1) : "memory");
    return r0;
}

/* The host's standard output, opened at the first print. */
static uint32_t stdout_handle(void)
{
    static uint32_t handle;
    static bool open;
    if (!open) {
        const uint32_t args[3] = {(uint32_t)":tt", 4u, 3u};
        handle = call(SYS_OPEN, args);
        open = true;
    }
    return handle;
}

void semihosting_print(const char *text)
{
    size_t n = 0;
    while (text[n] != '\0') {
        n++;
    }
    const uint32_t args[3] = {stdout_handle(), (uint32_t)text, (uint32_t)n};
    call(SYS_WRITE, args);
}

void semihosting_print_u32(uint32_t n)
{
    char digits[11];
    char *p = digits + sizeof digits - 1;
    *p = '\0';
    do {
        *--p = (char)('0' + n % 10u);
        n /= 10u;
    } while (n != 0u);
    semihosting_print(p);
}

void semihosting_exit(bool success)
{
    call(SYS_EXIT, (const void *)(success ? EXIT_APPLICATION : EXIT_RUNTIME_ERROR));
    for (;;) {
    }
}
