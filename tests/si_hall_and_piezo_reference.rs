//! Hall coefficient and Kanda piezoresistance factor of the full model,
//! checked against published behaviour (sources beside each check).

use host_tools::physics::{Material, Sample, Species, evaluate};

fn si(donors: &[(Species, f64)], acceptors: &[(Species, f64)]) -> Sample {
    Sample::new(Material::Si, donors, acceptors)
}

/// p-type Si turns n-type in Hall sign on intrinsic takeover, and does so
/// while holes still outnumber electrons, because electrons are ~3x more
/// mobile: R_H = 0 at n/p = (r_p/r_n)(mu_p/mu_n)^2 < 1 (two-carrier formula,
/// Putley, The Hall Effect and Semiconductor Physics, 1960, ch. 3; the sign
/// reversal of p-Si near 500-600 K for 1e14..1e15 cm^-3 is shown in Morin &
/// Maita 1954, Phys. Rev. 96, 28, Figs. of R_H vs 1/T, recalled from memory).
#[test]
fn p_type_hall_sign_reverses_before_n_equals_p() {
    let sample = si(&[], &[(Species::B, 1e15)]);
    let at = |t: f64| evaluate(&sample, t).expect("model evaluates");
    assert!(
        at(300.0).hall_coefficient_cm3_c > 0.0,
        "p-type at 300 K must have R_H > 0"
    );
    assert!(
        at(1000.0).hall_coefficient_cm3_c < 0.0,
        "intrinsic at 1000 K must have R_H < 0"
    );
    // Bisection for the zero of R_H(T) to 0.01 K.
    let (mut lo, mut hi) = (300.0, 1000.0);
    while hi - lo > 0.01 {
        let mid = 0.5 * (lo + hi);
        if at(mid).hall_coefficient_cm3_c > 0.0 {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    let zero = at(lo);
    let ratio = zero.n_cm3 / zero.p_cm3;
    let expected =
        zero.hall_factor_p / zero.hall_factor_n * (zero.mu_p_cm2_vs / zero.mu_n_cm2_vs).powi(2);
    // At the zero the formula's balance must hold: the bisection to 0.01 K
    // moves n/p by < 1e-3 relative (n grows ~ 15 %/K there); 1 %.
    assert!(
        (ratio / expected - 1.0).abs() < 0.01,
        "n/p {ratio} vs {expected} at {lo} K"
    );
    assert!(
        ratio < 0.5,
        "sign change must come well before n = p: n/p = {ratio}"
    );
    // Morin & Maita 1954 (recalled from memory): for ~1e15 cm^-3 p-Si the
    // reversal lies near 500-600 K; the zero needs n_i ~ 3.5e14 cm^-3 (from
    // n/p ~ 0.1 above), which Si reaches at 500..560 K for any published
    // n_i(T). 450..700 K covers both with margin for the recall.
    assert!((450.0..700.0).contains(&lo), "R_H zero at {lo} K");
}

/// n-type Si, P 1e15 cm^-3 at 300 K: published Hall factor of lightly
/// doped n-Si about 1.15 (R. S. Popovic, Hall Effect Devices, 2nd ed., 2004,
/// ch. 3; Ohta & Sakata 1978, Jpn. J. Appl. Phys. 17, 1795, measured r_H(T);
/// both recalled from memory), i.e. r_H 1.10..1.20 with the spread of the
/// published room-temperature values, so R_H = -r_H/(q N) lies in
/// -6 900..-7 500 cm^3/C (N = 1e15, all donors ionized). The band is +-4 %
/// wide: a Hall factor 20 % off (0.92 or 1.38) fails. Also the one-carrier
/// identities R_H = -r_n/(q n) and mu_H = r_n mu_n (per free carrier).
#[test]
fn n_type_hall_coefficient_matches_published_hall_factor() {
    let point = evaluate(&si(&[(Species::P, 1e15)], &[]), 300.0).unwrap();
    let r_h = point.hall_coefficient_cm3_c;
    assert!(
        (-7500.0..=-6900.0).contains(&r_h),
        "P 1e15, 300 K: R_H {r_h} cm^3/C, published -6 900..-7 500"
    );
    assert_eq!(point.hall_factor_n_source.key(), "ohta-sakata-1978");
    for &n in &[1e14, 1e15, 1e16, 1e17] {
        let point = evaluate(&si(&[(Species::P, n)], &[]), 300.0).unwrap();
        let r = point.hall_factor_n;
        let expected = -r / (1.602_176_634e-19 * point.n_cm3);
        // Minority holes change R_H by < (p/n)(mu_p/mu_n)^2 ~ 1e-10 here; 1e-6.
        let rel = point.hall_coefficient_cm3_c / expected - 1.0;
        assert!(
            rel.abs() < 1e-6,
            "N={n:e}: R_H {} vs {expected}",
            point.hall_coefficient_cm3_c
        );
        // Relative checks read alike (as physics/model.rs): each compares its own quantity.
        let rel = point.hall_mobility_cm2_vs / (r * point.mu_n_per_free_carrier_cm2_vs) - 1.0;
        assert!(
            rel.abs() < 1e-6,
            "N={n:e}: mu_H {} vs r mu_n",
            point.hall_mobility_cm2_vs
        );
    }
}

/// p-type Si, B 1e15 cm^-3 at 300 K: published hole Hall factor 0.7..0.8
/// (Lin, Li, Linares & Teng, Solid-State Electron. 24, 827 (1981);
/// Szmulowicz, Phys. Rev. B 34, 4031 (1986); recalled from memory), widened
/// by the recall uncertainty of 0.05 to 0.65..0.85. A factor 20 % off the
/// middle (0.60 or 0.90) fails. The Hall coefficient follows r_p/(q p).
#[test]
fn p_type_hall_factor_matches_published_range() {
    let point = evaluate(&si(&[], &[(Species::B, 1e15)]), 300.0).unwrap();
    let r = point.hall_factor_p;
    assert!(
        (0.65..=0.85).contains(&r),
        "B 1e15, 300 K: r_p {r}, published 0.7..0.8"
    );
    assert_eq!(point.hall_factor_p_source.key(), "lin-et-al-1981");
    let one_carrier = r / (1.602_176_634e-19 * point.p_cm3);
    // Minority electrons: (n/p)(mu_n/mu_p)^2 ~ 1e-9; 1e-6.
    assert!(
        (point.hall_coefficient_cm3_c / one_carrier - 1.0).abs() < 1e-6,
        "R_H {} vs r_p/(q p) {one_carrier}",
        point.hall_coefficient_cm3_c
    );
}

/// Mobility fields are the published model at the total dopant density:
/// B 1e18 cm^-3 at 300 K, Masetti, Severi & Solmi 1983 (IEEE TED 30, 764):
/// the published hole-mobility curve reads about 153 cm^2/Vs (recalled from
/// memory) and eq. 1 with their Table I boron parameters gives 160.3 (hand
/// evaluation); 10 % around 153 covers both and fails a 20 % error (the
/// per-free-carrier mobility, 212, is 38 % above).
// Same relative assert as the tests above, on the mobility fields.
#[test]
fn mobility_fields_match_published_curves_at_total_density() {
    let point = evaluate(&si(&[], &[(Species::B, 1e18)]), 300.0).unwrap();
    let mu = point.mu_p_cm2_vs;
    assert!(
        (mu / 153.0 - 1.0).abs() <= 0.10,
        "B 1e18, 300 K: mu_p {mu}, Masetti about 153"
    );
    // The pairing mobility is higher by the neutral fraction, N/N_ion.
    let ratio = point.mu_p_per_free_carrier_cm2_vs / mu;
    let n_over_ion = 1e18 / point.acceptors_ionized_cm3;
    assert!(
        (ratio / n_over_ion - 1.0).abs() < 0.01,
        "per-free-carrier / published {ratio} vs N/N_ion {n_over_ion}"
    );
}

/// Kanda 1982 (IEEE TED 29, 64): P(N, T) -> 1 at low doping and 300 K, and
/// P = 300/T in the non-degenerate limit (eq. 11 with Boltzmann statistics).
/// At 1e14 cm^-3 the majority carriers sit ~9 kT below the band edge, so
/// F_{-1/2}/F_{1/2} = 1 - O(e^-9): 1e-3.
#[test]
fn kanda_low_doping_limit() {
    for (donors, acceptors) in [
        (vec![(Species::P, 1e14)], vec![]),
        (vec![], vec![(Species::B, 1e14)]),
    ] {
        let sample = si(&donors, &acceptors);
        for &t in &[250.0, 300.0, 400.0] {
            let p = evaluate(&sample, t)
                .unwrap()
                .piezo_factor
                .expect("Si has a piezo factor");
            assert!(
                (p / (300.0 / t) - 1.0).abs() < 1e-3,
                "T={t}: P {p} vs {}",
                300.0 / t
            );
        }
    }
}

/// Kanda 1982, 300 K curves of P(N) for p- and n-type Si, as recalled from
/// memory (the figure could not be re-read for this check): P ~ 0.85 at
/// 1e19 cm^-3 and ~ 0.4 at 1e20 cm^-3, for both types. The recall is
/// uncertain by about +/-0.1, which is the tolerance. Kanda assumed full
/// ionization; our carrier model ionizes ~90 % at 1e19 (Altermatt 2006),
/// which lowers the reduced Fermi level by ~0.1 kT and raises P by < 0.02,
/// well inside the tolerance.
#[test]
fn kanda_heavy_doping_near_figure_values() {
    let cases = [
        (Species::B, 1e19, 0.85, 0.10),
        (Species::B, 1e20, 0.40, 0.10),
        (Species::P, 1e19, 0.85, 0.10),
        (Species::P, 1e20, 0.40, 0.10),
    ];
    for (species, n, expected, tol) in cases {
        let sample = match species {
            Species::B => si(&[], &[(species, n)]),
            _ => si(&[(species, n)], &[]),
        };
        let p = evaluate(&sample, 300.0).unwrap().piezo_factor.unwrap();
        assert!(
            (p - expected).abs() <= tol,
            "{species:?} N={n:e}: P {p} vs Kanda figure {expected} +/- {tol}"
        );
    }
}

/// Temperature behaviour (Kanda 1982, eq. 11 and its figures): below
/// degeneracy P falls with temperature (P ~ 300/T); deep in degeneracy
/// P ~ (300/T)(3/2)/eta with eta ~ E_F/kT, so the temperature cancels and the
/// curves merge. Checked: strictly falling for 1e16..1e19 cm^-3, and at
/// 1e20 cm^-3 the 200..400 K values within 15 % of each other (the residual
/// spread comes from the ionized fraction changing with T, ~10 %).
#[test]
fn kanda_temperature_behaviour() {
    for &n in &[1e16, 1e18, 1e19] {
        let sample = si(&[], &[(Species::B, n)]);
        let mut last = f64::INFINITY;
        for &t in &[200.0, 250.0, 300.0, 350.0, 400.0] {
            let p = evaluate(&sample, t).unwrap().piezo_factor.unwrap();
            assert!(p < last, "N={n:e} T={t}: P {p} !< {last}");
            last = p;
        }
    }
    let sample = si(&[], &[(Species::B, 1e20)]);
    let values: Vec<f64> = [200.0, 300.0, 400.0]
        .iter()
        .map(|&t| evaluate(&sample, t).unwrap().piezo_factor.unwrap())
        .collect();
    let (lo, hi) = values.iter().fold((f64::INFINITY, 0.0f64), |(lo, hi), &p| {
        (lo.min(p), hi.max(p))
    });
    assert!(hi / lo < 1.15, "P at 1e20 over 200..400 K: {values:?}");
}
