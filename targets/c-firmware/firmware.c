/*
 * C conformance firmware for the emulated Cortex-M4 (QEMU mps2-an386, the
 * board of the Rust harness): start-up, semihosting console and exit, the
 * instruction-count window markers and stack painting of
 * targets/harness, then c-abi/c/golden_run.c, which replays every golden
 * vector through the C API of libfixsight_c.a (thumbv7em-none-eabihf).
 *
 * Exit status through SYS_EXIT_EXTENDED: 0 every vector bit-exact and
 * every bad input gave its status, 1 otherwise, 4 fault.
 * Built and run by `fixsight-verify targets` (host-verify/src/c_firmware.rs).
 */
#include <stdint.h>

#include "golden.h"

#ifndef GOLDEN_ARCH
#define GOLDEN_ARCH "thumbv7em-none-eabihf"
#endif

/* ---- semihosting (Arm semihosting specification) ---- */
static uint32_t semihost(uint32_t op, const void *args) {
    register uint32_t r0 __asm__("r0") = op;
    register const void *r1 __asm__("r1") = args;
    __asm__ volatile("bkpt 0xAB" : "+r"(r0) : "r"(r1) : "memory");
    return r0;
}

#define SYS_OPEN 0x01u
#define SYS_WRITE 0x05u
#define SYS_EXIT_EXTENDED 0x20u
#define ADP_STOPPED_APPLICATION_EXIT 0x20026u

static uint32_t console = 0xFFFFFFFFu;

void golden_platform_write(const char *s) {
    uint32_t n = 0, args[3];
    if (console == 0xFFFFFFFFu) {
        static const char tt[] = ":tt";
        uint32_t open_args[3] = {(uint32_t)tt, 4u, 3u};
        console = semihost(SYS_OPEN, open_args);
    }
    while (s[n]) n++;
    args[0] = console;
    args[1] = (uint32_t)s;
    args[2] = n;
    semihost(SYS_WRITE, args);
}

static void __attribute__((noreturn)) exit_with(uint32_t code) {
    uint32_t args[2] = {ADP_STOPPED_APPLICATION_EXIT, code};
    semihost(SYS_EXIT_EXTENDED, args);
    for (;;) {
    }
}

/* ---- measurement (same markers and method as targets/harness) ---- */
volatile uint32_t fixsight_windows_opened, fixsight_windows_closed;

__attribute__((noinline, used)) void fixsight_window_open(void) { fixsight_windows_opened++; }
__attribute__((noinline, used)) void fixsight_window_close(void) { fixsight_windows_closed += 3u; }

/* 64 KiB: fxs_point_job_init alone takes about 23 KiB (see c-abi/src/point_job.rs). */
#define STACK_PAINT_SPAN (64u * 1024u)
#define PAINT 0x5AC396E1u
static uint32_t paint_top;

void golden_platform_begin(void) {
    uint32_t sp;
    __asm__ volatile("mov %0, sp" : "=r"(sp));
    sp &= ~3u;
    paint_top = sp;
    for (uint32_t a = sp - STACK_PAINT_SPAN; a < sp; a += 4u) *(volatile uint32_t *)a = PAINT;
    fixsight_window_open();
}

uint32_t golden_platform_end(void) {
    uint32_t a;
    fixsight_window_close();
    for (a = paint_top - STACK_PAINT_SPAN; a < paint_top; a += 4u)
        if (*(volatile uint32_t *)a != PAINT) break;
    return paint_top - a;
}

/* ---- start-up ---- */
extern uint32_t __data_start, __data_end, __data_load, __bss_start, __bss_end, __stack_top;
void reset_handler(void);
void fault_handler(void);

__attribute__((section(".vectors"), used)) static const void *const vectors[16] = {
    &__stack_top, (const void *)reset_handler, (const void *)fault_handler, (const void *)fault_handler,
    (const void *)fault_handler, (const void *)fault_handler, (const void *)fault_handler, 0, 0, 0, 0,
    (const void *)fault_handler, 0, 0, (const void *)fault_handler, (const void *)fault_handler};

void fault_handler(void) {
    golden_platform_write("fault\n");
    exit_with(4);
}

void reset_handler(void) {
    uint32_t *src = &__data_load, *dst = &__data_start;
    while (dst < &__data_end) *dst++ = *src++;
    for (dst = &__bss_start; dst < &__bss_end;) *dst++ = 0;
    /* Full access to CP10/CP11 (the FPU) for the hard-float build. */
    *(volatile uint32_t *)0xE000ED88u |= 0xFu << 20;
    __asm__ volatile("dsb\n isb" ::: "memory");
    exit_with((uint32_t)golden_run_all(GOLDEN_ARCH));
}
