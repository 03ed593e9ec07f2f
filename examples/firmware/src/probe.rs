//! Shared frame of the flash probes (`flashuse`, `flashref`, `flashpoly`,
//! `flashmodel_libm`, `flashmodel_micromath`): the same image, inputs the
//! optimiser cannot see, the same exit path, so that the difference in
//! size between two probes is what their probe functions call.

use core::hint::black_box;

use crate::rt;

/// The table image a probe may parse: f32 on the Cortex-M4F, Q on the
/// Cortex-M0. Every probe keeps it in flash, so it cancels in a difference.
#[cfg(fpu)]
static IMAGE: &[u8] = include_bytes!("../data/well_level_f32.bin");
#[cfg(not(fpu))]
static IMAGE: &[u8] = include_bytes!("../data/well_level_q.bin");

/// What a probe function gets, all through `black_box`.
#[derive(Clone, Copy, Debug)]
pub struct Inputs {
    /// The table image.
    pub image: &'static [u8],
    /// Its first byte (read by every probe, which keeps the image linked).
    pub first: u8,
    /// A temperature-signal code.
    pub signal: i32,
    /// A raw code.
    pub raw: i32,
}

/// Runs `probe` on the inputs and exits with success when it returns
/// `true`. Called by [`crate::flash_probe!`].
pub fn run(probe: fn(&Inputs) -> bool) -> ! {
    let image = black_box(IMAGE);
    let inputs = Inputs {
        image,
        first: image.first().copied().unwrap_or(0),
        signal: black_box(4_194_304i32),
        raw: black_box(2_000_000i32),
    };
    if probe(&inputs) {
        rt::exit_success()
    } else {
        rt::exit_failure()
    }
}

/// The trivial computation `flashref` stands in for compensation with
/// (one subtract and one multiply on the inputs).
pub fn reference(i: &Inputs) {
    #[cfg(fpu)]
    let value = (i.raw as f32 - i.signal as f32) * f32::from(i.first);
    #[cfg(not(fpu))]
    let value = i
        .raw
        .wrapping_sub(i.signal)
        .wrapping_mul(i32::from(i.first));
    black_box(value);
}

/// Defines a flash probe's entry point (running `$probe` through
/// [`run`]) and its panic handler (exit with failure).
#[macro_export]
macro_rules! flash_probe {
    ($probe:path) => {
        #[cortex_m_rt::entry]
        fn main() -> ! {
            $crate::probe::run($probe)
        }

        #[panic_handler]
        fn panic(_: &core::panic::PanicInfo) -> ! {
            $crate::rt::exit_failure()
        }
    };
}

/// Evaluates what a firmware using the runtime model per temperature update
/// calls (conductivity, Hall sensitivity ratio, piezoresistance-factor
/// ratio) with backend `B`, on inputs the optimiser cannot see.
#[cfg(any(feature = "libm", feature = "micromath"))]
pub fn runtime_model<B: compensate::math::Backend>() {
    use compensate::model::{Model, ModelParams};
    let m: Model<B> = Model::with_backend(black_box(ModelParams::silicon(0.0, 2e18)));
    let t_k = black_box(330.0f32);
    let t_ref_k = black_box(298.15f32);
    black_box(m.conductivity_s_cm(t_k));
    black_box(m.hall_current_bias_ratio(t_k, t_ref_k));
    black_box(m.piezo_factor_ratio(t_k, t_ref_k));
}
