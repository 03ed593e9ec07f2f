//! Deviation of the runtime crate's reduced f32 model from the host's full
//! f64 model, for silicon over -55..175 C and a range of dopings, for every
//! enabled math backend; asserted under the bounds the runtime crate
//! documents (`compensate::model::bounds`).
//!
//! The runtime parameters are [`ModelParams::silicon`] (published values)
//! with two per-part parameters fitted here the way the calibration station
//! would: the effective dopant level (the full model's ionization energy
//! falls with doping, Altermatt et al. 2006) and the piezoresistance
//! exponent (Kanda 1982's factor flattens when degenerate). The fit is a
//! bounded grid search on the same temperature grid.

use compensate::math::Backend;
use compensate::model::{Model, ModelParams, bounds};
use host_tools::physics::{Material, ModelPoint, Sample, Species, evaluate};

const T_REF_K: f64 = 298.15;

/// -55..=175 C every 5 C.
fn temperatures_k() -> impl Iterator<Item = f64> {
    (0..=46).map(|i| 218.15 + 5.0 * f64::from(i))
}

struct Case {
    donor: Option<(Species, f64)>,
    acceptor: Option<(Species, f64)>,
}

impl Case {
    fn sample(&self) -> Sample {
        Sample::new(
            Material::Si,
            self.donor.as_slice(),
            self.acceptor.as_slice(),
        )
    }
    fn n_d(&self) -> f32 {
        self.donor.map_or(0.0, |d| d.1 as f32)
    }
    fn n_a(&self) -> f32 {
        self.acceptor.map_or(0.0, |d| d.1 as f32)
    }
    fn n_type(&self) -> bool {
        self.n_d() > self.n_a()
    }
}

fn cases() -> Vec<Case> {
    let mut v = Vec::new();
    for n in [1e14, 1e15, 1e16, 1e17, 1e18, 1e19] {
        v.push(Case {
            donor: Some((Species::P, n)),
            acceptor: None,
        });
        v.push(Case {
            donor: None,
            acceptor: Some((Species::B, n)),
        });
    }
    // Compensated: the well-level logger's boron 2e18 with 1e17 P, and an
    // n-type Hall plate with 10 % boron.
    v.push(Case {
        donor: Some((Species::P, 1e17)),
        acceptor: Some((Species::B, 2e18)),
    });
    v.push(Case {
        donor: Some((Species::P, 1e16)),
        acceptor: Some((Species::B, 1e15)),
    });
    v
}

fn rel(got: f32, want: f64) -> f64 {
    ((f64::from(got) - want) / want).abs()
}

/// Worst deviations of one case for backend `B` with given fitted values.
#[derive(Default, Debug, Clone, Copy)]
struct Worst {
    ni: f64,
    majority: f64,
    mobility: f64,
    sigma_ratio: f64,
    hall_ratio: f64,
    piezo_ratio: f64,
}

/// Fitted DOS: common exponent of Nc and Nv and a common scale factor.
#[derive(Clone, Copy)]
struct Dos {
    exp: f32,
    scale: f32,
}

/// Fitted majority-carrier mobility: scale of the Caughey–Thomas mobilities
/// and lattice temperature exponent.
#[derive(Clone, Copy)]
struct Mob {
    scale: f32,
    delta_exp: f32,
}

const MOB_PUBLISHED: Mob = Mob {
    scale: 1.0,
    delta_exp: f32::NAN,
};

fn params(case: &Case, dos: Dos, mob: Mob, level_ev: f32, piezo_exp: f32) -> ModelParams {
    let mut p = ModelParams::silicon(case.n_d(), case.n_a());
    let ct = if case.n_type() {
        &mut p.electron
    } else {
        &mut p.hole
    };
    ct.mu_min_cm2_vs *= mob.scale;
    ct.mu_delta_cm2_vs *= mob.scale;
    if mob.delta_exp.is_finite() {
        ct.delta_exp = mob.delta_exp;
    }
    p.nc_exp = dos.exp;
    p.nv_exp = dos.exp;
    p.nc_300_cm3 *= dos.scale;
    p.nv_300_cm3 *= dos.scale;
    p.donor_level_ev = level_ev;
    p.acceptor_level_ev = level_ev;
    p.piezo_exp = piezo_exp;
    p
}

