/* Benchmark of the C API under QEMU with -icount: instructions per call
   (SysTick counts instructions, see examples/firmware/README.md
   "Method"), stack per call and state size, with the Rust benchmark's
   streams, call counts and order, so that each figure stands beside the
   Rust firmware's of the same name. Prints `metric c_<name> <value>
   <unit> target=<triple>` lines; bench.sh adds flash and static RAM. */
#include "data.h"
#include "rt.h"
#include "semidrift_compensate.h"

#if defined(__ARM_FP)
#define TARGET "thumbv7em-none-eabihf"
#else
#define TARGET "thumbv6m-none-eabi"
#endif

/* ---- SysTick as an instruction counter ---------------------------------- */

#define SYST_CSR (*(volatile uint32_t *)0xE000E010u)
#define SYST_RVR (*(volatile uint32_t *)0xE000E014u)
#define SYST_CVR (*(volatile uint32_t *)0xE000E018u)
#define MASK_24 0x00FFFFFFu
/* The Rust benchmark's calibration loops: 1e6 and 1.1e7 iterations of
   two instructions, so the call overhead cancels in the difference. */
#define CALIBRATION_BASE 1000000u
#define CALIBRATION_EXTRA 10000000u
/* The stream's 116 normal samples, 1000 times (as the Rust benchmark). */
#define INPUTS SD_STREAM_NORMAL
#define CALLS (INPUTS * 1000u)
/* The Rust benchmark's stream::RAMP and stream::DRIFT_FROM. */
#define RAMP 58
#define DRIFT_FROM 28
/* cortex-m-rt's stack paint value, as the Rust benchmark. */
#define PAINT 0xCCCCCCCCu

static uint64_t calibration_insn = 1;
static uint64_t calibration_ticks = 1;

static inline uint32_t now(void) { return SYST_CVR; }
static inline uint32_t ticks_since(uint32_t start) { return (start - now()) & MASK_24; }

__attribute__((noinline)) static void busy_loop(uint32_t iterations)
{
    __asm__ volatile(".syntax unified\n1:\n\tsubs %0, %0, #1\n\tbne 1b" : "+l"(iterations) : : "cc");
}

static void counter_init(void)
{
    SYST_CSR = 0;
    SYST_RVR = MASK_24;
    SYST_CVR = 0;
    SYST_CSR = 5u; /* enable, core clock, no interrupt */
    uint32_t start = now();
    busy_loop(CALIBRATION_BASE);
    uint32_t short_ticks = ticks_since(start);
    start = now();
    busy_loop(CALIBRATION_BASE + CALIBRATION_EXTRA);
    uint32_t long_ticks = ticks_since(start);
    calibration_insn = 2ull * CALIBRATION_EXTRA;
    calibration_ticks = long_ticks > short_ticks ? long_ticks - short_ticks : 1u;
}

static uint64_t centi_insn_per_call(uint32_t ticks, uint32_t calls)
{
    uint64_t num = (uint64_t)ticks * calibration_insn * 100u;
    uint64_t den = calibration_ticks * calls;
    return (num + den / 2u) / den;
}

static void metric(const char *name, uint32_t value, const char *unit)
{
    sd_line l;
    l.len = 0;
    sd_line_str(&l, "metric c_");
    sd_line_str(&l, name);
    sd_line_str(&l, " ");
    sd_line_u32(&l, value);
    sd_line_str(&l, " ");
    sd_line_str(&l, unit);
    sd_line_str(&l, " target=" TARGET);
    sd_line_print(&l);
}

static void metric_centi(const char *name, uint64_t centi)
{
    sd_line l;
    l.len = 0;
    sd_line_str(&l, "metric c_");
    sd_line_str(&l, name);
    sd_line_str(&l, " ");
    sd_line_u32(&l, (uint32_t)(centi / 100u));
    sd_line_str(&l, centi % 100u < 10u ? ".0" : ".");
    sd_line_u32(&l, (uint32_t)(centi % 100u));
    sd_line_str(&l, " insn target=" TARGET);
    sd_line_print(&l);
}

static void fail(const char *what)
{
    sd_line l;
    l.len = 0;
    sd_line_str(&l, "error: ");
    sd_line_str(&l, what);
    sd_line_print(&l);
    sd_exit_failure();
}

/* ---- timed calls: the entry point and an empty function of its type ------ */

typedef sd_result (*q_update_fn)(sd_q_state *, int32_t);
typedef sd_sample_q (*q_sample_fn)(const sd_q_state *, int32_t);

/* The empty functions return what the Rust benchmark's return: no flags,
   and (the integer sample) the input as the value. */
__attribute__((noinline)) static sd_result q_update_empty(sd_q_state *s, int32_t v)
{
    (void)s, (void)v;
    return 0;
}

__attribute__((noinline)) static sd_sample_q q_sample_empty(const sd_q_state *s, int32_t v)
{
    (void)s;
    return (uint32_t)v;
}

/* Ticks of CALLS calls of f over the inputs, cycling; the function comes
   through a volatile, so it is called, never inlined. */
