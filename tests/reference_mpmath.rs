//! Fermi-Dirac integrals and the charge-neutrality solution checked against
//! an independent mpmath computation (`tests/reference/fermi_mpmath.py`).
//!
//! The reference evaluates F_j = -Li_{j+1}(-e^eta) (DLMF 25.12.16) with
//! mpmath's polylog at 40 digits and solves neutrality in 60-digit linear
//! arithmetic; it shares no code or coefficients with the Rust model. Needs
//! `python3` with `mpmath` (installed by `scripts/install-prereqs.sh`); if
//! either is missing the test fails with a message saying so.

use std::io::Write;
use std::process::{Command, Stdio};

use host_tools::physics::constants::K_B_EV_PER_K;
use host_tools::physics::dopant::{DopantKind, dopant_level};
use host_tools::physics::fermi::{F_HALF_REL_ERROR, F_MINUS_HALF_REL_ERROR, f_half, f_minus_half};
use host_tools::physics::{CarrierState, Material, Sample, Species, solve};
use serde_json::{Value, json};

/// Runs the reference script with `request` on stdin and parses its JSON answer.
fn run_reference(request: &Value) -> Value {
    let script = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/reference/fermi_mpmath.py"
    );
    let mut child = Command::new("python3")
        .arg(script)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap_or_else(|e| {
            panic!(
                "cannot run python3 ({e}); install Python 3 and mpmath (scripts/install-prereqs.sh)"
            )
        });
    child
        .stdin
        .take()
        .expect("stdin is piped")
        .write_all(request.to_string().as_bytes())
        .expect("write request to python3");
    let out = child.wait_with_output().expect("wait for python3");
    assert!(
        out.status.success(),
        "reference script failed ({}): {}",
        out.status,
        String::from_utf8_lossy(&out.stderr)
    );
    serde_json::from_slice(&out.stdout).expect("reference prints JSON")
}

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

#[test]
fn rel_helper_can_fail() {
    assert!(rel(1.0 + 1e-8, 1.0) > 1e-9);
}

/// F_{1/2} and F_{-1/2} over eta = -100..200 (plus the far degenerate end
/// and both sides of Antia's branch point at 2). Tolerance: Antia's stated
/// maximum relative error (1993, Table 2) plus 1e-14 for f64 evaluation of
/// the rational functions; the reference is exact to ~1e-16 after rounding.
#[test]
fn fermi_integrals_match_mpmath() {
    let mut etas: Vec<f64> = (-40..=80).map(|i| i as f64 * 2.5).collect();
    etas.extend([-0.3, 0.7, 1.999_999, 2.0, 2.000_001, 3.3, 1000.0, 5000.0]);
    let reply = run_reference(&json!({ "fermi": etas }));
    let rows = reply["fermi"].as_array().expect("fermi rows");
    assert_eq!(rows.len(), etas.len());
    for (eta, row) in etas.iter().zip(rows) {
        let (r_half, r_mhalf) = (row[0].as_f64().unwrap(), row[1].as_f64().unwrap());
        let (g_half, g_mhalf) = (f_half(*eta), f_minus_half(*eta));
        assert!(
            rel(g_half, r_half) <= F_HALF_REL_ERROR + 1e-14,
            "F_1/2({eta}): got {g_half:e} expected {r_half:e} (rel {:e})",
            rel(g_half, r_half)
        );
        assert!(
            rel(g_mhalf, r_mhalf) <= F_MINUS_HALF_REL_ERROR + 1e-14,
            "F_-1/2({eta}): got {g_mhalf:e} expected {r_mhalf:e} (rel {:e})",
            rel(g_mhalf, r_mhalf)
        );
    }
}

fn sample(m: Material, donors: &[(Species, f64)], acceptors: &[(Species, f64)]) -> Sample {
    Sample::new(m, donors, acceptors)
}

/// The neutrality inputs of `s` at `t_k`, expressed through the public
/// parameter accessors so the reference solves the same physics.
fn reference_case(s: &Sample, t_k: f64) -> Value {
    let (nc, nv) = s.material.nc_nv_cm3(t_k);
    let levels: Vec<Value> = s
        .donors
        .iter()
        .chain(&s.acceptors)
        .map(|d| {
            let lv = dopant_level(s.material, d.species).expect("known species");
            json!({
                "kind": if lv.kind == DopantKind::Donor { "donor" } else { "acceptor" },
                "n_cm3": d.density_cm3,
                "e_ev": lv.ionization_energy_ev(d.density_cm3),
                "b": lv.localized_fraction(d.density_cm3),
                "g": lv.degeneracy(),
            })
        })
        .collect();
    json!({
        "kt_ev": K_B_EV_PER_K * t_k,
        "eg_ev": s.material.eg_ev(t_k),
        "nc_cm3": nc,
        "nv_cm3": nv,
        "levels": levels,
    })
}

