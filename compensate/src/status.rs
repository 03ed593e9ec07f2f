//! Per-sample status: a small set of flags returned beside every value.

use core::fmt;

/// Condition flags of one compensated sample; empty means OK.
///
/// Where the reading protects people or property, every flag must be acted
/// on, never ignored: a sample with [`Status::SENSOR_FAULT`],
/// [`Status::TABLE_INVALID`], [`Status::NAN_INPUT`] or
/// [`Status::NO_TEMPERATURE`] is not a reading and must drive the device to
/// its safe state or be reported as invalid; a clamped or saturated sample
/// ([`Status::TEMPERATURE_CLAMPED`], [`Status::INPUT_OUT_OF_RANGE`],
/// [`Status::SATURATED`]) lies outside the calibrated domain and its error
/// is not bounded by the table's budget.
///
/// Flags accumulate: a sample taken while the temperature was clamped and the
/// raw input was out of range carries both. The value returned beside a
/// non-OK status is still the best available estimate (clamped inputs), or
/// `0` when the input was NaN or the table is invalid.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Status(u8);

impl Status {
    /// No condition: the value is within the calibrated domain.
    pub const OK: Self = Self(0);
    /// The temperature (or temperature signal) was outside the table axis and
    /// was clamped to its nearest end.
    pub const TEMPERATURE_CLAMPED: Self = Self(1 << 0);
    /// The raw input was outside the calibrated input range (or outside the
    /// raw axis of a 2-D correction) and was clamped.
    pub const INPUT_OUT_OF_RANGE: Self = Self(1 << 1);
    /// The raw input sat at a rail code, or the temperature signal was outside
    /// its plausible range: open or shorted sensor.
    pub const SENSOR_FAULT: Self = Self(1 << 2);
    /// The compensator has no valid table (never constructed from a valid
    /// image, or the image does not fit this compensator).
    pub const TABLE_INVALID: Self = Self(1 << 3);
    /// An input was NaN or infinite.
    pub const NAN_INPUT: Self = Self(1 << 4);
    /// The fixed-point result saturated at the i32 range.
    pub const SATURATED: Self = Self(1 << 5);
    /// No valid temperature update has happened since the compensator was
    /// built; the coefficients are those of the first temperature node.
    pub const NO_TEMPERATURE: Self = Self(1 << 6);

    /// All flags, in bit order, with their names (for `Display`).
    const NAMES: [(Self, &'static str); 7] = [
        (Self::TEMPERATURE_CLAMPED, "temperature clamped"),
        (Self::INPUT_OUT_OF_RANGE, "input out of range"),
        (Self::SENSOR_FAULT, "sensor open or short"),
        (Self::TABLE_INVALID, "table invalid"),
        (Self::NAN_INPUT, "NaN input"),
        (Self::SATURATED, "saturated"),
        (Self::NO_TEMPERATURE, "no temperature yet"),
    ];

    /// `true` when no flag is set.
    #[inline]
    #[must_use]
    pub const fn is_ok(self) -> bool {
        self.0 == 0
    }

    /// `true` when every flag of `other` is set in `self`.
    #[inline]
    #[must_use]
    pub const fn contains(self, other: Self) -> bool {
        self.0 & other.0 == other.0
    }

    /// Both sets of flags.
    #[inline]
    #[must_use]
    pub const fn union(self, other: Self) -> Self {
        Self(self.0 | other.0)
    }

    /// The raw flag bits (stable: bit 0 temperature clamped, 1 input out of
    /// range, 2 sensor fault, 3 table invalid, 4 NaN input, 5 saturated, 6 no temperature yet).
    #[inline]
    #[must_use]
    pub const fn bits(self) -> u8 {
        self.0
    }
}

impl core::ops::BitOr for Status {
    type Output = Self;
    #[inline]
    fn bitor(self, rhs: Self) -> Self {
        self.union(rhs)
    }
}

impl core::ops::BitOrAssign for Status {
    #[inline]
    fn bitor_assign(&mut self, rhs: Self) {
        *self = self.union(rhs);
    }
}

impl fmt::Display for Status {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if self.is_ok() {
            return f.write_str("ok");
        }
        let mut first = true;
        for (flag, name) in Self::NAMES {
            if self.contains(flag) {
                if !first {
                    f.write_str(", ")?;
                }
                f.write_str(name)?;
                first = false;
            }
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn display_lists_flags_in_bit_order() {
        let cases = [
            (Status::OK, "ok"),
            (Status::NAN_INPUT, "NaN input"),
            (
                Status::SENSOR_FAULT | Status::TEMPERATURE_CLAMPED,
                "temperature clamped, sensor open or short",
            ),
        ];
        for (status, want) in cases {
            let got = std::format!("{status}");
            assert_eq!(got, want, "bits {:#04x}", status.bits());
        }
    }

    #[test]
    fn flags_are_distinct_and_accumulate() {
        let mut s = Status::OK;
        for (flag, _) in Status::NAMES {
            assert!(!s.contains(flag), "{flag:?} already set in {s:?}");
            s |= flag;
            assert!(s.contains(flag));
        }
        assert!(!s.is_ok());
    }
}
