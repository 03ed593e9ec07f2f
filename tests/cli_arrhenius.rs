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
    let again = run_in(
        dir.path(),
        &["arrhenius", "s.csv", "--regime", "freeze-out-compensated"],
    );
    assert_eq!(text, stdout(&again), "report must repeat byte for byte");
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

/// Runs `semidrift model ... --csv` into `dir/name` (the model-generated data set).
fn model_csv(dir: &Path, name: &str, args: &[&str]) {
    let mut all = vec!["model", "--material", "si"];
    all.extend_from_slice(args);
    all.push("--csv");
    let o = run_in(dir, &all);
    assert!(
        o.status.success(),
        "{all:?}: {}",
        String::from_utf8_lossy(&o.stderr)
    );
    std::fs::write(dir.join(name), &o.stdout).unwrap();
}

fn ea_of(v: &serde_json::Value) -> f64 {
    v["fit"]["ea_ev"].as_f64().unwrap()
}

#[test]
fn freeze_out_of_model_data_gives_the_model_donor_level() {
    use host_tools::physics::{Material, Species, dopant::dopant_level};
    let dir = tempfile::tempdir().unwrap();
    let level = dopant_level(Material::Si, Species::P).expect("P is a donor in Si");
    // Weak compensation, P = 1e15 alone: n ~ T^{3/4} exp(-E_d / 2kT), so 2 Ea = E_d.
    model_csv(
        dir.path(),
        "weak.csv",
        &["--donor", "P=1e15", "--kelvin", "20:40:1"],
    );
    let v = fit_json(
        dir.path(),
        &[
            "arrhenius",
            "weak.csv",
            "--column",
            "n_cm3",
            "--prefactor-power",
            "0.75",
            "--json",
            "--regime",
            "freeze-out",
        ],
    );
    let e_d = level.ionization_energy_ev(1e15);
    let got = v["selected"]["value_ev"].as_f64().unwrap();
    assert_eq!(
        v["selected"]["name"],
        "ionization_energy_weak_compensation_ev"
    );
    // 1.5 meV (3 %): the sqrt law drops the factor (1 - n/N_D) and the
    // T dependence of the model's density-of-states masses, both of which
    // the fixed T^{3/4} cannot absorb over 20..40 K.
    assert!(
        (got - e_d).abs() < 1.5e-3,
        "2 Ea {got} eV, model E_d(1e15) {e_d} eV"
    );

    // Strong compensation, P = 1e16 with B = 1e15 (n << N_A below 40 K):
    // n ~ T^{3/2} exp(-E_d / kT), so Ea itself is E_d.
    model_csv(
        dir.path(),
        "strong.csv",
        &[
            "--donor",
            "P=1e16",
            "--acceptor",
            "B=1e15",
            "--kelvin",
            "20:40:1",
        ],
    );
    let v = fit_json(
        dir.path(),
        &[
            "arrhenius",
            "strong.csv",
            "--column",
            "n_cm3",
            "--prefactor-power",
            "1.5",
            "--json",
        ],
    );
    let e_d = level.ionization_energy_ev(1e16);
    let got = ea_of(&v);
    // Same 1.5 meV argument: the model's masses vary with T, and n/N_A is not 0.
    assert!(
        (got - e_d).abs() < 1.5e-3,
        "Ea {got} eV, model E_d(1e16) {e_d} eV"
    );
}

