/* Flash probe, with compensation: makes the compensator the target runs
   (f32 on the Cortex-M4F, integer on the Cortex-M0) from the image through
   the C API, updates the temperature and compensates one sample, on inputs
   the optimiser cannot see (bench.sh subtracts flashref's size). */
#include "probe.h"
#include "semidrift_compensate.h"

static int probe(const sd_probe_inputs *in)
{
#if defined(__ARM_FP)
    sd_f32_state state; /* on the stack, as the Rust probe's compensator */
    sd_reading_f32 r;
    uint8_t flags = 0;
    if (sd_f32_init(&state, sizeof state, in->image, in->image_len) != SD_OK ||
        sd_f32_update_temperature(&state, (float)in->signal, &flags) != SD_OK ||
        sd_f32_compensate(&state, (float)in->raw, &r) != SD_OK) {
        return 0;
    }
    volatile float value = r.value;
#else
    sd_q_state state; /* on the stack, as the Rust probe's compensator */
    sd_reading_q r;
    uint8_t flags = 0;
    if (sd_q_init(&state, sizeof state, in->image, in->image_len) != SD_OK ||
        sd_q_update_temperature(&state, in->signal, &flags) != SD_OK ||
        sd_q_compensate(&state, in->raw, &r) != SD_OK) {
        return 0;
    }
    volatile int32_t value = r.value;
#endif
    (void)value;
    return flags == 0 && r.flags == 0;
}
