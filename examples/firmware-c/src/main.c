/* Demo firmware in C: checks the embedded table images through the C API
   of the compensate crate, shows that a copy with one flipped bit is
   refused, checks that bad state pointers are refused with their own
   status codes, replays the recorded stream through the compensators and
   prints one line per sample in the Rust firmware's format (f32 results as
   bit patterns, integer results as raw int32), so that
   tests/firmware_c_qemu.rs can require the two to agree bit for bit.
   Exits 0 when every check passed, 1 otherwise.

   On the Cortex-M4F both paths replay the stream; on the Cortex-M0 (no
   FPU) only the integer one, as in the Rust firmware. The state-pointer
   checks call both APIs on both boards (the f32 one in software floating
   point on the M0), since the two read their key words differently there. */
#include "data.h"
#include "rt.h"
#include "semidrift_compensate.h"

/* The header's constants describe the types the C compiler lays out. */
_Static_assert(sizeof(sd_f32_state) == SD_F32_STATE_BYTES, "sd_f32_state size");
_Static_assert(sizeof(sd_q_state) == SD_Q_STATE_BYTES, "sd_q_state size");
_Static_assert(_Alignof(sd_f32_state) == SD_STATE_ALIGN, "sd_f32_state alignment");
_Static_assert(_Alignof(sd_q_state) == SD_STATE_ALIGN, "sd_q_state alignment");

static sd_q_state fixed;
#if defined(__ARM_FP)
static sd_f32_state floating;
#endif

/* Prints "image NAME ok bytes=.. t_nodes=.. sig_nodes=.. channels=..", as
   the Rust firmware, or the refusal; returns whether the image is valid. */
static int validate(const char *name, const uint8_t *image, size_t len, int q_only)
{
    sd_image_info info;
    sd_status rc = q_only ? sd_image_check_q(image, len, &info) : sd_image_check(image, len, &info);
    sd_line l;
    l.len = 0;
    sd_line_str(&l, "image ");
    sd_line_str(&l, name);
    if (rc == SD_OK) {
        sd_line_str(&l, " ok bytes=");
        sd_line_u32(&l, (uint32_t)len);
        sd_line_str(&l, " t_nodes=");
        sd_line_u32(&l, info.temperature_nodes);
        sd_line_str(&l, " sig_nodes=");
        sd_line_u32(&l, info.thermometer_nodes);
        sd_line_str(&l, " channels=");
        sd_line_u32(&l, info.channels);
    } else {
        sd_line_str(&l, " rejected: status=");
        sd_line_i32(&l, rc);
        sd_line_str(&l, " (");
        sd_line_str(&l, sd_status_name(rc));
        sd_line_str(&l, ")");
    }
    sd_line_print(&l);
    return rc == SD_OK;
}

/* Room for the damaged copy (the demo images are 364 bytes). */
#define COPY_BYTES 2048
static uint8_t copy[COPY_BYTES];

/* Flips one bit in the middle of a copy of the Q image (a byte of the gain
   column: only the CRC can catch it) and checks that initialising a state
   from it fails with SD_ERR_CORRUPT_IMAGE and that the state then refuses
   to compensate with SD_ERR_NOT_INITIALISED. */
static int corrupt_copy_is_refused(const uint8_t *image, size_t len)
{
    if (len > COPY_BYTES) {
        sd_line l;
        l.len = 0;
        sd_line_str(&l, "error: image larger than the copy buffer");
        sd_line_print(&l);
        return 0;
    }
    for (size_t k = 0; k < len; k++) {
        copy[k] = image[k];
    }
    copy[len / 2] ^= 0x10u;
    static sd_q_state refused;
    sd_status init = sd_q_init(&refused, sizeof refused, copy, len);
    sd_sample_q r = sd_q_compensate(&refused, 1000000);
    sd_status sample = sd_result_status(sd_sample_result(r));
    sd_line l;
    l.len = 0;
    sd_line_str(&l, "corrupted init status=");
    sd_line_i32(&l, init);
    sd_line_str(&l, " (");
    sd_line_str(&l, sd_status_name(init));
    /* Status printing repeats: the line builder takes one piece per call. */
    sd_line_str(&l, ") sample status=");
    sd_line_i32(&l, sample);
    sd_line_str(&l, " (");
    sd_line_str(&l, sd_status_name(sample));
    sd_line_str(&l, ")");
    sd_line_print(&l);
    return init == SD_ERR_CORRUPT_IMAGE && sample == SD_ERR_NOT_INITIALISED &&
           sd_sample_q_value(r) == 0 && sd_result_flags(sd_sample_result(r)) == SD_FLAG_TABLE_INVALID;
}

