/* Reader of the recorded stream, accepting what the Rust firmware's
   stream parser accepts for this file. */
#include "data.h"

/* Parses an optionally negative decimal int32 at *p, stopping at the first
   non-digit; returns 0 if there is no digit or the value overflows. */
static int parse_i32(const char **p, int32_t *out)
{
    const char *s = *p;
    int neg = 0;
    if (*s == '-') {
        neg = 1;
        s++;
    }
    if (*s < '0' || *s > '9') {
        return 0;
    }
    int64_t v = 0;
    while (*s >= '0' && *s <= '9') {
        v = v * 10 + (*s - '0');
        if (v > 2147483648LL) {
            return 0;
        }
        s++;
    }
    if (neg) {
        v = -v;
    }
    if (v > 2147483647LL) {
        return 0;
    }
    *out = (int32_t)v;
    *p = s;
    return 1;
}

static int starts_with(const char *s, const char *prefix)
{
    while (*prefix != '\0') {
        if (*s++ != *prefix++) {
            return 0;
        }
    }
    return 1;
}

int32_t sd_stream_read(const char *csv, sd_sample *out, size_t max)
{
    size_t n = 0;
    int32_t line = 0;
    const char *p = csv;
    while (*p != '\0') {
        line++;
        const char *end = p;
        while (*end != '\0' && *end != '\n') {
            end++;
        }
        int blank = 1;
        for (const char *c = p; c < end; c++) {
            if (*c != ' ' && *c != '\r' && *c != '\t') {
                blank = 0;
            }
        }
        if (!blank && *p != '#' && !starts_with(p, "raw_code")) {
            sd_sample s;
            const char *q = p;
            if (!parse_i32(&q, &s.raw_code) || *q++ != ',' || !parse_i32(&q, &s.temp_code)) {
                return -line;
            }
            while (q < end && (*q == '\r' || *q == ' ')) {
                q++;
            }
            if (q != end || n >= max) {
                return -line;
            }
            out[n++] = s;
        }
        p = (*end == '\n') ? end + 1 : end;
    }
    return (int32_t)n;
}
