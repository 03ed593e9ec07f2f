//! The command line's names for the station's choices (`clap::ValueEnum`
//! lives here, so the station library knows nothing of the command line).

/// A command-line choice mirroring a station enum variant for variant.
macro_rules! choice {
    ($(#[$m:meta])* $name:ident => $target:ty { $($(#[$vm:meta])* $var:ident),* $(,)? }) => {
        $(#[$m])*
        #[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
        pub enum $name {
            $($(#[$vm])* $var),*
        }

        impl From<$name> for $target {
            fn from(c: $name) -> Self {
                match c {
                    $($name::$var => <$target>::$var),*
                }
            }
        }
    };
}

choice! {
    /// `table --format`.
    ExportFormatArg => crate::station::export::ExportFormat {
        /// The image bytes unchanged (`.bin`).
        Bin,
        /// A Rust source file with `pub static NAME: [u8; N]` (`.rs`).
        Rust,
        /// A C header with `static const uint8_t name[N]` and an include guard (`.h`).
        C,
        /// Intel HEX (I32HEX) placing the image at `--address` (`.hex`).
        Hex,
    }
}

choice! {
    /// `table --number-format`.
    NumFormatArg => crate::station::table::NumFormat {
        /// IEEE binary32 (FPU parts).
        F32,
        /// Q-format i32 (integer-only parts, bit-exact on the host).
        Q,
    }
}

// Each choice! lists one command-line enum; the macro already holds what they share.
choice! {
    /// `table --interpolation`.
    InterpArg => crate::station::table::InterpKind {
        /// Piecewise linear.
        Linear,
        /// Monotone cubic (Fritsch-Carlson).
        MonotoneCubic,
        /// Piecewise-linear offset and gain columns plus a 2-D correction over
        /// temperature x raw signal, interpolated bilinearly (for an output
        /// whose nonlinearity in the stimulus changes with temperature).
        Bilinear2d,
    }
}

choice! {
    /// `table --signal-unit`.
    SignalUnitArg => crate::station::table::SignalUnit {
        /// The signal in the spec's units (ohm), as the chamber CSV records it.
        Ohm,
        /// Whole codes of the temperature-signal ADC (the spec's `signal_adc`),
        /// as firmware reads them: no conversion on the part, and Q images take
        /// the code itself (0 fraction bits).
        AdcCode,
    }
}

choice! {
    /// `table --channel-axis`.
    AxisArg => crate::station::table::AxisKind {
        /// Over temperature, after a thermometer map of its own: two look-ups
        /// per temperature update, and the thermometer and the channels are
        /// sized apart.
        Temperature,
        /// Over the temperature signal itself: the station composes the
        /// thermometer into every channel, so a temperature update is one
        /// look-up; the thermometer column shares the channels' nodes and is
        /// read only when the firmware asks for the temperature.
        Signal,
    }
}
