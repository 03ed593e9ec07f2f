//! Property tests of the charge-neutrality solver over random species mixes
//! (1-3 donors, 0-3 acceptors), densities 1e10..1e21 cm^-3 and 20..1000 K in
//! every material. Default case counts keep the suite fast; set
//! `SEMIDRIFT_SLOW=1` for a long run. proptest prints the failing input (and
//! persists its seed) on failure.

use host_tools::physics::carriers::{RESIDUAL_BOUND, t_max_k};
use host_tools::physics::dopant::{DopantKind, dopant_level};
use host_tools::physics::{CarrierState, Dopant, Material, Sample, Species, solve};
use proptest::prelude::*;

fn cases() -> u32 {
    if std::env::var_os("SEMIDRIFT_SLOW").is_some_and(|v| v == "1") {
        4000
    } else {
        96
    }
}

/// Donor and acceptor species the model knows in `m`.
fn species_of(m: Material, kind: DopantKind) -> Vec<Species> {
    Species::ALL
        .into_iter()
        .filter(|&s| dopant_level(m, s).is_some_and(|l| l.kind == kind))
        .collect()
}

/// A random sample: material, 1-3 donors, 0-3 acceptors, log-uniform densities.
fn arb_sample() -> impl Strategy<Value = Sample> {
    arb_sample_up_to(21.0)
}

/// As [`arb_sample`] with densities up to 10^max_log10 cm^-3.
fn arb_sample_up_to(max_log10: f64) -> impl Strategy<Value = Sample> {
    let log_density = 10.0f64..=max_log10;
    (
        prop::sample::select(Material::ALL.to_vec()),
        prop::collection::vec((any::<prop::sample::Index>(), log_density.clone()), 1..=3),
        prop::collection::vec((any::<prop::sample::Index>(), log_density), 0..=3),
    )
        .prop_map(|(m, d, a)| {
            let pick = |list: &[(prop::sample::Index, f64)], kind| {
                let sp = species_of(m, kind);
                list.iter()
                    .map(|(i, lg)| Dopant {
                        species: *i.get(&sp),
                        density_cm3: 10f64.powf(*lg).clamp(1e10, 1e21),
                    })
                    .collect()
            };
            Sample {
                material: m,
                donors: pick(&d, DopantKind::Donor),
                acceptors: pick(&a, DopantKind::Acceptor),
            }
        })
}

/// Temperature as a fraction of the material's range 20..t_max.
fn temperature(m: Material, frac: f64) -> f64 {
    20.0 + frac * (t_max_k(m) - 20.0)
}

fn check_state(s: &Sample, st: &CarrierState) -> Result<(), TestCaseError> {
    // Named values checked in a loop, as scenario.rs checks its spread: each its own list.
    for (name, v) in [
        ("n", st.n_cm3),
        ("p", st.p_cm3),
        ("Nd+", st.donors_ionized_cm3),
        ("Na-", st.acceptors_ionized_cm3),
        ("E_F", st.fermi_from_ev_ev),
        ("residual", st.neutrality_residual),
    ] {
        prop_assert!(v.is_finite(), "{name} = {v} for {s:?}");
    }
    prop_assert!(st.n_cm3 >= 0.0 && st.p_cm3 >= 0.0);
    // Ionized densities lie in [0, total]; 1e-12 relative slack for rounding.
    prop_assert!(st.donors_ionized_cm3 >= 0.0);
    prop_assert!(st.donors_ionized_cm3 <= st.donors_total_cm3 * (1.0 + 1e-12));
    prop_assert!(st.acceptors_ionized_cm3 >= 0.0);
    prop_assert!(st.acceptors_ionized_cm3 <= st.acceptors_total_cm3 * (1.0 + 1e-12));
    prop_assert!(st.neutrality_residual <= st.residual_bound());
    // The reported fields themselves balance. In compensated samples the
    // balance is a difference of large totals: the totals are sums of up to
    // six entries, the net doping and each species' split into localised and
    // band-merged parts round once more, and the linear recomputation here
    // rounds each term; 16 ulp of the largest totals bound all of that.
    let den = st.n_cm3 + st.p_cm3 + st.donors_ionized_cm3 + st.acceptors_ionized_cm3;
    let charge = st.p_cm3 - st.n_cm3 + st.donors_ionized_cm3 - st.acceptors_ionized_cm3;
    let slack = RESIDUAL_BOUND * den
        + 32.0
            * f64::EPSILON
            * (st.donors_total_cm3 + st.acceptors_total_cm3 + st.n_cm3 + st.p_cm3);
    prop_assert!(
        charge.abs() <= slack,
        "charge {charge:e} > {slack:e} for {s:?}"
    );
    Ok(())
}

