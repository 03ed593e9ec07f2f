/* Start-up, semihosting output and exit of the C firmware under QEMU. */
#ifndef SD_FIRMWARE_RT_H
#define SD_FIRMWARE_RT_H

#include <stddef.h>
#include <stdint.h>

/* Every program defines this; the reset handler calls it after the RAM
   set-up (and, on the Cortex-M4F, after enabling the FPU). */
void sd_main(void) __attribute__((noreturn));

/* Ends the emulation with exit status 0 or 1. */
void sd_exit_success(void) __attribute__((noreturn));
void sd_exit_failure(void) __attribute__((noreturn));

/* A line under construction: text appended, then printed with a newline. */
typedef struct {
    char text[256];
    size_t len;
} sd_line;

void sd_line_str(sd_line *l, const char *s);
void sd_line_i32(sd_line *l, int32_t v);
void sd_line_u32(sd_line *l, uint32_t v);
/* 0x followed by eight lower-case hex digits. */
void sd_line_hex32(sd_line *l, uint32_t v);
/* Prints the line (semihosting) and empties it. */
void sd_line_print(sd_line *l);

/* Stack bounds from sections.ld (the stack grows down from _stack_start). */
extern uint32_t _stack_start;
extern uint32_t _stack_end;

#endif
