//! Link-time proof that the compensation path cannot panic.
//!
//! The panic handler calls a symbol that is defined nowhere. With fat LTO
//! the handler (and the reference to the symbol) survives only if some panic
//! remains reachable from this program after optimisation, so the link fails
//! exactly when the compensation path (image parsing, both compensators'
//! temperature updates and samples, and on the FPU target every function of
//! the runtime model with both math backends) still contains a panic. Every input goes
//! through `black_box`, so nothing is proven merely by constant folding the
//! embedded image. Nothing is printed: formatting code could bring panics
//! of its own. The program exits 0 when the image parsed and 1 otherwise.
#![no_std]
#![no_main]

use compensate::{FixedCompensator, TableView};
use core::hint::black_box;
use cortex_m_rt::entry;
use semidrift_firmware::rt;

static IMAGE_Q: &[u8] = include_bytes!("../../data/well_level_q.bin");
#[cfg(fpu)]
static IMAGE_F32: &[u8] = include_bytes!("../../data/well_level_f32.bin");

#[entry]
fn main() -> ! {
    let mut ok = true;
    let mut fixed = match TableView::parse_q(black_box(IMAGE_Q)) {
        Ok(view) => FixedCompensator::new(&view).unwrap_or(FixedCompensator::unconfigured()),
        Err(_) => {
            ok = false;
            FixedCompensator::unconfigured()
        }
    };
    let status = fixed.update_temperature(black_box(4_194_304));
    let reading = fixed.compensate_sample(black_box(2_000_000));
    black_box((status, reading));

    #[cfg(fpu)]
    {
        let mut float = match TableView::parse(black_box(IMAGE_F32)) {
            Ok(view) => compensate::Compensator::new(&view)
                .unwrap_or(compensate::Compensator::unconfigured()),
            Err(_) => {
                ok = false;
                compensate::Compensator::unconfigured()
            }
        };
        let status = float.update_temperature(black_box(4_194_304.0));
        let reading = float.compensate_sample(black_box(2_000_000.0));
        black_box((status, reading));
    }

    // The runtime model with each math backend.
    #[cfg(all(fpu, feature = "libm"))]
    model_path::<compensate::math::Libm>();
    #[cfg(all(fpu, feature = "micromath"))]
    model_path::<compensate::math::Micromath>();

    // The self-test of this proof: with the feature on, an index the
    // optimiser cannot bound must make the link fail.
    #[cfg(feature = "nopanic-selftest")]
    {
        let nodes = [1u8, 2, 3];
        black_box(nodes[black_box(5usize)]);
    }

    if ok {
        rt::exit_success()
    } else {
        rt::exit_failure()
    }
}

/// Every public function of the runtime model on inputs the optimiser
/// cannot see.
#[cfg(all(fpu, any(feature = "libm", feature = "micromath")))]
fn model_path<B: compensate::math::Backend>() {
    use compensate::model::{Model, ModelParams};
    let m: Model<B> = Model::with_backend(black_box(ModelParams::silicon(0.0, 2e18)));
    let t_k = black_box(330.0f32);
    let t_ref_k = black_box(298.15f32);
    black_box(m.band_gap_ev(t_k));
    black_box(m.effective_dos_cm3(t_k));
    black_box(m.intrinsic_density_cm3(t_k));
    black_box(m.carriers(t_k));
    black_box(m.electron_mobility_cm2_vs(black_box(1e16), t_k));
    black_box(m.mobilities_cm2_vs(t_k));
    black_box(m.conductivity_s_cm(t_k));
    black_box(m.conductivity_ratio(t_k, t_ref_k));
    black_box(m.hall_coefficient_cm3_c(t_k));
    black_box(m.hall_current_bias_ratio(t_k, t_ref_k));
    black_box(m.hall_voltage_bias_ratio(t_k, t_ref_k));
    black_box(m.piezo_factor_ratio(t_k, t_ref_k));
}

#[panic_handler]
fn panic(_: &core::panic::PanicInfo) -> ! {
    unsafe extern "C" {
        /// Defined nowhere: referencing it makes the link fail.
        fn semidrift_compensation_path_can_panic() -> !;
    }
    // SAFETY: never executed; if this handler survives LTO the link fails
    // with an undefined reference, which is the point of this binary.
    unsafe { semidrift_compensation_path_can_panic() }
}

#[cortex_m_rt::exception]
unsafe fn HardFault(_frame: &cortex_m_rt::ExceptionFrame) -> ! {
    rt::exit_failure()
}

#[cortex_m_rt::exception]
unsafe fn DefaultHandler(_irqn: i16) {
    rt::exit_failure()
}