/* ---- the per-call checks of a state pointer, on the target itself ------
   NULL; every misaligned address up to 7 bytes either side of an
   initialised block (a Cortex-M0 faults on a misaligned word load, so the
   checks must refuse these without one); an aligned zero-filled block; a
   copy of an initialised block. Every entry point must return the case's
   own status code (and value 0 for a sample), a refused init must write
   nothing, and the initialised block must still work afterwards. */

/* Inputs inside the demo image's ranges (any would do: they are refused). */
#define CHECK_RAW 1000000
#define CHECK_SIGNAL 1000000

/* Entry points of the integer API that do not return `want` for `s`. */
static int q_wrong(sd_q_state *s, sd_status want)
{
    int32_t t_q = 0;
    sd_sample_q r = sd_q_compensate(s, CHECK_RAW);
    int wrong = sd_result_status(sd_sample_result(r)) != want || sd_sample_q_value(r) != 0;
    wrong += sd_result_status(sd_q_update_temperature(s, CHECK_SIGNAL)) != want;
    wrong += sd_q_temperature_q(s, &t_q) != want;
    return wrong;
}

/* The same for the f32 API. */
static int f32_wrong(sd_f32_state *s, sd_status want)
{
    float t_c = 0.0f;
    sd_sample_f32 r = sd_f32_compensate(s, (float)CHECK_RAW);
    int wrong = sd_result_status(sd_sample_result(r)) != want || sd_sample_f32_value(r) != 0.0f;
    wrong += sd_result_status(sd_f32_update_temperature(s, (float)CHECK_SIGNAL)) != want;
    wrong += sd_f32_temperature_c(s, &t_c) != want;
    return wrong;
}

/* Whether all `n` bytes at `p` are zero. */
static int all_zero(const void *p, size_t n)
{
    const uint8_t *b = p;
    for (size_t i = 0; i < n; i++) {
        if (b[i] != 0) {
            return 0;
        }
    }
    return 1;
}

/* Three blocks in a row: the middle one is initialised, the others stay
   zero-filled until the copy. */
static sd_q_state q_area[3];
static sd_f32_state f32_area[3];

/* The pointer `k` bytes from `base` (misaligned for k = 1..7): an address
   the C API must refuse, made as a caller's cast would make it. */
#define AT_OFFSET(type, base, k) ((type *)(uintptr_t)((uintptr_t)(base) + (uintptr_t)(k)))

static int states_are_checked(void)
{
    size_t q_len = (size_t)(sd_image_q_end - sd_image_q);
    int wrong = q_wrong(NULL, SD_ERR_NULL_POINTER);
    wrong += sd_q_init(&q_area[1], sizeof q_area[1], sd_image_q, q_len) != SD_OK;
    size_t f_len = (size_t)(sd_image_f32_end - sd_image_f32);
    wrong += f32_wrong(NULL, SD_ERR_NULL_POINTER);
    wrong += sd_f32_init(&f32_area[1], sizeof f32_area[1], sd_image_f32, f_len) != SD_OK;
    for (int k = 1; k < 8; k++) {
        for (int side = -1; side <= 1; side += 2) {
            sd_q_state *q = AT_OFFSET(sd_q_state, &q_area[1], side * k);
            wrong += q_wrong(q, SD_ERR_MISALIGNED_STATE);
            wrong += sd_q_init(q, sizeof *q, sd_image_q, q_len) != SD_ERR_MISALIGNED_STATE;
            sd_f32_state *f = AT_OFFSET(sd_f32_state, &f32_area[1], side * k);
            wrong += f32_wrong(f, SD_ERR_MISALIGNED_STATE);
            wrong += sd_f32_init(f, sizeof *f, sd_image_f32, f_len) != SD_ERR_MISALIGNED_STATE;
        }
    }
    wrong += !all_zero(&q_area[0], sizeof q_area[0]) + !all_zero(&q_area[2], sizeof q_area[2]);
    wrong += q_wrong(&q_area[0], SD_ERR_NOT_INITIALISED);
    sd_sample_q r = sd_q_compensate(&q_area[1], CHECK_RAW);
    wrong += sd_result_status(sd_sample_result(r)) != SD_OK;
    /* A copy elsewhere holds no key for its own address. */
    q_area[2] = q_area[1];
    wrong += q_wrong(&q_area[2], SD_ERR_NOT_INITIALISED);
    wrong += !all_zero(&f32_area[0], sizeof f32_area[0]) + !all_zero(&f32_area[2], sizeof f32_area[2]);
    wrong += f32_wrong(&f32_area[0], SD_ERR_NOT_INITIALISED);
    sd_sample_f32 f = sd_f32_compensate(&f32_area[1], (float)CHECK_RAW);
    wrong += sd_result_status(sd_sample_result(f)) != SD_OK;
    f32_area[2] = f32_area[1];
    wrong += f32_wrong(&f32_area[2], SD_ERR_NOT_INITIALISED);
    sd_line l;
    l.len = 0;
    sd_line_str(&l, "state checks wrong=");
    sd_line_i32(&l, wrong);
    sd_line_print(&l);
    return wrong == 0;
}

