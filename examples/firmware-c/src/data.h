/* The embedded demo data (data.S) and a reader of the recorded stream. */
#ifndef SD_FIRMWARE_DATA_H
#define SD_FIRMWARE_DATA_H

#include <stddef.h>
#include <stdint.h>

extern const uint8_t sd_image_q[];
extern const uint8_t sd_image_q_end[];
extern const uint8_t sd_image_f32[];
extern const uint8_t sd_image_f32_end[];
/* well_level_stream.csv, NUL-terminated. */
extern const char sd_stream_csv[];

/* Samples of the recorded stream: 116 of the simulated ramp, then four
   fault samples. */
#define SD_STREAM_SAMPLES 120
/* Normal samples, the ones the benchmark times (as the Rust benchmark). */
#define SD_STREAM_NORMAL 116

typedef struct {
    int32_t raw_code;
    int32_t temp_code;
} sd_sample;

/* Reads the stream into out[0..max]: skips blank lines, comment lines
   ('#') and the header line; each other line is "raw_code,temp_code".
   Returns the number of samples read, or -(line number) of the first line
   that is not two decimal integers. */
int32_t sd_stream_read(const char *csv, sd_sample *out, size_t max);

#endif
