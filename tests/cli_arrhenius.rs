//! `semidrift arrhenius` on data with a known answer, run as a user runs it.

mod common;

use common::{bad_input, run_in, stdout};
use std::path::Path;

/// Boltzmann constant in eV/K (CODATA 2018).
const K_EV: f64 = 8.617_333_262e-5;

/// Writes `t_k,<column>` rows of `a T^m exp(-ea/kT)` (or its reciprocal).
fn write_law(path: &Path, column: &str, m: f64, ea_ev: f64, t_k: impl Iterator<Item = f64>) {
    let mut text = format!("t_k,comment,{column}\n");
    for t in t_k {
        let y = 3e3 * t.powf(m) * (-ea_ev / (K_EV * t)).exp();
        let v = if column.contains("resist") {
            1.0 / y
        } else {
            y
        };
        text += &format!("{t},x,{v:e}\n");
    }
    std::fs::write(path, text).unwrap();
}

fn fit_json(dir: &Path, args: &[&str]) -> serde_json::Value {
    let o = run_in(dir, args);
    assert!(
        o.status.success(),
        "{args:?}: {}",
        String::from_utf8_lossy(&o.stderr)
    );
    serde_json::from_str(&stdout(&o)).expect("stdout is JSON alone")
}

#[test]
fn closed_form_data_gives_back_ea_and_m() {
    let dir = tempfile::tempdir().unwrap();
    // Intrinsic-like silicon numbers: Ea = Eg0/2 = 0.6 eV, m = 1.5 - 2.4.
    write_law(
        &dir.path().join("s.csv"),
        "conductivity",
        -0.9,
        0.6,
        (0..31).map(|i| 500.0 + 10.0 * i as f64),
    );
    let v = fit_json(
        dir.path(),
        &["arrhenius", "s.csv", "--json", "--regime", "intrinsic"],
    );
    // Exact data: only float rounding of the CSV's shortest-exact numbers and
    // the QR solve remain; 1e-7 eV and 1e-5 in m are far above that.
    let ea = v["fit"]["ea_ev"].as_f64().unwrap();
    let m = v["fit"]["prefactor_power"].as_f64().unwrap();
    assert!((ea - 0.6).abs() < 1e-7, "Ea {ea}");
    assert!((m + 0.9).abs() < 1e-5, "m {m}");
    assert_eq!(v["selected"]["name"], "band_gap_0k_linear_ev");
    assert!((v["selected"]["value_ev"].as_f64().unwrap() - 1.2).abs() < 2e-7);
    assert_eq!(v["interpretations"].as_array().unwrap().len(), 3);

    // Resistance in a window, m fixed: same Ea.
    write_law(
        &dir.path().join("r.csv"),
        "resistance_ohm",
        1.5,
        0.045,
        (0..40).map(|i| 20.0 + 2.0 * i as f64),
    );
    let v = fit_json(
        dir.path(),
        &[
            "arrhenius",
            "r.csv",
            "--from-k",
            "30",
            "--to-k",
            "60",
            "--prefactor-power",
            "1.5",
            "--json",
        ],
    );
    let ea = v["fit"]["ea_ev"].as_f64().unwrap();
    assert!((ea - 0.045).abs() < 1e-8, "Ea {ea}");
    assert_eq!(v["fit"]["points"], 16, "30..60 K step 2 inclusive");
    assert!(v["fit"]["prefactor_power_sigma"].is_null(), "m was fixed");
    assert!(v["selected"].is_null(), "no regime given");
}

#[test]
fn human_report_names_all_interpretations() {
    let dir = tempfile::tempdir().unwrap();
    write_law(
        &dir.path().join("s.csv"),
        "conductivity",
        0.0,
        0.3,
        (0..10).map(|i| 300.0 + 10.0 * i as f64),
    );
    let o = run_in(
        dir.path(),
        &["arrhenius", "s.csv", "--regime", "freeze-out-compensated"],
    );
    let text = stdout(&o);
    assert!(o.status.success());
    for s in [
        "Ea = 0.30000 eV",
        "band_gap_0k_linear_ev",
        "ionization_energy_weak_compensation_ev",
        "<- selected",
    ] {
        assert!(text.contains(s), "report lacks {s:?}:\n{text}");
    }
    let selected = text.lines().find(|l| l.contains("<- selected")).unwrap();
    assert!(
        selected.contains("ionization_energy_strong_compensation_ev"),
        "{selected}"
    );
}

#[test]
fn bad_files_and_options_exit_2_naming_file_line_and_column() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("bad.csv");
    std::fs::write(&path, "t_c,conductivity\n20,1.0\n30,oops\n").unwrap();
    let file = path.to_str().unwrap();
    bad_input(
        &["arrhenius", file],
        &["bad.csv:3: field 'conductivity'", "'oops' is not a number"],
    );
    std::fs::write(&path, "t_c,volts\n20,1.0\n").unwrap();
    bad_input(&["arrhenius", file], &["bad.csv:1:", "none of the columns"]);
    std::fs::write(&path, "t_k,conductivity\n300,1\n310,2\n").unwrap();
    bad_input(
        &["arrhenius", file],
        &["bad.csv", "the fit needs at least 4"],
    );
    bad_input(
        &["arrhenius", file, "--from-k", "400", "--to-k", "300"],
        &["--to-k '300'"],
    );
    bad_input(&["arrhenius", file, "--from-k", "-1"], &["--from-k '-1'"]);
    bad_input(&["arrhenius", "no-such.csv"], &["no-such.csv"]);
}
