//! The station chain through the real binary: simulate -> calibrate -> table
//! (every export format) -> verify -> apply, on a small lot; byte-identical
//! reruns; bad input named by file, line and field; exit codes 0/1/2.

mod common;

use common::{ok_in, run_in, stderr, stdout};
use std::path::Path;

/// Runs the chain for 3 well-logger parts in `dir`; returns the first serial.
fn chain(dir: &Path) -> String {
    ok_in(
        dir,
        &[
            "simulate",
            "well-logger",
            "--parts",
            "3",
            "--seed",
            "9",
            "--out",
            "cal.csv",
            "--write-spec",
            "well.toml",
        ],
    );
    ok_in(
        dir,
        &[
            "simulate",
            "well.toml",
            "--parts",
            "3",
            "--seed",
            "9",
            "--check",
            "--out",
            "check.csv",
        ],
    );
    ok_in(
        dir,
        &[
            // Same calibrate call as tests/cli_plot_station.rs: each test file builds its own lot.
            "calibrate",
            "well.toml",
            "cal.csv",
            "--out-dir",
            "parts",
            "--quiet",
        ],
    );
    let serial = "WELL-0001".to_string();
    let part = format!("parts/{serial}.part.json");
    ok_in(dir, &["table", &part, "--out", "t.bin"]);
    for (fmt, file) in [("rust", "t.rs"), ("c", "t.h"), ("hex", "t.hex")] {
        ok_in(
            dir,
            &[
                "table",
                &part,
                "--format",
                fmt,
                "--address",
                "0x0800F000",
                "--out",
                file,
            ],
        );
    }
    serial
}

#[test]
fn chain_runs_and_is_byte_identical() {
    let a = tempfile::tempdir().unwrap();
    let b = tempfile::tempdir().unwrap();
    let serial = chain(a.path());
    chain(b.path());
    for f in [
        "cal.csv",
        "check.csv",
        "well.toml",
        "t.bin",
        "t.rs",
        "t.h",
        "t.hex",
        &format!("parts/{serial}.part.json"),
    ] {
        let x = std::fs::read(a.path().join(f)).unwrap();
        let y = std::fs::read(b.path().join(f)).unwrap();
        assert!(x == y, "{f} differs between two identical runs");
    }
    let dir = a.path();
    let part = format!("parts/{serial}.part.json");
    // Exports carry the same bytes as the image.
    let image = std::fs::read(dir.join("t.bin")).unwrap();
    let hex = std::fs::read_to_string(dir.join("t.hex")).unwrap();
    assert!(
        hex.starts_with(":020000040800"),
        "extended linear address 0x0800 first: {hex}"
    );
    let rs = std::fs::read_to_string(dir.join("t.rs")).unwrap();
    assert!(rs.contains(&format!("pub static DRIFT_TABLE: [u8; {}]", image.len())));
    // verify --json: the contract fields, pass, >= 1e5 points.
    let json = ok_in(dir, &["verify", "t.bin", "--against", &part, "--json"]);
    let v: serde_json::Value = serde_json::from_str(&json).unwrap();
    for field in [
        "max_error_ppm",
        "rms_error_ppm",
        "worst_t_c",
        "points",
        "budget_ppm",
        "pass",
        "analytic_bound_ppm",
    ] {
        assert!(v.get(field).is_some(), "verify JSON lacks {field}: {json}");
    }
    assert!(v["points"].as_u64().unwrap() >= 100_000);
    assert_eq!(v["pass"], true);
    // The table's own error must lie within the analytic bound (the bound is
    // an upper bound of the interpolation error; quantization of a Q image is
    // below 1 ppm on these parts, see `table` output).
    let max = v["max_error_ppm"].as_f64().unwrap();
    let bound = v["analytic_bound_ppm"].as_f64().unwrap();
    assert!(
        max <= bound + 1.0,
        "dense max {max} exceeds analytic bound {bound}"
    );
    // apply with the part (f64 model) and with the image (runtime crate):
    // held-out rows inside -20..85 C stay within the 500 ppm budget; the lot
    // and seed are fixed, so this is a regression check of the whole chain.
    for args in [
        vec!["apply", &part, "check.csv", "--json"],
        vec!["apply", "t.bin", "check.csv", "--against", &part, "--json"],
    ] {
        let out = ok_in(dir, &args);
        let r: serde_json::Value = serde_json::from_str(&out).unwrap();
        let rows = r["rows"].as_array().unwrap();
        assert!(!rows.is_empty());
        for row in rows {
            let t = row["chamber_c"].as_f64().unwrap();
            if (-20.0..=85.0).contains(&t) {
                let e = row["error_ppm"].as_f64().unwrap();
                assert!(e.abs() <= 500.0, "{args:?}: {row}");
            }
        }
    }
}

