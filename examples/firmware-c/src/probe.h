/* Shared frame of the flash probes (flashuse.c, flashref.c): the same
   image and inputs, read through volatile so the optimiser cannot see
   them, and the same exit path, so that the difference in size between the
   two programs is what flashuse's calls link from the library. */
#ifndef SD_FIRMWARE_PROBE_H
#define SD_FIRMWARE_PROBE_H

#include "data.h"
#include "rt.h"

typedef struct {
    const uint8_t *image;
    size_t image_len;
    uint8_t first;
    int32_t signal;
    int32_t raw;
} sd_probe_inputs;

/* The probe each program defines; returns whether the calls succeeded. */
static int probe(const sd_probe_inputs *in);

void sd_main(void)
{
    /* The f32 image on the Cortex-M4F, the Q image on the Cortex-M0, as the
       Rust firmware's probes; both probes keep it linked. */
#if defined(__ARM_FP)
    const uint8_t *volatile image = sd_image_f32;
    size_t len = (size_t)(sd_image_f32_end - sd_image_f32);
#else
    const uint8_t *volatile image = sd_image_q;
    size_t len = (size_t)(sd_image_q_end - sd_image_q);
#endif
    volatile size_t image_len = len;
    volatile int32_t signal = 4194304;
    volatile int32_t raw = 2000000;
    sd_probe_inputs in = {image, image_len, image[0], signal, raw};
    if (probe(&in)) {
        sd_exit_success();
    }
    sd_exit_failure();
}

#endif
