//! A generic 24-bit ADC front end read over I2C (embedded-hal 1.0), for a
//! bridge or Hall element and its temperature signal.
//!
//! # Protocol (ours; any front end that speaks it works)
//!
//! The device answers at a 7-bit I2C address and has two registers:
//!
//! | step | bus traffic | meaning |
//! |---|---|---|
//! | start | write `[0x01, channel]` | start one conversion of `channel` (0..=3) |
//! | wait | — | the driver waits the conversion time with `DelayNs` |
//! | result | write `[0x02]`, read 4 bytes | `status, b2, b1, b0` |
//!
//! `status` bit 7: result ready; bit 6: input over range (the code is
//! clipped to the rail); bits 1..0: channel of the result. `b2 b1 b0` is
//! the 24-bit two's-complement code, most significant byte first.
//! If the result is not ready the driver waits the conversion time again,
//! at most [`MAX_POLLS`] times in all, then reports [`Error::NotReady`]:
//! every call is bounded in time.
//!
//! Conventional channels: 0 element output, 1 temperature signal (e.g. the
//! bridge's own resistance), 2 excitation monitor (for ratiometric use).

use core::fmt;
use embedded_hal::delay::DelayNs;
use embedded_hal::i2c::I2c;

/// Register that starts a conversion.
pub const REG_CONVERT: u8 = 0x01;
/// Register that holds the last result.
pub const REG_RESULT: u8 = 0x02;
/// Status bit: result ready.
pub const STATUS_READY: u8 = 1 << 7;
/// Status bit: input over range.
pub const STATUS_OVERRANGE: u8 = 1 << 6;
/// Highest channel number.
pub const MAX_CHANNEL: u8 = 3;
/// Result polls per conversion before [`Error::NotReady`].
pub const MAX_POLLS: u8 = 4;

/// One conversion result.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Sample {
    /// Sign-extended 24-bit code.
    pub code: i32,
    /// The input was over range; `code` is clipped.
    pub overrange: bool,
}

/// Front-end errors: the bus error, or a protocol fault.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum Error<E> {
    /// The I2C bus reported an error.
    Bus(E),
    /// No result after [`MAX_POLLS`] waits.
    NotReady,
    /// The result belongs to another channel than requested.
    ChannelMismatch {
        /// Channel requested.
        requested: u8,
        /// Channel in the result's status byte.
        echoed: u8,
    },
    /// Channel number above [`MAX_CHANNEL`].
    InvalidChannel(u8),
}

impl<E: fmt::Debug> fmt::Display for Error<E> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::Bus(e) => write!(f, "I2C bus error: {e:?}"),
            Self::NotReady => write!(f, "ADC result not ready after {MAX_POLLS} polls"),
            Self::ChannelMismatch { requested, echoed } => {
                write!(f, "ADC returned channel {echoed}, requested {requested}")
            }
            Self::InvalidChannel(c) => {
                write!(f, "ADC channel {c} does not exist (max {MAX_CHANNEL})")
            }
        }
    }
}

impl<E: fmt::Debug> core::error::Error for Error<E> {}

/// Driver for a front end speaking the protocol above.
#[derive(Debug)]
pub struct FrontEnd<I2C, D> {
    i2c: I2C,
    delay: D,
    address: u8,
    conversion_ns: u32,
}

impl<I2C: I2c, D: DelayNs> FrontEnd<I2C, D> {
    /// Takes the bus and a delay; `conversion_ns` is the device's
    /// conversion time.
    pub const fn new(i2c: I2C, delay: D, address: u8, conversion_ns: u32) -> Self {
        Self {
            i2c,
            delay,
            address,
            conversion_ns,
        }
    }

    /// Gives the bus and the delay back.
    pub fn release(self) -> (I2C, D) {
        (self.i2c, self.delay)
    }

