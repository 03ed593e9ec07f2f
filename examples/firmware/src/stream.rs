//! The simulated sample stream the firmware replays: a small CSV embedded
//! with `include_str!`, one sample per line, `raw_code,temp_code` (the
//! sense element's ADC code and the temperature signal's ADC code). Lines
//! starting with `#` and the header line are skipped.

/// One simulated sample.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Sample {
    /// ADC code of the sense element's output.
    pub raw_code: i32,
    /// ADC code of the temperature signal.
    pub temp_code: i32,
}

/// A line of the stream that is not `int,int`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct ParseError {
    /// 1-based line number in the CSV.
    pub line: usize,
}

/// Parses a decimal i32 with optional leading `-`; `None` on anything else
/// or on overflow.
fn parse_i32(s: &str) -> Option<i32> {
    let s = s.trim();
    let (neg, digits) = match s.strip_prefix('-') {
        Some(rest) => (true, rest),
        None => (false, s),
    };
    if digits.is_empty() {
        return None;
    }
    let mut v: i64 = 0;
    for b in digits.bytes() {
        if !b.is_ascii_digit() {
            return None;
        }
        v = v * 10 + i64::from(b - b'0');
        if v > 1 << 31 {
            return None;
        }
    }
    i32::try_from(if neg { -v } else { v }).ok()
}

/// Iterates over the samples of `csv`; an error names the 1-based line.
pub fn samples(csv: &str) -> impl Iterator<Item = Result<Sample, ParseError>> + '_ {
    csv.lines()
        .enumerate()
        .filter(|(_, l)| {
            let l = l.trim();
            !l.is_empty() && !l.starts_with('#') && !l.starts_with("raw_code")
        })
        .map(|(i, l)| {
            let err = ParseError { line: i + 1 };
            let mut fields = l.split(',');
            let raw_code = fields.next().and_then(parse_i32).ok_or(err)?;
            let temp_code = fields.next().and_then(parse_i32).ok_or(err)?;
            if fields.next().is_some() {
                return Err(err);
            }
            Ok(Sample {
                raw_code,
                temp_code,
            })
        })
}

/// Copies up to `N` samples of `csv` into an array (the benchmark's input
/// ring), returning how many were filled.
pub fn fill<const N: usize>(csv: &str, out: &mut [Sample; N]) -> Result<usize, ParseError> {
    let mut n = 0;
    for (slot, s) in out.iter_mut().zip(samples(csv)) {
        *slot = s?;
        n += 1;
    }
    Ok(n)
}

/// The simulated stream's first `RAMP` temperatures rise monotonically over
/// the whole range; the benchmark's worst-case stream ([`jumps`]) is drawn
/// from them.
pub const RAMP: usize = 58;

/// The benchmark's slow drift ([`drift`]) moves between simulated
/// temperatures `DRIFT_FROM` and `DRIFT_FROM + 1` (mid-range, about 1.8 K
/// apart).
pub const DRIFT_FROM: usize = 28;

/// A slow drift for the temperature-update benchmark: `N` signals from `a`
/// to `b` and back in equal steps (a triangle, so the replay loop has no
/// jump where it wraps around).
///
/// Between two neighbouring simulated temperatures (about 1.8 K apart in
/// the demo stream) that is a step of about 0.03 K per update: what a
/// part sees when it updates its temperature often compared with how fast
/// its package warms (seconds to minutes; common practice).
#[must_use]
pub fn drift<const N: usize>(a: i32, b: i32) -> [i32; N] {
    let half = (N / 2).max(1) as i64;
    core::array::from_fn(|k| {
        let k = k as i64;
        let up = if k <= half { k } else { 2 * half - k };
        let (a, b) = (i64::from(a), i64::from(b));
        // Between a and b (0 <= up <= half), so the cast back is exact.
        (a + (b - a) * up / half) as i32
    })
}

/// The worst case for the temperature-update benchmark: `N` signals taken
/// from `ramp` (a monotone ramp over the whole range) so that each one is
/// half the ramp away from the one before, `ramp[j]`, `ramp[j + len / 2]`,
/// `ramp[j + 1]`, ... (indices modulo `len`): no two consecutive updates
/// share a node interval on a table with more than two intervals over the
/// ramp. An empty ramp gives zeros.
#[must_use]
pub fn jumps<const N: usize>(ramp: &[i32]) -> [i32; N] {
    let len = ramp.len();
    core::array::from_fn(|k| {
        let (j, far) = (k / 2, k % 2 == 1);
        let i = if far { j + len / 2 } else { j };
        ramp.get(i.checked_rem(len).unwrap_or(0))
            .copied()
            .unwrap_or(0)
    })
}
