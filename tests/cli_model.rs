//! `semidrift model` and `semidrift plot model` run as a user runs them:
//! the fields of its output contract, refusal of bad input with exit 2 and a
//! one-line error, JSON alone on stdout, byte-identical repeats, valid SVG.

mod common;

use common::{bad_input, ok, run_in};

/// The row fields of the output contract (`host-tools/src/cli/model.rs`).
const FIELDS: [&str; 16] = [
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
    "mu_n_per_free_carrier_cm2_vs",
    "mu_p_per_free_carrier_cm2_vs",
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
    // Refused inputs, one call each: every call names its own option and value.
    bad_input(
        &["model", "--material", "si", "--celsius", "-300"],
        &["--celsius '-300'"],
    );
    // Refused by the model itself, still naming the option and value.
    bad_input(
        &with(&["--donor", "B=1e15"]),
        &["--donor 'B=1e15'", "not a known donor"],
    );
    bad_input(
        &with(&["--donor", "P=1e30"]),
        &["--donor 'P=1e30'", "outside"],
    );
    bad_input(&t("5000"), &["--kelvin '5000'", "outside the model range"]);
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
    bad_input(&with(&["--json", "--csv"]), &["--csv"]);
}

#[test]
fn json_has_the_contract_fields_and_nothing_else_on_stdout() {
    let text = ok(&[
        "model",
        "--material",
        "si",
        "--donor",
        "P=1e15",
        "--acceptor",
        "B=1e14",
        "--kelvin",
        "250:350:50",
        "--json",
    ]);
    // The whole of stdout must parse as one JSON document.
    let v: serde_json::Value = serde_json::from_str(&text).expect("stdout is JSON alone");
    assert_eq!(v["material"], "si");
    assert_eq!(v["donors"][0]["species"], "P");
    assert_eq!(v["donors"][0]["density_cm3"], 1e15);
    assert_eq!(v["acceptors"][0]["species"], "B");
    // Si Hall factors come from published data, named in the output.
    assert_eq!(v["hall_factor_n_source"], "ohta-sakata-1978");
    assert_eq!(v["hall_factor_p_source"], "lin-et-al-1981");
    let rows = v["rows"].as_array().expect("rows");
    assert_eq!(rows.len(), 3, "250, 300, 350 K");
    for (row, t_k) in rows.iter().zip([250.0, 300.0, 350.0]) {
        for f in FIELDS {
            assert!(row.get(f).is_some(), "row at {t_k} K lacks {f}: {row}");
        }
        assert_eq!(row["t_k"], t_k);
        // Si has a piezoresistance factor; it must be a number.
        assert!(
            row["piezo_factor"].is_f64(),
            "piezo_factor at {t_k} K: {row}"
        );
        // n-type, 9e14 net donors near room temperature: n within 5 % of it
        // (full ionization and n_i << N at 250..350 K; 5 % covers the
        // un-ionized donor fraction of a few 1e-3 and n_i^2/n).
        let n = row["n_cm3"].as_f64().unwrap();
        assert!(
            (n / 9e14 - 1.0).abs() < 0.05,
            "n at {t_k} K = {n:e}, expected about 9e14"
        );
        assert!(
            row["hall_coefficient_cm3_c"].as_f64().unwrap() < 0.0,
            "n-type Hall sign"
        );
    }
}

#[test]
fn non_silicon_has_null_piezo_factor() {
    let text = ok(&[
        "model",
        "--material",
        "gaas",
        "--donor",
        "Si=1e16",
        "--kelvin",
        "300",
        "--json",
    ]);
    let v: serde_json::Value = serde_json::from_str(&text).unwrap();
    assert!(v["rows"][0]["piezo_factor"].is_null(), "{}", v["rows"][0]);
}

#[test]
fn csv_header_has_the_contract_names_and_one_row_per_temperature() {
    let text = ok(&[
        "model",
        "--material",
        "si",
        "--acceptor",
        "B=2e18",
        "--celsius",
        "-20:85:15",
        "--csv",
    ]);
    let mut lines = text.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    for f in FIELDS {
        assert!(header.contains(&f), "CSV header lacks {f}: {header:?}");
    }
    let rows: Vec<&str> = lines.collect();
    assert_eq!(rows.len(), 8, "-20..85 step 15 is 8 temperatures");
    let t_c = header.iter().position(|h| *h == "t_c").unwrap();
    let first: Vec<&str> = rows[0].split(',').collect();
    assert_eq!(first.len(), header.len());
    assert_eq!(first[t_c], "-20");
}

#[test]
fn table_is_the_default_and_repeat_runs_are_byte_identical() {
    let args = [
        "model",
        "--material",
        "si",
        "--donor",
        "P=1e15",
        "--donor",
        "As=1e14",
        "--kelvin",
        "100:500:100",
    ];
    let a = ok(&args);
    // The sample line and the two Hall-factor source lines start with '#'.
    assert!(
        a.lines()
            .find(|l| !l.starts_with('#'))
            .unwrap()
            .contains("t_k"),
        "table header: {a}"
    );
    assert!(a.contains("# hall_factor_n: Si electrons"), "{a}");
    assert_eq!(a, ok(&args), "table output must repeat byte for byte");
    let mut json = args.to_vec();
    json.push("--json");
    assert_eq!(
        ok(&json),
        ok(&json),
        "JSON output must repeat byte for byte"
    );
}

#[test]
fn plot_writes_a_repeatable_svg_with_the_regimes() {
    let dir = tempfile::tempdir().unwrap();
    let args = [
        "plot",
        "model",
        "--material",
        "si",
        "--donor",
        "P=1e15",
        "--kelvin",
        "20:1000:20",
        "--out",
        "m.svg",
    ];
    let first = run_in(dir.path(), &args);
    assert!(
        first.status.success(),
        "{}",
        String::from_utf8_lossy(&first.stderr)
    );
    let a = std::fs::read_to_string(dir.path().join("m.svg")).unwrap();
    let second = run_in(dir.path(), &args);
    assert!(second.status.success());
    let b = std::fs::read_to_string(dir.path().join("m.svg")).unwrap();
    assert_eq!(a, b, "SVG must be byte-identical from run to run");
    assert!(
        a.starts_with("<svg") && a.trim_end().ends_with("</svg>"),
        "SVG framing"
    );
    assert!(a.contains("xmlns=\"http://www.w3.org/2000/svg\""));
    // 1e15 P in Si from 20 to 1000 K passes through all three regimes.
    for regime in ["freeze-out", "extrinsic", "intrinsic"] {
        assert!(a.contains(regime), "SVG lacks the {regime} label");
    }
    // A refused plot leaves no file behind.
    let bad = run_in(
        dir.path(),
        &[
            "plot",
            "model",
            "--material",
            "si",
            "--kelvin",
            "300",
            "--out",
            "x.svg",
        ],
    );
    assert_eq!(bad.status.code(), Some(2));
    assert!(!dir.path().join("x.svg").exists());
    bad_input(
        &[
            "plot",
            "model",
            "--material",
            "si",
            "--out",
            // Missing folders are created; a folder below a device node
            // cannot be.
            "/dev/null/m.svg",
        ],
        &["--out '/dev/null/m.svg'", "cannot write"],
    );
}