#[test]
fn verify_over_budget_exits_1() {
    let d = tempfile::tempdir().unwrap();
    let serial = chain(d.path());
    let part = format!("parts/{serial}.part.json");
    // A budget below the fit residual leaves no allowance: check failed.
    let o = run_in(
        d.path(),
        &[
            "verify",
            "t.bin",
            "--against",
            &part,
            "--budget",
            "1",
            "--json",
        ],
    );
    assert_eq!(o.status.code(), Some(1), "{}", stderr(&o));
    let v: serde_json::Value = serde_json::from_str(&stdout(&o)).unwrap();
    assert_eq!(v["pass"], false);
}

/// `apply` on a chamber file without the part's rows is refused (exit 2)
/// with the file, the field and the serial; no row is compensated.
#[test]
fn apply_without_the_parts_rows_is_refused() {
    let d = tempfile::tempdir().unwrap();
    let serial = chain(d.path());
    let part = format!("parts/{serial}.part.json");
    let check = std::fs::read_to_string(d.path().join("check.csv")).unwrap();
    let others: String = check
        .lines()
        .filter(|l| !l.contains(serial.as_str()))
        .map(|l| format!("{l}\n"))
        .collect();
    assert!(others.lines().count() > 1, "other parts' rows remain");
    std::fs::write(d.path().join("others.csv"), others).unwrap();
    let o = run_in(d.path(), &["apply", &part, "others.csv", "--json"]);
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
    let err = stderr(&o);
    assert!(
        err.contains("others.csv") && err.contains("serial") && err.contains(&serial),
        "{err}"
    );
    assert!(stdout(&o).is_empty());
}