/// Our solution against the 60-digit reference, over freeze-out, extrinsic,
/// intrinsic, degenerate, compensated and extreme (20 K 4H-SiC, densities
/// ~1e-800 cm^-3) cases in every material.
///
/// Tolerances: our solver stops when the Newton step in u = (E_F-E_v)/kT is
/// below 1e-12 (1 + |u|), |u| <= ~2000, and Antia's F_{1/2} carries 5.5e-13;
/// so E_F agrees to 1e-10 eV and log10 of n, p to 1e-9 (2.3e-9 relative, the
/// u error times ln 10 margin). Ionized densities are fractions of N computed
/// from the same E_F: relative 1e-9 of the species total.
#[test]
fn neutrality_matches_mpmath() {
    use Species::*;
    let cases: Vec<(Sample, f64)> = vec![
        (sample(Material::Si, &[(P, 1e15)], &[]), 20.0),
        (sample(Material::Si, &[(P, 1e15)], &[]), 77.0),
        (sample(Material::Si, &[(P, 1e15)], &[]), 300.0),
        (sample(Material::Si, &[(P, 1e15)], &[]), 600.0),
        (sample(Material::Si, &[], &[(B, 2e18)]), 300.0),
        (sample(Material::Si, &[(P, 1e21)], &[]), 20.0),
        (sample(Material::Si, &[(P, 1e19)], &[(B, 1e17)]), 300.0),
        (
            sample(
                Material::Si,
                &[(As, 5e18), (Sb, 1e17)],
                &[(B, 3e18), (In, 1e16)],
            ),
            150.0,
        ),
        (sample(Material::Si, &[(P, 1e14)], &[(B, 1e14)]), 40.0),
        (sample(Material::Si, &[(P, 1e10)], &[]), 1000.0),
        (sample(Material::Ge, &[], &[(Ga, 1e16)]), 40.0),
        (sample(Material::GaAs, &[(Si, 1e17)], &[(C, 1e16)]), 300.0),
        (sample(Material::InSb, &[(Te, 1e14)], &[]), 77.0),
        (sample(Material::InAs, &[], &[]), 300.0),
        (sample(Material::Sic4H, &[(N, 1e15)], &[(Al, 1e15)]), 20.0),
        (sample(Material::Sic4H, &[], &[(Al, 1e18)]), 1000.0),
    ];
    let request = json!({
        "neutrality": cases.iter().map(|(s, t)| reference_case(s, *t)).collect::<Vec<_>>()
    });
    let reply = run_reference(&request);
    let rows = reply["neutrality"].as_array().expect("neutrality rows");
    assert_eq!(rows.len(), cases.len());
    for ((s, t), r) in cases.iter().zip(rows) {
        let st: CarrierState = solve(s, *t).unwrap_or_else(|e| panic!("{s:?} at {t} K: {e}"));
        let ctx = format!("{} {:?} {:?} at {t} K", s.material, s.donors, s.acceptors);
        let ef = r["ef_ev"].as_f64().unwrap();
        assert!(
            (st.fermi_from_ev_ev - ef).abs() < 1e-10,
            "{ctx}: E_F got {} expected {ef}",
            st.fermi_from_ev_ev
        );
        for (name, got, log10_ref) in [
            ("n", st.n_cm3, r["log10_n"].as_f64().unwrap()),
            ("p", st.p_cm3, r["log10_p"].as_f64().unwrap()),
        ] {
            if log10_ref < -300.0 {
                // Below f64's normal range: we must report (at most) a subnormal.
                assert!(
                    got < 1e-290,
                    "{ctx}: {name} got {got:e} expected 1e{log10_ref}"
                );
            } else {
                assert!(
                    (got.log10() - log10_ref).abs() < 1e-9,
                    "{ctx}: {name} got {got:e} expected 1e{log10_ref}"
                );
            }
        }
        for (name, got, expected, total) in [
            (
                "N_D+",
                st.donors_ionized_cm3,
                r["nd_ion_cm3"].as_f64().unwrap(),
                st.donors_total_cm3,
            ),
            (
                "N_A-",
                st.acceptors_ionized_cm3,
                r["na_ion_cm3"].as_f64().unwrap(),
                st.acceptors_total_cm3,
            ),
        ] {
            assert!(
                (got - expected).abs() <= 1e-9 * total,
                "{ctx}: {name} got {got:e} expected {expected:e}"
            );
        }
    }
}
