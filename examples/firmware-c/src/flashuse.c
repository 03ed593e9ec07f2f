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
    if (sd_f32_init(&state, sizeof state, in->image, in->image_len) != SD_OK) {
        return 0;
    }
    sd_result update = sd_f32_update_temperature(&state, (float)in->signal);
    sd_sample_f32 r = sd_f32_compensate(&state, (float)in->raw);
    volatile float value = sd_sample_f32_value(r);
#else
    sd_q_state state; /* on the stack, as the Rust probe's compensator */
    if (sd_q_init(&state, sizeof state, in->image, in->image_len) != SD_OK) {
        return 0;
    }
    sd_result update = sd_q_update_temperature(&state, in->signal);
    sd_sample_q r = sd_q_compensate(&state, in->raw);
    volatile int32_t value = sd_sample_q_value(r);
#endif
    (void)value;
    /* Flags 0: success and within the calibrated domain. */
    return update == 0 && sd_sample_result(r) == 0;
}