/// `verify` decides against `budget - fit - temperature - runtime`: a budget
/// 3 ppm below the measured table error plus the other terms must fail, one
/// 3 ppm above must pass. The fit term is checked against the part file's
/// own numbers (the rule of `station::budget`: fewer than four calibration
/// temperatures count the fit residual or the stated model error, whichever
/// is larger); a sign flipped on any term moves the allowance by twice that
/// term (here 44 ppm for the fit, 63 ppm for the temperature term), far
/// beyond the 3 ppm margins.
#[test]
fn verify_fails_just_over_and_passes_just_under_the_budget() {
    let d = tempfile::tempdir().unwrap();
    let serial = chain(d.path());
    let part = format!("parts/{serial}.part.json");
    let verify = |budget: Option<f64>| {
        let mut args = vec!["verify".to_string(), "t.bin".into(), "--against".into()];
        args.push(part.clone());
        args.push("--json".into());
        if let Some(b) = budget {
            args.push("--budget".into());
            // Shortest round-trip form: the binary reads back the same f64.
            args.push(format!("{b}"));
        }
        let refs: Vec<&str> = args.iter().map(String::as_str).collect();
        let o = run_in(d.path(), &refs);
        let v: serde_json::Value = serde_json::from_str(&stdout(&o)).unwrap();
        (o.status.code(), v, stderr(&o))
    };
    let (code, v, err) = verify(None);
    assert_eq!(code, Some(0), "{err}");
    let p: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(d.path().join(&part)).unwrap()).unwrap();
    assert_eq!(p["holdouts"].as_array().unwrap().len(), 3, "{p}");
    let fit_expected = p["fit_max_ppm"]
        .as_f64()
        .unwrap()
        .max(p["scenario"]["model_error_ppm"].as_f64().unwrap_or(0.0));
    let terms = &v["terms"];
    let term = |name: &str| terms[name].as_f64().unwrap();
    assert_eq!(term("fit_residual_ppm"), fit_expected, "{v}");
    assert_eq!(terms["cross_validation_budgeted"], false, "{v}");
    // The terms this test relies on are large enough to show a flipped sign.
    assert!(
        term("fit_residual_ppm") > 3.0 && term("temperature_ppm") > 3.0,
        "{v}"
    );
    let measured = v["max_error_ppm"].as_f64().unwrap();
    let others = term("fit_residual_ppm") + term("temperature_ppm") + term("runtime_model_ppm");
    for (margin_ppm, pass) in [(-3.0, false), (3.0, true)] {
        let budget = measured + others + margin_ppm;
        let (code, v, err) = verify(Some(budget));
        assert_eq!(
            code,
            Some(if pass { 0 } else { 1 }),
            "budget {budget} (measured {measured} + terms {others} {margin_ppm:+}): {err}"
        );
        assert_eq!(v["pass"], pass, "{v}");
        // The allowance is the measured error plus the margin; the only
        // error is the rounding of a few additions of numbers below 1000
        // (~1e-13 ppm), so 1e-9 ppm is generous and far below the margin.
        let allowance = v["table_allowance_ppm"].as_f64().unwrap();
        assert!(
            (allowance - (measured + margin_ppm)).abs() < 1e-9,
            "allowance {allowance}, expected {}",
            measured + margin_ppm
        );
        assert_eq!(v["max_error_ppm"].as_f64().unwrap(), measured);
    }
}

/// An image with one gain node raised by 1 % and its CRC recomputed (as a
/// careless or malicious edit would leave it) passes the parser, so only
/// `verify` can refuse it: exit 1, the dense error at that node's
/// temperature and full-scale stimulus, far over the allowance. The same
/// edit without a new CRC is refused earlier, by the parser (exit 2).
#[test]
fn verify_refuses_a_re_signed_image_with_one_value_changed() {
    use compensate::TableView;
    use compensate::image::layout::{AXIS_LEN, HEADER_LEN, WORD};
    use compensate::interp::Nodes;
    let d = tempfile::tempdir().unwrap();
    let serial = chain(d.path());
    let part = format!("parts/{serial}.part.json");
    let img = std::fs::read(d.path().join("t.bin")).unwrap();
    let view = TableView::parse(&img).unwrap();
    let t = view.tables_q().expect("the default table of this lot is Q");
    let n_t = view.temperature_nodes();
    assert_eq!(n_t, 3, "the middle node below is node 1");
    // Layout (compensate crate docs): header, thermometer (axis + n_sig
    // words), channels (axis, then offset, gain, quadratic columns).
    let gain_at = HEADER_LEN + AXIS_LEN + view.thermometer_nodes() * WORD + AXIS_LEN + n_t * WORD;
    let node = gain_at + WORD;
    let old = i32::from_le_bytes(img[node..node + 4].try_into().unwrap());
    assert_eq!(old, t.gain.node(1), "offset of gain node 1");
    let node_t_c =
        f64::from(t.temperature.start() + t.temperature.step()) / f64::from(t.q.temperature).exp2();
    let mut bad = img.clone();
    let new = (f64::from(old) * 1.01).round() as i32;
    bad[node..node + 4].copy_from_slice(&new.to_le_bytes());
    std::fs::write(d.path().join("unsigned.bin"), &bad).unwrap();
    let body = bad.len() - 4;
    let crc = compensate::crc::crc32(&bad[..body]);
    bad[body..].copy_from_slice(&crc.to_le_bytes());
    std::fs::write(d.path().join("resigned.bin"), &bad).unwrap();

    let o = run_in(d.path(), &["verify", "unsigned.bin", "--against", &part]);
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
    assert!(stderr(&o).to_lowercase().contains("crc"), "{}", stderr(&o));

    let o = run_in(
        d.path(),
        &["verify", "resigned.bin", "--against", &part, "--json"],
    );
    assert_eq!(o.status.code(), Some(1), "{}", stderr(&o));
    assert!(
        stderr(&o).contains("resigned.bin: table error")
            && stderr(&o).contains("exceeds the allowance"),
        "{}",
        stderr(&o)
    );
    let v: serde_json::Value = serde_json::from_str(&stdout(&o)).unwrap();
    assert_eq!(v["pass"], false);
    // 1 % of the gain is 10 000 ppm of span at the full-scale stimulus
    // (10 bar of a 0..10 bar span); the table's own error (254 ppm on this
    // part, see `table`) can only take a few hundred ppm off it.
    let max = v["max_error_ppm"].as_f64().unwrap();
    assert!((9_000.0..11_000.0).contains(&max), "{v}");
    assert_eq!(v["worst_stimulus"].as_f64(), Some(10.0), "{v}");
    // The edit peaks at the node and falls off over the 52.5 K node
    // spacing (quadratically near the node); the table's own error, which
    // slopes by tens of ppm per kelvin there, moves the peak of the sum off
    // the node: measured 2.8 K. 6 K (about twice that, a ninth of the
    // spacing) still tells this node from any other point of the range.
    let worst = v["worst_t_c"].as_f64().unwrap();
    assert!(
        (worst - node_t_c).abs() < 6.0,
        "worst at {worst} C, node at {node_t_c} C"
    );
}

