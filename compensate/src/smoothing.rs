//! Moving average of the temperature signal in a fixed-capacity window
//! (`heapless::HistoryBuffer`), to keep ADC noise on the thermometer out of
//! the cached coefficients.
//!
//! A window of `N` samples divides white noise by `sqrt(N)` and delays a
//! temperature ramp by `(N - 1) / 2` sample periods: during a ramp of
//! `r` K/s sampled every `ts` s, the lag adds `r ts (N - 1) / 2` kelvin to the
//! temperature-signal error term of the budget.
#![deny(clippy::arithmetic_side_effects)]

use heapless::HistoryBuffer;

/// Moving average of the last `N` f32 temperature signals. Non-finite
/// samples are ignored (they never enter the window).
#[derive(Clone, Debug)]
pub struct MovingAverage<const N: usize> {
    window: HistoryBuffer<f32, N>,
}

impl<const N: usize> Default for MovingAverage<N> {
    fn default() -> Self {
        Self::new()
    }
}

impl<const N: usize> MovingAverage<N> {
    /// An empty window.
    #[must_use]
    pub const fn new() -> Self {
        const { assert!(N >= 1, "window needs at least one sample") };
        Self {
            window: HistoryBuffer::new(),
        }
    }

    /// Adds a sample and returns the mean of the window; `None` while the
    /// window is empty (only NaN/inf samples so far).
    ///
    /// The mean is recomputed from the window each time (N additions):
    /// no running sum, so no f32 drift accumulates over long uptimes.
    pub fn push(&mut self, x: f32) -> Option<f32> {
        if x.is_finite() {
            self.window.write(x);
        }
        self.mean()
    }

    /// Mean of the samples in the window.
    #[must_use]
    pub fn mean(&self) -> Option<f32> {
        let n = self.window.len();
        if n == 0 {
            return None;
        }
        let sum: f32 = self.window.as_slice().iter().sum();
        Some(sum / n as f32)
    }

    /// Samples currently in the window.
    #[must_use]
    pub fn len(&self) -> usize {
        self.window.len()
    }

    /// `true` before the first finite sample.
    #[must_use]
    pub fn is_empty(&self) -> bool {
        self.window.len() == 0
    }
}

/// Moving average of the last `N` i32 samples with an exact i64 running
/// sum; the mean is rounded half away from zero. Pure integer path.
#[derive(Clone, Debug)]
pub struct MovingAverageQ<const N: usize> {
    window: HistoryBuffer<i32, N>,
    sum: i64,
}

impl<const N: usize> Default for MovingAverageQ<N> {
    fn default() -> Self {
        Self::new()
    }
}

impl<const N: usize> MovingAverageQ<N> {
    /// An empty window.
    #[must_use]
    pub const fn new() -> Self {
        const { assert!(N >= 1 && N <= 1 << 24, "window of 1..=2^24 samples") };
        Self {
            window: HistoryBuffer::new(),
            sum: 0,
        }
    }

    /// Adds a sample and returns the rounded mean of the window.
    pub fn push(&mut self, x: i32) -> i32 {
        // The sample about to be overwritten leaves the sum. With at most
        // 2^24 samples of |x| <= 2^31 the sum stays below 2^55.
        if self.window.len() == N
            && let Some(&old) = self.window.oldest_ordered().next()
        {
            self.sum = self.sum.wrapping_sub(i64::from(old));
        }
        self.window.write(x);
        self.sum = self.sum.wrapping_add(i64::from(x));
        self.mean()
    }

    /// Rounded mean of the window (0 when empty).
    #[must_use]
    pub fn mean(&self) -> i32 {
        let n = self.window.len() as i64;
        if n == 0 {
            return 0;
        }
        // n >= 1 and |sum| < 2^55: no overflow, no division by zero.
        let half = n.wrapping_div(2);
        let q = if self.sum >= 0 {
            self.sum.wrapping_add(half).checked_div(n).unwrap_or(0)
        } else {
            self.sum.wrapping_sub(half).checked_div(n).unwrap_or(0)
        };
        // The mean of i32 samples is an i32.
        q as i32
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn f32_window() {
        let mut m = MovingAverage::<4>::new();
        assert_eq!(m.mean(), None);
        assert_eq!(m.push(f32::NAN), None);
        // (sample, expected mean)
        let cases = [
            (1.0, 1.0),
            (3.0, 2.0),
            (5.0, 3.0),
            (7.0, 4.0),
            (9.0, 6.0),
            (f32::INFINITY, 6.0),
        ];
        for (x, want) in cases {
            let got = m.push(x);
            assert_eq!(got, Some(want), "push({x}): got {got:?}, expected {want}");
        }
        assert_eq!(m.len(), 4);
    }

    #[test]
    fn q_window_is_exact_over_many_samples() {
        let mut m = MovingAverageQ::<8>::new();
        let mut hist = std::vec::Vec::new();
        let mut x: i32 = 12345;
        for _ in 0..10_000 {
            // LCG samples across the full i32 range exercise the i64 sum.
            x = x.wrapping_mul(1_103_515_245).wrapping_add(12345);
            hist.push(i64::from(x));
            let got = m.push(x);
            let w = &hist[hist.len().saturating_sub(8)..];
            let want = w.iter().sum::<i64>() as f64 / w.len() as f64;
            assert!(
                (f64::from(got) - want).abs() <= 0.5,
                "got {got}, expected {want}"
            );
        }
        let mut n = MovingAverageQ::<3>::new();
        assert_eq!(n.mean(), 0);
        assert_eq!(n.push(-3), -3);
        assert_eq!(n.push(-4), -4); // -3.5 rounds away from zero
    }
}