__attribute__((noinline)) static uint32_t time_q_update(q_update_fn f, sd_q_state *s,
                                                        const int32_t *in)
{
    q_update_fn volatile vf = f;
    q_update_fn g = vf;
    uint32_t k = 0;
    uint32_t start = now();
    for (uint32_t i = 0; i < CALLS; i++) {
        g(s, in[k]);
        if (++k == INPUTS) {
            k = 0;
        }
    }
    return ticks_since(start);
}

__attribute__((noinline)) static uint32_t time_q_sample(q_sample_fn f, const sd_q_state *s,
                                                        const int32_t *in)
{
    q_sample_fn volatile vf = f;
    q_sample_fn g = vf;
    uint32_t k = 0;
    uint32_t start = now();
    for (uint32_t i = 0; i < CALLS; i++) {
        g(s, in[k]);
        if (++k == INPUTS) {
            k = 0;
        }
    }
    return ticks_since(start);
}

static void report_q_update(const char *name, sd_q_state *s, const int32_t *in)
{
    uint32_t work = time_q_update(sd_q_update_temperature, s, in);
    uint32_t base = time_q_update(q_update_empty, s, in);
    metric_centi(name, centi_insn_per_call(work > base ? work - base : 0u, CALLS));
}

static void report_q_sample(const char *name, const sd_q_state *s, const int32_t *in)
{
    uint32_t work = time_q_sample(sd_q_compensate, s, in);
    uint32_t base = time_q_sample(q_sample_empty, s, in);
    metric_centi(name, centi_insn_per_call(work > base ? work - base : 0u, CALLS));
}

#if defined(__ARM_FP)
typedef sd_result (*f_update_fn)(sd_f32_state *, float);
typedef sd_sample_f32 (*f_sample_fn)(const sd_f32_state *, float);

__attribute__((noinline)) static sd_result f_update_empty(sd_f32_state *s, float v)
{
    (void)s, (void)v;
    return 0;
}

/* Value 0 rather than the input: GCC moves a float into an integer
   register through the stack, which would make the empty call dearer. */
__attribute__((noinline)) static sd_sample_f32 f_sample_empty(const sd_f32_state *s, float v)
{
    (void)s, (void)v;
    return 0;
}

/* Same shape as time_q_update: other types; a macro would hide the timed loop. */
__attribute__((noinline)) static uint32_t time_f_update(f_update_fn f, sd_f32_state *s,
                                                        const float *in)
{
    f_update_fn volatile vf = f;
    f_update_fn g = vf;
    uint32_t k = 0;
    uint32_t start = now();
    for (uint32_t i = 0; i < CALLS; i++) {
        g(s, in[k]);
        if (++k == INPUTS) {
            k = 0;
        }
    }
    return ticks_since(start);
}

__attribute__((noinline)) static uint32_t time_f_sample(f_sample_fn f, const sd_f32_state *s,
                                                        const float *in)
{
    f_sample_fn volatile vf = f;
    f_sample_fn g = vf;
    uint32_t k = 0;
    uint32_t start = now();
    for (uint32_t i = 0; i < CALLS; i++) {
        g(s, in[k]);
        if (++k == INPUTS) {
            k = 0;
        }
    }
    return ticks_since(start);
}

static void report_f_update(const char *name, sd_f32_state *s, const float *in)
{
    uint32_t work = time_f_update(sd_f32_update_temperature, s, in);
    uint32_t base = time_f_update(f_update_empty, s, in);
    metric_centi(name, centi_insn_per_call(work > base ? work - base : 0u, CALLS));
}

static void report_f_sample(const char *name, const sd_f32_state *s, const float *in)
{
    uint32_t work = time_f_sample(sd_f32_compensate, s, in);
    uint32_t base = time_f_sample(f_sample_empty, s, in);
    metric_centi(name, centi_insn_per_call(work > base ? work - base : 0u, CALLS));
}
#endif

/* ---- stack: paint below the stack pointer, call, find the lowest write -- */

static inline uint32_t stack_pointer(void)
{
    uint32_t sp;
    __asm__ volatile("mov %0, sp" : "=r"(sp));
    return sp;
}

static void paint_below(uint32_t top)
{
    for (volatile uint32_t *p = &_stack_end; (uint32_t)p < top; p++) {
        *p = PAINT;
    }
}

static uint32_t used_below(uint32_t top)
{
    for (volatile uint32_t *p = &_stack_end; (uint32_t)p < top; p++) {
        if (*p != PAINT) {
            return top - (uint32_t)p;
        }
    }
    return 0;
}

__attribute__((noinline)) static uint32_t stack_q(sd_q_state *s, int32_t signal, int32_t raw)
{
    q_update_fn volatile update = sd_q_update_temperature;
    q_sample_fn volatile sample = sd_q_compensate;
    uint32_t top = stack_pointer();
    paint_below(top);
    update(s, signal);
    uint32_t a = used_below(top);
    paint_below(top);
    sample(s, raw);
    uint32_t b = used_below(top);
    return a > b ? a : b;
}