static sd_sample samples[SD_STREAM_SAMPLES];

void sd_main(void)
{
    int ok = 1;
    size_t q_len = (size_t)(sd_image_q_end - sd_image_q);
    ok &= validate("q", sd_image_q, q_len, 1);
    ok &= sd_q_init(&fixed, sizeof fixed, sd_image_q, q_len) == SD_OK;
#if defined(__ARM_FP)
    size_t f_len = (size_t)(sd_image_f32_end - sd_image_f32);
    ok &= validate("f32", sd_image_f32, f_len, 0);
    ok &= sd_f32_init(&floating, sizeof floating, sd_image_f32, f_len) == SD_OK;
#endif
    ok &= states_are_checked();
    if (!corrupt_copy_is_refused(sd_image_q, q_len)) {
        sd_line l;
        l.len = 0;
        sd_line_str(&l, "error: a corrupted image was not refused");
        sd_line_print(&l);
        ok = 0;
    }

    int32_t n = sd_stream_read(sd_stream_csv, samples, SD_STREAM_SAMPLES);
    if (n < 0) {
        sd_line l;
        l.len = 0;
        sd_line_str(&l, "error: well_level_stream.csv line ");
        sd_line_i32(&l, -n);
        sd_line_str(&l, ": expected raw_code,temp_code");
        sd_line_print(&l);
        sd_exit_failure();
    }
    for (int32_t i = 0; i < n; i++) {
        const sd_sample s = samples[i];
        sd_result tq = sd_q_update_temperature(&fixed, s.temp_code);
        sd_sample_q q = sd_q_compensate(&fixed, s.raw_code);
        int32_t t_q = 0;
        ok &= sd_result_status(tq) == SD_OK;
        ok &= sd_result_status(sd_sample_result(q)) == SD_OK;
        ok &= sd_q_temperature_q(&fixed, &t_q) == SD_OK;

        sd_line l;
        l.len = 0;
        sd_line_str(&l, "sample ");
        sd_line_i32(&l, i);
        sd_line_str(&l, " raw=");
        sd_line_i32(&l, s.raw_code);
        sd_line_str(&l, " temp=");
        sd_line_i32(&l, s.temp_code);
#if defined(__ARM_FP)
        sd_result tf = sd_f32_update_temperature(&floating, (float)s.temp_code);
        sd_sample_f32 f = sd_f32_compensate(&floating, (float)s.raw_code);
        float t_c = 0.0f;
        ok &= sd_result_status(tf) == SD_OK;
        ok &= sd_result_status(sd_sample_result(f)) == SD_OK;
        ok &= sd_f32_temperature_c(&floating, &t_c) == SD_OK;
        union {
            float f;
            uint32_t u;
        } bits;
        sd_line_str(&l, " t_c=");
        bits.f = t_c;
        sd_line_hex32(&l, bits.u);
        sd_line_str(&l, " t_q=");
        sd_line_i32(&l, t_q);
        sd_line_str(&l, " f32=");
        bits.f = sd_sample_f32_value(f);
        sd_line_hex32(&l, bits.u);
        sd_line_str(&l, " f32_status=");
        sd_line_u32(&l, sd_result_flags(sd_sample_result(f)));
        sd_line_str(&l, " f32_temp_status=");
        sd_line_u32(&l, sd_result_flags(tf));
#else
        sd_line_str(&l, " t_q=");
        sd_line_i32(&l, t_q);
#endif
        sd_line_str(&l, " q=");
        sd_line_i32(&l, sd_sample_q_value(q));
        sd_line_str(&l, " q_status=");
        sd_line_u32(&l, sd_result_flags(sd_sample_result(q)));
        sd_line_str(&l, " q_temp_status=");
        sd_line_u32(&l, sd_result_flags(tq));
        sd_line_print(&l);
    }
    sd_line l;
    l.len = 0;
    sd_line_str(&l, "done samples=");
    sd_line_i32(&l, n);
    sd_line_str(&l, ok ? " ok=true" : " ok=false");
    sd_line_print(&l);
    if (ok) {
        sd_exit_success();
    }
    sd_exit_failure();
}