#[test]
fn intrinsic_model_data_gives_the_extrapolated_gap() {
    let dir = tempfile::tempdir().unwrap();
    model_csv(
        dir.path(),
        "i.csv",
        &["--donor", "P=1e12", "--kelvin", "600:1000:10"],
    );
    let from_rho = fit_json(
        dir.path(),
        &["arrhenius", "i.csv", "--json", "--regime", "intrinsic"],
    );
    let from_ni = fit_json(
        dir.path(),
        &["arrhenius", "i.csv", "--column", "ni_cm3", "--json"],
    );
    let (gap_rho, gap_ni) = (2.0 * ea_of(&from_rho), 2.0 * ea_of(&from_ni));
    // Lattice-limited mobility in 1e12-doped Si is close to a power of T, which
    // the fitted m ln T absorbs: conductivity and n_i give the same gap within 10 meV.
    assert!(
        (gap_rho - gap_ni).abs() < 0.01,
        "gap from rho {gap_rho}, from n_i {gap_ni}"
    );
    // The model's own gap, extrapolated to 0 K along its chord over the
    // window. The fit's ln T term takes up part of the gap's curvature
    // (Varshni), so the two differ by a fraction of the tangent-intercept
    // spread over 600..1000 K (about 40 meV for Si's Varshni parameters): 30 meV.
    let text = std::fs::read_to_string(dir.path().join("i.csv")).unwrap();
    let mut lines = text.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    let col = |name: &str| header.iter().position(|h| *h == name).unwrap();
    let (it, ie) = (col("t_k"), col("eg_ev"));
    let rows: Vec<(f64, f64)> = lines
        .map(|l| {
            let f: Vec<&str> = l.split(',').collect();
            (f[it].parse().unwrap(), f[ie].parse().unwrap())
        })
        .collect();
    let ((t0, e0), (t1, e1)) = (rows[0], rows[rows.len() - 1]);
    let chord_gap_0k = e0 - t0 * (e1 - e0) / (t1 - t0);
    assert!(
        (gap_ni - chord_gap_0k).abs() < 0.03,
        "2 Ea {gap_ni} eV, chord-extrapolated gap {chord_gap_0k} eV"
    );
}

/// Published Si gap extrapolated linearly to 0 K from the tangent at the
/// window's middle temperature: Varshni form with Thurmond's constants
/// (Thurmond 1975, J. Electrochem. Soc. 122, 1133: Eg(0) 1.17 eV, alpha
/// 4.73e-4 eV/K, beta 636 K; recalled from memory):
/// `Eg(T0) - T0 dEg/dT(T0)`. At 575 K this is 1.238 eV.
fn si_gap_linear_0k_ev(t0_k: f64) -> f64 {
    let (eg0, alpha, beta) = (1.17, 4.73e-4, 636.0);
    let eg = eg0 - alpha * t0_k * t0_k / (t0_k + beta);
    let slope = -alpha * t0_k * (t0_k + 2.0 * beta) / ((t0_k + beta) * (t0_k + beta));
    eg - t0_k * slope
}

/// A 1e13 cm^-3 P-doped Si bar, resistivity from `semidrift model` over
/// `from:to` K, written as the CSV a user would fit.
fn bar_csv(dir: &Path, kelvin: &str) {
    let csv = common::ok(&[
        "model",
        "--material",
        "si",
        "--donor",
        "P=1e13",
        "--kelvin",
        kelvin,
        "--csv",
    ]);
    std::fs::write(dir.join("bar.csv"), csv).unwrap();
}

/// `--material si --regime intrinsic` on a window whose low end is still
/// partly extrinsic (450..700 K): the gap comes within 0.03 eV of the
/// published linear extrapolation (the acceptance of the fit), and the
/// reported combined uncertainty covers the error left within 2 sigma.
/// The free-m fit of the same data misses by about 0.13 eV; its combined
/// uncertainty (with the shift against the reference power) must cover that.
#[test]
fn intrinsic_gap_with_material_laws_and_honest_uncertainty() {
    let dir = tempfile::tempdir().unwrap();
    bar_csv(dir.path(), "450:700:5");
    let expected = si_gap_linear_0k_ev(575.0);
    assert!((expected - 1.238).abs() < 1e-3, "hand value {expected}");
    let args = [
        "arrhenius",
        "bar.csv",
        "--column",
        "rho_ohm_cm",
        "--regime",
        "intrinsic",
        "--json",
    ];
    let mut with_material = args.to_vec();
    with_material.extend(["--material", "si"]);
    let v = fit_json(dir.path(), &with_material);
    assert_eq!(v["prefactor_power_from_material"], true);
    let gap = v["selected"]["value_ev"].as_f64().unwrap();
    let sigma = v["selected"]["sigma_ev"].as_f64().unwrap();
    println!("material si: {gap:.4} +- {sigma:.4} eV, published {expected:.4}");
    assert!((gap - expected).abs() < 0.03, "gap {gap} vs {expected}");
    assert!((gap - expected).abs() <= 2.0 * sigma, "sigma {sigma}");
    let v = fit_json(dir.path(), &args);
    let gap = v["selected"]["value_ev"].as_f64().unwrap();
    let sigma = v["selected"]["sigma_ev"].as_f64().unwrap();
    println!("free m: {gap:.4} +- {sigma:.4} eV");
    assert!(
        (gap - expected).abs() <= 2.0 * sigma,
        "free m: {gap} +- {sigma} must cover {expected} within 2 sigma"
    );
}