proptest! {
    #![proptest_config(ProptestConfig {
        cases: cases(),
        max_global_rejects: 20 * cases(),
        // The minimal failing input is printed; no regression file (the
        // root package has no lib.rs for proptest to anchor it to).
        failure_persistence: None,
        ..ProptestConfig::default()
    })]

    /// Every valid input converges to a finite, balanced state.
    #[test]
    fn converges_everywhere(s in arb_sample(), frac in 0.0f64..=1.0) {
        let t = temperature(s.material, frac);
        let st = solve(&s, t).map_err(|e| TestCaseError::fail(format!("{s:?} at {t} K: {e}")))?;
        check_state(&s, &st)?;
    }

    /// Mass action n p = n_i^2 holds for non-degenerate bands (both reduced
    /// Fermi levels below -3). F_{1/2}(eta) = e^eta (1 - e^eta/2^1.5 + ...),
    /// so the relative deviation is bounded by e^eta_n + e^eta_p; 1e-9 covers
    /// the solver. Compared in logarithms; skipped where n or p underflow.
    /// Densities up to 1e17 keep most draws non-degenerate (few rejects).
    #[test]
    fn mass_action_when_non_degenerate(s in arb_sample_up_to(17.0), frac in 0.0f64..=1.0) {
        let t = temperature(s.material, frac);
        let st = solve(&s, t).map_err(|e| TestCaseError::fail(e.to_string()))?;
        prop_assume!(st.eta_n < -3.0 && st.eta_p < -3.0);
        prop_assume!(st.n_cm3 > 1e-150 && st.p_cm3 > 1e-150 && st.ni_cm3 > 1e-150);
        let dev = (st.n_cm3.ln() + st.p_cm3.ln() - 2.0 * st.ni_cm3.ln()).abs();
        let bound = st.eta_n.exp() + st.eta_p.exp() + 1e-9;
        prop_assert!(dev <= bound, "ln(np/ni^2) = {dev:e} > {bound:e} for {s:?} at {t} K");
    }

    /// More donors raise the Fermi level, more acceptors lower it (each adds
    /// only positive, resp. negative, charge at fixed E_F). Slack: the solver
    /// stops at a step of 1e-12 (1 + |u|) in u = E_F/kT, i.e. ~1e-12 |E_F|.
    /// (n and p follow E_F at fixed T, so they are monotone too.)
    #[test]
    fn fermi_level_monotone_in_doping(s in arb_sample(), frac in 0.0f64..=1.0, k in 1.5f64..10.0) {
        let t = temperature(s.material, frac);
        let base = solve(&s, t).map_err(|e| TestCaseError::fail(e.to_string()))?;
        let mut more_d = s.clone();
        more_d.donors[0].density_cm3 = (more_d.donors[0].density_cm3 * k).min(1e21);
        let up = solve(&more_d, t).map_err(|e| TestCaseError::fail(e.to_string()))?;
        prop_assert!(up.fermi_from_ev_ev >= base.fermi_from_ev_ev - 1e-11 * (1.0 + base.fermi_from_ev_ev.abs()),
            "donors x{k}: E_F {} -> {} for {s:?} at {t} K", base.fermi_from_ev_ev, up.fermi_from_ev_ev);
        if !s.acceptors.is_empty() {
            let mut more_a = s.clone();
            more_a.acceptors[0].density_cm3 = (more_a.acceptors[0].density_cm3 * k).min(1e21);
            let down = solve(&more_a, t).map_err(|e| TestCaseError::fail(e.to_string()))?;
            prop_assert!(down.fermi_from_ev_ev <= base.fermi_from_ev_ev + 1e-11 * (1.0 + base.fermi_from_ev_ev.abs()),
                "acceptors x{k}: E_F {} -> {} for {s:?} at {t} K", base.fermi_from_ev_ev, down.fermi_from_ev_ev);
        }
    }

    /// Identical inputs give bit-identical outputs (no hidden state).
    #[test]
    fn deterministic(s in arb_sample(), frac in 0.0f64..=1.0) {
        let t = temperature(s.material, frac);
        let a = solve(&s, t).map_err(|e| TestCaseError::fail(e.to_string()))?;
        let b = solve(&s, t).map_err(|e| TestCaseError::fail(e.to_string()))?;
        prop_assert_eq!(format!("{a:?}"), format!("{b:?}"));
    }
}

/// n_i rises with temperature in every material (the gap shrinks and the
/// densities of states grow; Sze & Ng 2007 Ch. 1 Fig. 16 for Si, Ge, GaAs).
#[test]
fn ni_increases_with_temperature() {
    for m in Material::ALL {
        // Logarithms: n_i of 4H-SiC underflows f64 below ~60 K.
        let mut prev = m.ln_ni(20.0);
        let mut t = 25.0;
        while t <= t_max_k(m) {
            let ni = m.ln_ni(t);
            assert!(ni > prev, "{m}: ln n_i({t}) = {ni} not above {prev}");
            prev = ni;
            t += 5.0;
        }
    }
}