    /// Converts `channel` once and returns the result.
    ///
    /// # Errors
    /// [`Error::InvalidChannel`] before any bus traffic; [`Error::Bus`] as
    /// soon as the bus fails; [`Error::NotReady`] or
    /// [`Error::ChannelMismatch`] on protocol faults.
    pub fn read(&mut self, channel: u8) -> Result<Sample, Error<I2C::Error>> {
        if channel > MAX_CHANNEL {
            return Err(Error::InvalidChannel(channel));
        }
        self.i2c
            .write(self.address, &[REG_CONVERT, channel])
            .map_err(Error::Bus)?;
        for _ in 0..MAX_POLLS {
            self.delay.delay_ns(self.conversion_ns);
            let mut buf = [0u8; 4];
            self.i2c
                .write_read(self.address, &[REG_RESULT], &mut buf)
                .map_err(Error::Bus)?;
            let [status, b2, b1, b0] = buf;
            if status & STATUS_READY == 0 {
                continue;
            }
            let echoed = status & 0x03;
            if echoed != channel {
                return Err(Error::ChannelMismatch {
                    requested: channel,
                    echoed,
                });
            }
            // Sign-extend 24 bits: place in the top of an i32, shift back.
            let code = i32::from_be_bytes([b2, b1, b0, 0]) >> 8;
            return Ok(Sample {
                code,
                overrange: status & STATUS_OVERRANGE != 0,
            });
        }
        Err(Error::NotReady)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use embedded_hal::i2c::ErrorKind;
    use embedded_hal_mock::eh1::delay::{CheckedDelay, NoopDelay, Transaction as DelayTx};
    use embedded_hal_mock::eh1::i2c::{Mock as I2cMock, Transaction as I2cTx};

    const ADDR: u8 = 0x48;

    fn start(ch: u8) -> I2cTx {
        I2cTx::write(ADDR, vec![REG_CONVERT, ch])
    }

    fn result(bytes: [u8; 4]) -> I2cTx {
        I2cTx::write_read(ADDR, vec![REG_RESULT], bytes.to_vec())
    }

    #[test]
    fn reads_signed_24_bit_codes() {
        // (status, data bytes, expected code, overrange)
        let cases = [
            (0x80, [0x00, 0x00, 0x01], 1, false),
            (0x80, [0x7F, 0xFF, 0xFF], 8_388_607, false),
            (0x80, [0x80, 0x00, 0x00], -8_388_608, false),
            (0x80, [0xFF, 0xFF, 0xFF], -1, false),
            (0xC0, [0x7F, 0xFF, 0xFF], 8_388_607, true),
        ];
        for (status, [b2, b1, b0], code, overrange) in cases {
            let mut i2c = I2cMock::new(&[start(0), result([status, b2, b1, b0])]);
            let mut delay = CheckedDelay::new(&[DelayTx::delay_ns(50_000)]);
            let mut fe = FrontEnd::new(i2c.clone(), delay.clone(), ADDR, 50_000);
            let got = fe.read(0);
            assert_eq!(
                got,
                Ok(Sample { code, overrange }),
                "bytes {b2:02x}{b1:02x}{b0:02x}"
            );
            i2c.done();
            delay.done();
        }
    }

    #[test]
    fn polls_until_ready_then_gives_up() {
        let mut i2c = I2cMock::new(&[
            start(1),
            result([0x01, 0, 0, 0]),
            result([0x81, 0x00, 0x10, 0x00]),
        ]);
        let mut fe = FrontEnd::new(i2c.clone(), NoopDelay::new(), ADDR, 1000);
        assert_eq!(
            fe.read(1),
            Ok(Sample {
                code: 4096,
                overrange: false
            })
        );
        let (_, _) = fe.release();
        i2c.done();

        let mut never = vec![start(1)];
        never.extend((0..MAX_POLLS).map(|_| result([0x01, 0, 0, 0])));
        let mut i2c = I2cMock::new(&never);
        let mut fe = FrontEnd::new(i2c.clone(), NoopDelay::new(), ADDR, 1000);
        assert_eq!(fe.read(1), Err(Error::NotReady));
        i2c.done();
    }

    #[test]
    fn bus_errors_and_protocol_faults_are_reported() {
        // Error on the start write: no further traffic.
        let mut i2c = I2cMock::new(&[start(2).with_error(ErrorKind::Other)]);
        let mut fe = FrontEnd::new(i2c.clone(), NoopDelay::new(), ADDR, 1000);
        assert_eq!(fe.read(2), Err(Error::Bus(ErrorKind::Other)));
        i2c.done();

        // Error on the result read.
        let mut i2c = I2cMock::new(&[
            start(0),
            result([0x80, 0, 0, 0]).with_error(ErrorKind::ArbitrationLoss),
        ]);
        let mut fe = FrontEnd::new(i2c.clone(), NoopDelay::new(), ADDR, 1000);
        let err = fe.read(0);
        assert_eq!(err, Err(Error::Bus(ErrorKind::ArbitrationLoss)));
        assert_eq!(
            std::format!("{}", err.unwrap_err()),
            "I2C bus error: ArbitrationLoss"
        );
        i2c.done();

        // Wrong channel echoed.
        let mut i2c = I2cMock::new(&[start(0), result([0x82, 0, 0, 0])]);
        let mut fe = FrontEnd::new(i2c.clone(), NoopDelay::new(), ADDR, 1000);
        assert_eq!(
            fe.read(0),
            Err(Error::ChannelMismatch {
                requested: 0,
                echoed: 2
            })
        );
        i2c.done();

        // Invalid channel: no bus traffic at all (empty expectation list).
        let mut i2c = I2cMock::new(&[]);
        let mut fe = FrontEnd::new(i2c.clone(), NoopDelay::new(), ADDR, 1000);
        assert_eq!(fe.read(4), Err(Error::InvalidChannel(4)));
        i2c.done();
    }
}