fn measure<B: Backend>(
    case: &Case,
    pts: &[ModelPoint],
    reference: &ModelPoint,
    p: ModelParams,
) -> Worst {
    let m = Model::<B>::with_backend(p);
    let t_ref = T_REF_K as f32;
    let mut w = Worst::default();
    for pt in pts {
        let t = pt.t_k as f32;
        w.ni = w.ni.max(rel(m.intrinsic_density_cm3(t), pt.ni_cm3));
        let c = m.carriers(t);
        let (mu_n, mu_p) = m.mobilities_cm2_vs(t);
        let (maj, maj_full, mu, mu_full) = if case.n_type() {
            (c.n_cm3, pt.n_cm3, mu_n, pt.mu_n_per_free_carrier_cm2_vs)
        } else {
            (c.p_cm3, pt.p_cm3, mu_p, pt.mu_p_per_free_carrier_cm2_vs)
        };
        w.majority = w.majority.max(rel(maj, maj_full));
        w.mobility = w.mobility.max(rel(mu, mu_full));
        w.sigma_ratio = w.sigma_ratio.max(rel(
            m.conductivity_ratio(t, t_ref),
            reference.rho_ohm_cm / pt.rho_ohm_cm,
        ));
        let hall_full = pt.hall_coefficient_cm3_c.abs() / reference.hall_coefficient_cm3_c.abs();
        w.hall_ratio = w
            .hall_ratio
            .max(rel(m.hall_current_bias_ratio(t, t_ref), hall_full));
        let hv_full = pt.hall_mobility_cm2_vs / reference.hall_mobility_cm2_vs;
        w.hall_ratio = w
            .hall_ratio
            .max(rel(m.hall_voltage_bias_ratio(t, t_ref), hv_full));
        if let (Some(pf), Some(pr)) = (pt.piezo_factor, reference.piezo_factor) {
            w.piezo_ratio = w
                .piezo_ratio
                .max(rel(m.piezo_factor_ratio(t, t_ref), pf / pr));
        }
    }
    w
}

/// Station-style fit of the intrinsic density: DOS exponent and scale
/// minimizing the worst ni deviation (material property: fitted once, on
/// the first case, and reused).
fn fit_dos<B: Backend>(case: &Case, pts: &[ModelPoint], reference: &ModelPoint) -> Dos {
    let mut best = (
        Dos {
            exp: 1.5,
            scale: 1.0,
        },
        f64::INFINITY,
    );
    for i in 0..=20 {
        for j in 0..=20 {
            let dos = Dos {
                exp: 1.0 + 0.1 * i as f32,
                scale: 0.7 + 0.03 * j as f32,
            };
            let w = measure::<B>(
                case,
                pts,
                reference,
                params(case, dos, MOB_PUBLISHED, 0.045, 1.0),
            );
            if w.ni < best.1 {
                best = (dos, w.ni);
            }
        }
    }
    best.0
}

/// Station-style fit: dopant level minimizing the worst majority deviation,
/// then the piezo exponent minimizing the worst piezo-ratio deviation.
fn fit<B: Backend>(
    case: &Case,
    dos: Dos,
    pts: &[ModelPoint],
    reference: &ModelPoint,
) -> (f32, Mob, f32) {
    let mut best = (0.045f32, f64::INFINITY);
    for i in 0..=60 {
        let level = 0.001 * i as f32;
        let w = measure::<B>(
            case,
            pts,
            reference,
            params(case, dos, MOB_PUBLISHED, level, 1.0),
        );
        if w.majority < best.1 {
            best = (level, w.majority);
        }
    }
    let level = best.0;
    let mut best_mob = (MOB_PUBLISHED, f64::INFINITY);
    for i in 0..=20 {
        // Lattice exponents down to -4.5: the full model's Si mobility
        // carries Arora's trend divided by the ionized fraction at each
        // temperature (physics/mobility.rs), steeper than Arora's -2.2..-2.3
        // near 1e18 cm^-3 (fits land at -3.6..-3.7).
        for j in 0..=27 {
            let mob = Mob {
                scale: 0.6 + 0.05 * i as f32,
                delta_exp: -4.5 + 0.1 * j as f32,
            };
            let w = measure::<B>(case, pts, reference, params(case, dos, mob, level, 1.0));
            let score = w.mobility.max(w.sigma_ratio);
            if score < best_mob.1 {
                best_mob = (mob, score);
            }
        }
    }
    let mob = best_mob.0;
    let mut best_exp = (1.0f32, f64::INFINITY);
    for i in 0..=60 {
        let e = 0.4 + 0.01 * i as f32;
        let w = measure::<B>(case, pts, reference, params(case, dos, mob, level, e));
        if w.piezo_ratio < best_exp.1 {
            best_exp = (e, w.piezo_ratio);
        }
    }
    (level, mob, best_exp.0)
}

