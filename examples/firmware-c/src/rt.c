/* Vector table, reset handler, fault handlers and semihosting (ARM
   semihosting: BKPT 0xAB with the operation in r0 and a pointer to its
   arguments in r1; SYS_OPEN of ":tt" gives the host's standard output,
   SYS_WRITE writes to it, SYS_EXIT ends the emulation). */
#include "rt.h"

#define SYS_OPEN 0x01
#define SYS_WRITE 0x05
/* SYS_OPEN mode "w": the console's standard output. */
#define OPEN_MODE_W 4
#define SYS_EXIT 0x18
/* ADP_Stopped_ApplicationExit: QEMU exits with status 0. */
#define ADP_APPLICATION_EXIT 0x20026
/* ADP_Stopped_RunTimeErrorUnknown: QEMU exits with status 1. */
#define ADP_RUNTIME_ERROR 0x20023

static int semihost(int op, const void *arg)
{
    register int r0 __asm__("r0") = op;
    register const void *r1 __asm__("r1") = arg;
    __asm__ volatile("bkpt 0xAB" : "+r"(r0) : "r"(r1) : "memory");
    return r0;
}

void sd_exit_success(void)
{
    semihost(SYS_EXIT, (const void *)ADP_APPLICATION_EXIT);
    for (;;) {
        __asm__ volatile("bkpt 0");
    }
}

void sd_exit_failure(void)
{
    semihost(SYS_EXIT, (const void *)ADP_RUNTIME_ERROR);
    for (;;) {
        __asm__ volatile("bkpt 0");
    }
}

void sd_line_str(sd_line *l, const char *s)
{
    while (*s != '\0' && l->len + 1 < sizeof l->text) {
        l->text[l->len++] = *s++;
    }
}

void sd_line_u32(sd_line *l, uint32_t v)
{
    char digits[11];
    size_t n = 0;
    do {
        digits[n++] = (char)('0' + v % 10u);
        v /= 10u;
    } while (v != 0u);
    while (n > 0u && l->len + 1 < sizeof l->text) {
        l->text[l->len++] = digits[--n];
    }
}

void sd_line_i32(sd_line *l, int32_t v)
{
    if (v < 0) {
        sd_line_str(l, "-");
        /* Negate in unsigned arithmetic: defined for INT32_MIN too. */
        sd_line_u32(l, 0u - (uint32_t)v);
    } else {
        sd_line_u32(l, (uint32_t)v);
    }
}

void sd_line_hex32(sd_line *l, uint32_t v)
{
    static const char hex[] = "0123456789abcdef";
    char text[11] = "0x";
    for (int k = 0; k < 8; k++) {
        text[2 + k] = hex[(v >> (28 - 4 * k)) & 0xFu];
    }
    text[10] = '\0';
    sd_line_str(l, text);
}

/* Handle of the host's standard output; -1 until opened. */
static int stdout_handle = -1;

void sd_line_print(sd_line *l)
{
    if (stdout_handle < 0) {
        static const char tt[] = ":tt";
        const uint32_t open_args[3] = {(uint32_t)tt, OPEN_MODE_W, sizeof tt - 1};
        stdout_handle = semihost(SYS_OPEN, open_args);
    }
    sd_line_str(l, "\n");
    const uint32_t write_args[3] = {(uint32_t)stdout_handle, (uint32_t)l->text, (uint32_t)l->len};
    semihost(SYS_WRITE, write_args);
    l->len = 0;
}

/* Same as fail() in bench.c: each program is built on its own. */
static void print_fault(const char *what)
{
    sd_line l;
    l.len = 0;
    sd_line_str(&l, "error: ");
    sd_line_str(&l, what);
    sd_line_print(&l);
    sd_exit_failure();
}

static void hard_fault(void) { print_fault("HardFault"); }
static void other_exception(void) { print_fault("unexpected exception or interrupt"); }

extern uint32_t _sidata, _sdata, _edata, _sbss, _ebss;

void sd_reset_handler(void) __attribute__((noreturn));
void sd_reset_handler(void)
{
    /* Volatile accesses: the compiler must not turn these loops into calls
       to memcpy or memset before RAM is set up. */
    volatile uint32_t *src = &_sidata;
    for (volatile uint32_t *dst = &_sdata; dst < &_edata;) {
        *dst++ = *src++;
    }
    for (volatile uint32_t *dst = &_sbss; dst < &_ebss;) {
        *dst++ = 0u;
    }
#if defined(__ARM_FP)
    /* Full access to coprocessors 10 and 11 (the FPU) in CPACR. */
    volatile uint32_t *cpacr = (volatile uint32_t *)0xE000ED88u;
    *cpacr |= 0xFu << 20;
    __asm__ volatile("dsb\n\tisb" ::: "memory");
#endif
    sd_main();
}

/* Initial stack pointer, reset, NMI, HardFault, then the other system
   exceptions of ARMv6-M and ARMv7-M (16 entries); no interrupt is enabled. */
typedef void (*sd_vector)(void);
__attribute__((section(".vector_table"), used)) static const sd_vector vectors[16] = {
    (sd_vector)&_stack_start,
    sd_reset_handler,
    other_exception, /* NMI */
    hard_fault,
    other_exception, /* MemManage */
    other_exception, /* BusFault */
    other_exception, /* UsageFault */
    0,
    0,
    0,
    0,
    other_exception, /* SVCall */
    other_exception, /* DebugMonitor */
    0,
    other_exception, /* PendSV */
    other_exception, /* SysTick */
};