#if defined(__ARM_FP)
__attribute__((noinline)) static uint32_t stack_f(sd_f32_state *s, float signal, float raw)
{
    f_update_fn volatile update = sd_f32_update_temperature;
    f_sample_fn volatile sample = sd_f32_compensate;
    uint32_t top = stack_pointer();
    paint_below(top);
    update(s, signal);
    uint32_t a = used_below(top);
    paint_below(top);
    sample(s, raw);
    uint32_t b = used_below(top);
    return a > b ? a : b;
}
#endif

/* ---- the Rust benchmark's streams ---------------------------------------- */

static sd_sample samples[SD_STREAM_SAMPLES];
static int32_t raw_q[INPUTS], temp_q[INPUTS], drift_q[INPUTS], jump_q[INPUTS];

/* stream::drift: from a to b and back over the inputs. */
static void make_drift(int32_t a, int32_t b, int32_t *out)
{
    const int64_t half = INPUTS / 2;
    for (int64_t k = 0; k < INPUTS; k++) {
        int64_t up = k <= half ? k : 2 * half - k;
        out[k] = (int32_t)(a + ((int64_t)b - a) * up / half);
    }
}

/* stream::jumps: alternately a ramp temperature and the one half the ramp
   further on, so that every update changes node interval. */
static void make_jumps(const int32_t *ramp, int32_t *out)
{
    for (uint32_t k = 0; k < INPUTS; k++) {
        uint32_t j = k / 2u;
        uint32_t i = (k % 2u == 1u) ? j + RAMP / 2 : j;
        out[k] = ramp[i % RAMP];
    }
}

static sd_q_state fixed;
#if defined(__ARM_FP)
static sd_f32_state floating;
static float raw_f[INPUTS], temp_f[INPUTS], drift_f[INPUTS], jump_f[INPUTS];
#endif

void sd_main(void)
{
    counter_init();
    {
        sd_line l;
        l.len = 0;
        uint64_t centi = (calibration_insn * 100u + calibration_ticks / 2u) / calibration_ticks;
        sd_line_str(&l, "metric c_insn_per_systick ");
        sd_line_u32(&l, (uint32_t)(centi / 100u));
        sd_line_str(&l, centi % 100u < 10u ? ".0" : ".");
        sd_line_u32(&l, (uint32_t)(centi % 100u));
        sd_line_str(&l, " insn/tick target=" TARGET);
        sd_line_print(&l);
    }
    if (sd_stream_read(sd_stream_csv, samples, SD_STREAM_SAMPLES) < (int32_t)INPUTS) {
        fail("well_level_stream.csv has fewer than 116 samples");
    }
    for (uint32_t k = 0; k < INPUTS; k++) {
        raw_q[k] = samples[k].raw_code;
        temp_q[k] = samples[k].temp_code;
    }
    make_drift(temp_q[DRIFT_FROM], temp_q[DRIFT_FROM + 1], drift_q);
    make_jumps(temp_q, jump_q);

    size_t q_len = (size_t)(sd_image_q_end - sd_image_q);
    if (sd_q_init(&fixed, sizeof fixed, sd_image_q, q_len) != SD_OK) {
        fail("well_level_q.bin does not make a Q state");
    }
    sd_q_update_temperature(&fixed, temp_q[0]);

#if defined(__ARM_FP)
    for (uint32_t k = 0; k < INPUTS; k++) {
        raw_f[k] = (float)raw_q[k];
        temp_f[k] = (float)temp_q[k];
        drift_f[k] = (float)drift_q[k];
        jump_f[k] = (float)jump_q[k];
    }
    size_t f_len = (size_t)(sd_image_f32_end - sd_image_f32);
    if (sd_f32_init(&floating, sizeof floating, sd_image_f32, f_len) != SD_OK) {
        fail("well_level_f32.bin does not make an f32 state");
    }
    sd_f32_update_temperature(&floating, temp_f[0]);
    report_f_update("temp_update_insn", &floating, temp_f);
    report_f_update("temp_update_drift_insn", &floating, drift_f);
    report_f_update("temp_update_jump_insn", &floating, jump_f);
    sd_f32_update_temperature(&floating, temp_f[0]);
    report_f_sample("sample_insn", &floating, raw_f);
    metric("stack_bytes", stack_f(&floating, temp_f[0], raw_f[0]), "bytes");
    metric("state_bytes", sizeof floating, "bytes");
#define Q_NAME(plain, on_m4f) on_m4f
#else
#define Q_NAME(plain, on_m4f) plain
#endif

    report_q_update(Q_NAME("temp_update_insn", "temp_update_q_insn"), &fixed, temp_q);
    report_q_update(Q_NAME("temp_update_drift_insn", "temp_update_drift_q_insn"), &fixed, drift_q);
    report_q_update(Q_NAME("temp_update_jump_insn", "temp_update_jump_q_insn"), &fixed, jump_q);
    sd_q_update_temperature(&fixed, temp_q[0]);
    report_q_sample(Q_NAME("sample_insn", "sample_q_insn"), &fixed, raw_q);
    metric(Q_NAME("stack_bytes", "stack_q_bytes"), stack_q(&fixed, temp_q[0], raw_q[0]), "bytes");
    metric(Q_NAME("state_bytes", "state_q_bytes"), sizeof fixed, "bytes");
    sd_exit_success();
}