#[test]
fn bad_rows_are_named_and_other_parts_still_calibrate() {
    let d = tempfile::tempdir().unwrap();
    let dir = d.path();
    ok_in(
        dir,
        &[
            "simulate",
            "battery-current",
            "--parts",
            "2",
            "--out",
            "lot.csv",
        ],
    );
    let text = std::fs::read_to_string(dir.join("lot.csv")).unwrap();
    // Corrupt the output of the first row of the second part (line 11).
    let mut lines: Vec<String> = text.lines().map(str::to_string).collect();
    let mut f: Vec<String> = lines[10].split(',').map(str::to_string).collect();
    f[3] = "12abc".into();
    lines[10] = f.join(",");
    std::fs::write(dir.join("bad.csv"), lines.join("\n") + "\n").unwrap();
    let o = run_in(
        dir,
        &[
            "calibrate",
            "battery-current",
            "bad.csv",
            "--out-dir",
            "parts",
            "--quiet",
        ],
    );
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
    assert!(
        stderr(&o).contains("bad.csv:11: field 'output'"),
        "{}",
        stderr(&o)
    );
    // Both parts still got a part file (the second from its 8 good rows).
    for s in ["BATTERY-0001", "BATTERY-0002"] {
        assert!(
            dir.join(format!("parts/{s}.part.json")).is_file(),
            "{s} missing"
        );
    }
}

#[test]
fn two_temperatures_are_reported_not_accepted() {
    let d = tempfile::tempdir().unwrap();
    let dir = d.path();
    ok_in(
        dir,
        &[
            "simulate",
            "well-logger",
            "--parts",
            "1",
            "--temps",
            "-20,85",
            "--out",
            "two.csv",
        ],
    );
    let o = run_in(
        dir,
        &[
            "calibrate",
            "well-logger",
            "two.csv",
            "--out-dir",
            "p",
            "--quiet",
        ],
    );
    assert_eq!(o.status.code(), Some(1), "{}", stderr(&o));
    let part = std::fs::read_to_string(dir.join("p/WELL-0001.part.json")).unwrap();
    assert!(!part.contains("\"status\": \"ok\""), "{part}");
    // table refuses the rejected part with a named reason.
    let o = run_in(dir, &["table", "p/WELL-0001.part.json"]);
    assert_eq!(o.status.code(), Some(2), "{}", stderr(&o));
    let err = stderr(&o);
    assert!(
        err.contains("p/WELL-0001.part.json:")
            && err.contains("field 'status'")
            && err.contains("was not calibrated"),
        "{err}"
    );
}

