//! `semidrift model` and `semidrift plot model` run as a user runs them:
//! the contract fields of DESIGN.md, refusal of bad input with exit 2 and a
//! one-line error, JSON alone on stdout, byte-identical repeats, valid SVG.

mod common;

use common::bad_input;

#[allow(dead_code)]
/// The contract row fields (DESIGN.md "Contracts") plus the ones this CLI adds.
const FIELDS: [&str; 14] = [
    "t_k",
    "t_c",
    "eg_ev",
    "ni_cm3",
    "n_cm3",
    "p_cm3",
    "mu_n_cm2_vs",
    "mu_p_cm2_vs",
    "rho_ohm_cm",
    "hall_coefficient_cm3_c",
    "piezo_factor",
    "donors_ionized_cm3",
    "acceptors_ionized_cm3",
    "fermi_from_ev_ev",
];

#[test]
fn bad_inputs_exit_2_with_a_one_line_error_naming_option_and_value() {
    let base = ["model", "--material", "si", "--kelvin", "300"];
    let with = |extra: &[&'static str]| {
        let mut v = base.to_vec();
        v.extend_from_slice(extra);
        v
    };
    bad_input(
        &["model", "--material", "unobtainium", "--kelvin", "300"],
        &["--material 'unobtainium'"],
    );
    bad_input(
        &with(&["--donor", "Q=1e15"]),
        &["--donor 'Q=1e15'", "unknown species"],
    );
    bad_input(
        &with(&["--donor", "p=1e15"]),
        &["--donor 'p=1e15'", "case-sensitive"],
    );
    bad_input(
        &with(&["--donor", "P=1e1x5"]),
        &["--donor 'P=1e1x5'", "not a number"],
    );
    bad_input(
        &with(&["--acceptor", "B=-1e15"]),
        &["--acceptor 'B=-1e15'", "greater than 0"],
    );
    bad_input(
        &with(&["--donor", "P"]),
        &["--donor 'P'", "SPECIES=DENSITY_CM3"],
    );
    let t = |value: &'static str| vec!["model", "--material", "si", "--kelvin", value];
    bad_input(&t("0"), &["--kelvin '0'", "absolute zero"]);
    bad_input(&t("-5"), &["--kelvin '-5'"]);
    bad_input(&t("abc"), &["--kelvin 'abc'", "not a number"]);
    bad_input(
        &t("300:200:10"),
        &["--kelvin '300:200:10'", "STOP is below START"],
    );
    bad_input(&t("200:300:0"), &["--kelvin '200:300:0'", "STEP"]);
    bad_input(&t("1:1e9:0.001"), &["--kelvin '1:1e9:0.001'", "more than"]);
    bad_input(
        &["model", "--material", "si", "--celsius", "-300"],
        &["--celsius '-300'"],
    );
    // clap usage errors are one line too, and exit 2.
    bad_input(&["model", "--material", "si"], &["--kelvin"]);
    bad_input(
        &[
            "model",
            "--material",
            "si",
            "--kelvin",
            "300",
            "--celsius",
            "20",
        ],
        &["--celsius"],
    );
}
