/* Flash probe, reference: flashuse with the compensation calls replaced by
   the Rust probes' trivial computation on the same inputs (one subtract and
   one multiply), so that flashuse minus flashref is the library code. */
#include "probe.h"

static int probe(const sd_probe_inputs *in)
{
#if defined(__ARM_FP)
    volatile float value = ((float)in->raw - (float)in->signal) * (float)in->first;
#else
    volatile int32_t value = (int32_t)((uint32_t)in->raw - (uint32_t)in->signal) * (int32_t)in->first;
#endif
    (void)value;
    return 1;
}