#[test]
fn bad_spec_and_part_files_name_the_place() {
    let d = tempfile::tempdir().unwrap();
    let dir = d.path();
    std::fs::write(
        dir.join("p.json"),
        "{\n  \"format\": \"semidrift-part/1\"\n}\n",
    )
    .unwrap();
    let o = run_in(dir, &["table", "p.json"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("p.json:"), "{}", stderr(&o));
    let o = run_in(dir, &["simulate", "no-such.toml", "--out", "x.csv"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(stderr(&o).contains("no-such.toml:1:"), "{}", stderr(&o));
    assert!(!dir.join("x.csv").exists(), "nothing written on failure");
}

/// An element whose bow changes with temperature: a 1-D table (offset and
/// gain columns) leaves the bow uncorrected, so under a budget tighter than
/// the bow `table` must pick a 2-D correction, and `verify` must sample it
/// over temperature and raw signal (>= 1e5 points) and pass; under a loose
/// budget the smaller 1-D table is still chosen.
#[test]
fn bowed_part_gets_a_2d_table_that_verifies() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    chain(d);
    let mut part: serde_json::Value =
        serde_json::from_slice(&std::fs::read(d.join("parts/WELL-0001.part.json")).unwrap())
            .unwrap();
    // 0.04 % FS at mid-scale at 25 C, falling 6 ppm/K: 0.046 % at -20 C,
    // 0.004 % at 85 C (invented, of the order a gauge die shows).
    part["scenario"]["bow"] = serde_json::json!({"mid_rel": 4e-4, "mid_rel_per_k": -6e-6});
    std::fs::write(
        d.join("bowed.part.json"),
        serde_json::to_vec_pretty(&part).unwrap(),
    )
    .unwrap();
    let text = ok_in(
        d,
        &[
            "table",
            "bowed.part.json",
            "--budget",
            "500",
            "--json",
            "--out",
            "b.bin",
        ],
    );
    let outcome: serde_json::Value = serde_json::from_str(&text).unwrap();
    assert_eq!(
        outcome["plan"]["interpolation"], "bilinear2d",
        "a 460 ppm bow under a 500 ppm budget needs a 2-D table: {}",
        outcome["plan"]
    );
    assert!(outcome["plan"]["n_raw"].as_u64().unwrap() >= 2);
    let report: serde_json::Value = serde_json::from_str(&ok_in(
        d,
        &[
            "verify",
            "b.bin",
            "--against",
            "bowed.part.json",
            "--budget",
            "500",
            "--json",
        ],
    ))
    .unwrap();
    assert_eq!(report["pass"], true, "{report}");
    assert!(report["points"].as_u64().unwrap() >= 100_000, "{report}");
    // The analytic bound bounds the sampled maximum (it is an upper bound of
    // the interpolation remainder; quantization adds < 2 ppm here).
    let (max, bound) = (
        report["max_error_ppm"].as_f64().unwrap(),
        report["analytic_bound_ppm"].as_f64().unwrap(),
    );
    assert!(
        max <= bound + 2.0,
        "dense max {max} ppm above the analytic bound {bound} ppm"
    );
    // Same part, one format forced, loose budget: a 1-D table suffices and
    // is smaller, and its error includes the uncorrected bow (>= 400 ppm).
    let loose: serde_json::Value = serde_json::from_str(&ok_in(
        d,
        &[
            "table",
            "bowed.part.json",
            "--budget",
            "3000",
            "--number-format",
            "q",
            "--json",
            "--out",
            "l.bin",
        ],
    ))
    .unwrap();
    assert_ne!(
        loose["plan"]["interpolation"], "bilinear2d",
        "{}",
        loose["plan"]
    );
    assert_eq!(loose["plan"]["format"], "q");
    assert!(
        loose["dense"]["max_error_ppm"].as_f64().unwrap() >= 400.0,
        "a 1-D table cannot correct the bow: {}",
        loose["dense"]
    );
}

/// `--signal-unit adc-code` images take the temperature signal as whole ADC
/// codes (as firmware reads them): they verify like the ohm image of the
/// same plan and compensate chamber rows (converted to codes by `apply`) to
/// the same readings within the code rounding of the thermometer input.
#[test]
fn adc_code_images_verify_and_apply() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    chain(d);
    let part = "parts/WELL-0001.part.json";
    let mut worst = Vec::new();
    for (unit, file) in [("ohm", "o.bin"), ("adc-code", "c.bin")] {
        ok_in(
            d,
            &[
                "table",
                part,
                "--number-format",
                "q",
                "--interpolation",
                "linear",
                "--signal-unit",
                unit,
                "--out",
                file,
            ],
        );
        let v: serde_json::Value =
            serde_json::from_str(&ok_in(d, &["verify", file, "--against", part, "--json"]))
                .unwrap();
        assert_eq!(v["pass"], true, "{unit}: {v}");
        let a: serde_json::Value = serde_json::from_str(&ok_in(
            d,
            &["apply", file, "check.csv", "--against", part, "--json"],
        ))
        .unwrap();
        worst.push(a["max_abs_error_ppm"].as_f64().unwrap());
    }
    // One signal code is 1.2 mohm = 0.15 mK on this thermometer (1.6e-3/K
    // of 5 kohm); times the 2100 ppm/K raw drift that is under 1 ppm: the
    // two images' worst held-out errors agree within 5 ppm.
    assert!(
        (worst[0] - worst[1]).abs() < 5.0,
        "ohm image worst {} ppm, code image worst {} ppm",
        worst[0],
        worst[1]
    );
}

/// `--channel-axis signal` images (channels tabulated over the temperature
/// signal, one look-up per update on the part) meet the budget under
/// `verify`, report the axis in the plan, and compensate the held-out
/// chamber rows like the image over temperature (both are the same fitted
/// model sampled differently).
#[test]
fn signal_axis_images_verify_and_apply() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    chain(d);
    let part = "parts/WELL-0001.part.json";
    let mut worst = Vec::new();
    for (axis, file) in [("temperature", "t.bin"), ("signal", "s.bin")] {
        let out: serde_json::Value = serde_json::from_str(&ok_in(
            d,
            &[
                "table",
                part,
                "--number-format",
                "f32",
                "--channel-axis",
                axis,
                "--signal-unit",
                "adc-code",
                "--json",
                "--out",
                file,
            ],
        ))
        .unwrap();
        // The plan names its axis only when it is not the default.
        let named = out["plan"]["axis"].as_str().unwrap_or("temperature");
        assert_eq!(named, axis, "{out}");
        let v: serde_json::Value =
            serde_json::from_str(&ok_in(d, &["verify", file, "--against", part, "--json"]))
                .unwrap();
        assert_eq!(v["pass"], true, "{axis}: {v}");
        assert_eq!(v["plan"]["axis"].as_str().unwrap_or("temperature"), axis);
        // Same verify-then-apply steps as the loop above, here per plan axis.
        let a: serde_json::Value = serde_json::from_str(&ok_in(
            d,
            &["apply", file, "check.csv", "--against", part, "--json"],
        ))
        .unwrap();
        worst.push(a["max_abs_error_ppm"].as_f64().unwrap());
    }
    // Each image's own error is held within the table allowance of the
    // scenario's 500 ppm budget, but the held-out error is dominated by
    // the fit (the same for both): their worst cases differ by at most
    // the two tables' own errors, each under the 500 ppm budget; 150 ppm
    // is the largest table error `verify` has reported for this lot's
    // seed (see the budget lines it prints), so the gap stays below 300.
    assert!(
        (worst[0] - worst[1]).abs() < 300.0,
        "temperature-axis image worst {} ppm, signal-axis image worst {} ppm",
        worst[0],
        worst[1]
    );
}