fn check_backend<B: Backend>() {
    // micromath's exp/powf error enters each quantity through a few chained
    // calls (<= 8 per ratio, see bounds.rs); the documented bounds already
    // include the measured libm deviation, so add that allowance here.
    let allowance = 8.0 * f64::from(B::REL_ERROR);
    let mut total = Worst::default();
    let mut dos = None;
    let mut failures = Vec::new();
    for case in cases() {
        let sample = case.sample();
        let pts: Vec<ModelPoint> = temperatures_k()
            .map(|t| evaluate(&sample, t).unwrap_or_else(|e| panic!("full model at {t} K: {e}")))
            .collect();
        let reference = evaluate(&sample, T_REF_K).unwrap();
        // Fits use every third temperature (15 C steps) to keep the test
        // fast; the deviation is then measured on the full 5 C grid.
        let coarse: Vec<ModelPoint> = pts.iter().step_by(3).copied().collect();
        let dos = *dos.get_or_insert_with(|| fit_dos::<B>(&case, &coarse, &reference));
        let (level, mob, pexp) = fit::<B>(&case, dos, &coarse, &reference);
        let w = measure::<B>(
            &case,
            &pts,
            &reference,
            params(&case, dos, mob, level, pexp),
        );
        println!(
            "{} N_D={:.0e} N_A={:.0e} dos_exp={:.2} dos_scale={:.3} level={level:.3} eV mu=({:.2}, {:.2}) theta={pexp:.2}: {w:.4?}",
            B::NAME,
            case.n_d(),
            case.n_a(),
            dos.exp,
            dos.scale,
            mob.scale,
            mob.delta_exp,
        );
        let checks = [
            ("ni", w.ni, bounds::NI_REL),
            ("majority", w.majority, bounds::MAJORITY_REL),
            ("mobility", w.mobility, bounds::MOBILITY_REL),
            ("sigma ratio", w.sigma_ratio, bounds::CONDUCTIVITY_RATIO_REL),
            ("hall ratio", w.hall_ratio, bounds::HALL_RATIO_REL),
            ("piezo ratio", w.piezo_ratio, bounds::PIEZO_RATIO_REL),
        ];
        for (name, got, bound) in checks {
            let applies = match name {
                // Bounds documented for a doping range (see the functions).
                "hall ratio" => case.n_type() && case.n_d() <= 1e17 && case.n_a() == 0.0,
                "piezo ratio" => case.n_d().max(case.n_a()) <= 1e18,
                // Boltzmann statistics: documented up to 2e18 cm^-3.
                _ => case.n_d().max(case.n_a()) <= 2e18,
            };
            if applies && got > f64::from(bound) + allowance {
                failures.push(format!(
                    "{}: {name} deviation {got:.4} > bound {bound} (+{allowance:.4}) for N_D={:e} N_A={:e}",
                    B::NAME,
                    case.n_d(),
                    case.n_a()
                ));
            }
        }
        // Outside the documented range (1e19 cm^-3) the bounds module
        // states how far the model degrades (Boltzmann statistics: majority
        // 34..48 %, conductivity ratio 6..9 %, measured here). Pin that
        // statement: both must stay above their in-range bounds (so the
        // advice to use a table there holds) and inside the stated figures
        // widened by 2 points each way for the fit grid.
        if case.n_d().max(case.n_a()) >= 1e19 {
            let degraded = [
                ("majority", w.majority, bounds::MAJORITY_REL, 0.32, 0.50),
                (
                    "sigma ratio",
                    w.sigma_ratio,
                    bounds::CONDUCTIVITY_RATIO_REL,
                    0.04,
                    0.11,
                ),
            ];
            for (name, got, bound, lo, hi) in degraded {
                if got <= f64::from(bound) || !(lo..=hi).contains(&got) {
                    failures.push(format!(
                        "{}: 1e19 {name} deviation {got:.4}: documented {lo}..{hi}, above bound {bound} (N_D={:e} N_A={:e})",
                        B::NAME,
                        case.n_d(),
                        case.n_a()
                    ));
                }
            }
        }
        total.ni = total.ni.max(w.ni);
        total.majority = total.majority.max(w.majority);
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
    // The measurement itself can fail: the first case with the runtime
    // model's effective densities of states scaled by 1.5 (n_i by 1.5, a
    // wrong parameter set) must exceed the n_i bound.
    let case = &cases()[0];
    let pts: Vec<ModelPoint> = temperatures_k()
        .map(|t| evaluate(&case.sample(), t).expect("full model"))
        .collect();
    let reference = evaluate(&case.sample(), T_REF_K).expect("full model");
    let mut wrong = dos.expect("fitted DOS");
    wrong.scale *= 1.5;
    let w = measure::<B>(
        case,
        &pts,
        &reference,
        params(case, wrong, MOB_PUBLISHED, 0.045, 1.0),
    );
    assert!(
        w.ni > f64::from(bounds::NI_REL),
        "wrong DOS not caught: {w:?}"
    );
    assert!(
        total.ni > 0.0 && total.majority > 0.0,
        "no deviation measured at all"
    );
}

#[test]
fn runtime_model_deviation_libm() {
    check_backend::<compensate::math::Libm>();
}

/// The root package enables compensate's `micromath` feature for its tests
/// (Cargo.toml dev-dependencies), so both backends are compiled here even
/// though libm stays the selected one.
#[test]
fn runtime_model_deviation_micromath() {
    check_backend::<compensate::math::Micromath>();
}
