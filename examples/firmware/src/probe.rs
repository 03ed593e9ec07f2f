//! Shared body of the flash probes of the runtime model
//! (`flashmodel_libm`, `flashmodel_micromath`).

use core::hint::black_box;

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