/// A window reaching down to 420 K, where the donors still raise the
/// electron density to 1.4 n_i (full model): the output warns (stdout and JSON) and says to
/// trim the low end; a purely intrinsic window does not warn.
#[test]
fn mixed_window_warns_and_names_the_end_to_trim() {
    let dir = tempfile::tempdir().unwrap();
    bar_csv(dir.path(), "420:700:5");
    let base = [
        "arrhenius",
        "bar.csv",
        "--column",
        "rho_ohm_cm",
        "--regime",
        "intrinsic",
    ];
    for material in [false, true] {
        let mut args = base.to_vec();
        if material {
            args.extend(["--material", "si"]);
        }
        let text = common::ok_in(dir.path(), &args);
        assert!(
            text.starts_with("WARNING: the window is not one regime")
                && text.contains("trim the low end"),
            "material {material}: {text}"
        );
        args.push("--json");
        let v = fit_json(dir.path(), &args);
        assert_eq!(v["regime_check"]["mixed"], true);
        assert_eq!(v["regime_check"]["trim_end"], "low");
        assert!(v["warning"].as_str().unwrap().contains("--from-k"));
    }
    bar_csv(dir.path(), "600:1000:10");
    let v = fit_json(
        dir.path(),
        &[&base[..], &["--json", "--material", "si"]].concat(),
    );
    assert_eq!(v["regime_check"]["mixed"], false);
    assert!(v["warning"].is_null(), "{v}");
}

#[test]
fn material_other_than_si_is_refused_with_the_reason() {
    let dir = tempfile::tempdir().unwrap();
    bar_csv(dir.path(), "600:1000:50");
    let o = run_in(
        dir.path(),
        &[
            "arrhenius",
            "bar.csv",
            "--column",
            "rho_ohm_cm",
            "--material",
            "gaas",
            "--regime",
            "intrinsic",
        ],
    );
    assert_eq!(o.status.code(), Some(2));
    assert!(
        common::stderr(&o).contains("--material 'gaas'"),
        "{}",
        common::stderr(&o)
    );
}

/// Model-based extraction on the mixed window 420..700 K of the 1e13 cm^-3
/// bar: the full model with density and gap offset free returns the
/// density (the data came from `semidrift model` with P = 1e13, so within
/// 1 %: CSV rounding to ten digits and the fit's non-degenerate neutrality
/// leave 1e-5 in ln sigma) and a gap whose linear 0 K extrapolation lies
/// within 0.03 eV of the published one (Thurmond 1975 via
/// `si_gap_linear_0k_ev` at the window's middle).
// Same arguments as the tests above: each test runs `arrhenius` on its own window and material.
#[test]
fn model_based_extraction_on_a_mixed_window() {
    let dir = tempfile::tempdir().unwrap();
    bar_csv(dir.path(), "420:700:5");
    let v = fit_json(
        dir.path(),
        &[
            "arrhenius",
            "bar.csv",
            "--column",
            "rho_ohm_cm",
            "--material",
            "si",
            "--model-dopant",
            "P",
            "--json",
        ],
    );
    let m = &v["model_fit"];
    let n = m["density_cm3"].as_f64().unwrap();
    assert!((n / 1e13 - 1.0).abs() < 0.01, "N {n:e}");
    let gap = m["band_gap_0k_linear_ev"].as_f64().unwrap();
    let expected = si_gap_linear_0k_ev(m["t_mid_k"].as_f64().unwrap());
    println!("model fit: N {n:e}, gap {gap:.4} eV, published {expected:.4} eV");
    assert!((gap - expected).abs() < 0.03, "gap {gap} vs {expected}");
    assert!(m["gap_offset_ev"].as_f64().unwrap().abs() < 1e-3, "{m}");
    // Without --material the option is refused by clap (exit 2).
    let o = run_in(
        dir.path(),
        &[
            "arrhenius",
            "bar.csv",
            "--column",
            "rho_ohm_cm",
            "--model-dopant",
            "P",
        ],
    );
    assert_eq!(o.status.code(), Some(2));
}
