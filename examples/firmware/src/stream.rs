//! The recorded sample stream the firmware replays: a small CSV embedded
//! with `include_str!`, one sample per line, `raw_code,temp_code` (the
//! sense element's ADC code and the temperature signal's ADC code). Lines
//! starting with `#` and the header line are skipped.

/// One recorded sample.
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
