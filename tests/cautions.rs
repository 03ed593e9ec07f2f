//! Cautions through the real binary: every subcommand's `--help` carries the
//! caution, and the files and JSON reports made from simulated data carry
//! `"simulated": true` and the simulated-data caution, while those made
//! from an element spec (the user's element, possibly measured) do not
//! claim to be simulated.

mod common;

use common::ok_in;
use serde_json::Value;
use std::path::Path;

/// Start of the caution every `--help` ends with (`cli::CAUTIONS`).
const HELP_CAUTION: &str = "CAUTION: semidrift's output feeds measuring instruments.";

/// Start of the one-line caution of text and JSON outputs (`station::output::CAUTION`).
const LINE_CAUTION: &str = "caution: where a reading protects people or property";

/// Start of the caution of simulated data (`station::output::SIMULATED_CAUTION`).
const SIMULATED_CAUTION: &str = "simulated data, not a measurement";

/// The subcommand names listed under `Commands:` in a `--help` text (without
/// clap's own `help`), so a new subcommand is covered without editing this file.
fn commands(help: &str) -> Vec<String> {
    help.lines()
        .skip_while(|l| !l.starts_with("Commands:"))
        .skip(1)
        .take_while(|l| l.starts_with("  "))
        .filter_map(|l| l.split_whitespace().next())
        .filter(|name| *name != "help")
        .map(str::to_string)
        .collect()
}

#[test]
fn every_subcommand_help_carries_the_caution() {
    let dir = tempfile::tempdir().unwrap();
    let top = ok_in(dir.path(), &["--help"]);
    assert!(top.contains(HELP_CAUTION), "semidrift --help:\n{top}");
    let names = commands(&top);
    // The subcommands of today; the list read from --help may only grow.
    for expected in [
        "model",
        "plot",
        "arrhenius",
        "element",
        "simulate",
        "qualify",
        "calibrate",
        "table",
        "verify",
        "apply",
        "lot",
        "demo",
    ] {
        assert!(
            names.iter().any(|n| n == expected),
            "{expected} missing from {names:?}"
        );
    }
    let mut checked = 0;
    for name in &names {
        let help = ok_in(dir.path(), &[name, "--help"]);
        assert!(
            help.contains(HELP_CAUTION),
            "semidrift {name} --help:\n{help}"
        );
        checked += 1;
        for sub in commands(&help) {
            let help = ok_in(dir.path(), &[name, &sub, "--help"]);
            assert!(
                help.contains(HELP_CAUTION),
                "semidrift {name} {sub} --help:\n{help}"
            );
            checked += 1;
        }
    }
    // 12 subcommands, 5 plot kinds and 7 lot commands.
    assert!(checked >= 24, "only {checked} help texts checked");
}

fn read_json(path: &Path) -> Value {
    let text = std::fs::read_to_string(path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    serde_json::from_str(&text).unwrap_or_else(|e| panic!("{}: {e}", path.display()))
}

/// Asserts a JSON document's `simulated` flag and its caution.
fn assert_marked(what: &str, simulated: &Value, caution: &Value, want_simulated: bool) {
    assert_eq!(simulated, &Value::Bool(want_simulated), "{what}: simulated");
    let caution = caution
        .as_str()
        .unwrap_or_else(|| panic!("{what}: no caution"));
    assert_eq!(
        caution.contains(SIMULATED_CAUTION),
        want_simulated,
        "{what}: {caution}"
    );
    if !want_simulated {
        assert!(caution.starts_with(LINE_CAUTION), "{what}: {caution}");
    }
}

/// Simulates a 1-part lot from `spec`, then calibrates it with `cal_spec`
/// and runs table, verify and apply; checks every output's mark.
fn chain(dir: &Path, spec: &str, cal_spec: &str, want_simulated: bool) {
    let d = |name: &str| dir.join(name).display().to_string();
    ok_in(
        dir,
        &[
            "simulate",
            spec,
            "--parts",
            "1",
            "--seed",
            "3",
            "--out",
            &d("cal.csv"),
            "--write-spec",
            &d("sim.toml"),
        ],
    );
    // Same simulate call as above, here for the check rows.
    ok_in(
        dir,
        &[
            "simulate",
            spec,
            "--parts",
            "1",
            "--seed",
            "3",
            "--check",
            "--out",
            &d("check.csv"),
        ],
    );
    // The scenario file `simulate` writes is always simulated.
    let toml = std::fs::read_to_string(dir.join("sim.toml")).unwrap();
    assert!(toml.contains("\nsimulated = true\n"), "{toml}");
    assert!(
        toml.lines()
            .any(|l| l.starts_with('#') && l.contains(SIMULATED_CAUTION)),
        "{toml}"
    );

    let text = ok_in(
        dir,
        &[
            "calibrate",
            cal_spec,
            &d("cal.csv"),
            "--out-dir",
            &d("parts"),
            "--quiet",
        ],
    );
    assert!(text.contains(LINE_CAUTION), "calibrate:\n{text}");
    assert_eq!(
        text.contains(SIMULATED_CAUTION),
        want_simulated,
        "calibrate:\n{text}"
    );
    let part_path = std::fs::read_dir(dir.join("parts"))
        .unwrap()
        .map(|e| e.unwrap().path())
        .find(|p| p.to_string_lossy().ends_with(".part.json"))
        .expect("a part file");
    let part = read_json(&part_path);
    let sc = &part["scenario"];
    if want_simulated {
        assert_marked("part file", &sc["simulated"], &sc["caution"], true);
    } else {
        assert_eq!(sc["simulated"], Value::Bool(false), "part file");
        assert!(sc.get("caution").is_none(), "part file: {}", sc["caution"]);
    }
    let part = part_path.display().to_string();

    // A wide budget: the marks are checked here, not the table's accuracy
    // (the example element's physics-only fit residual alone is ~2 000 ppm).
    let budget = "20000";
    let table = ok_in(
        dir,
        &[
            "table",
            &part,
            "--budget",
            budget,
            "--out",
            &d("t.bin"),
            "--json",
        ],
    );
    let table: Value = serde_json::from_str(&table).unwrap();
    assert_marked(
        "table --json",
        &table["simulated"],
        &table["caution"],
        want_simulated,
    );
    let text = ok_in(
        dir,
        &["table", &part, "--budget", budget, "--out", &d("t.bin")],
    );
    assert!(text.contains(LINE_CAUTION), "table:\n{text}");
    // The image's own bytes carry the mark (header flag bit 2) exactly when
    // the part was fitted to simulated data.
    let image = std::fs::read(d("t.bin")).unwrap();
    let view = compensate::TableView::parse(&image).unwrap();
    assert_eq!(view.simulated(), want_simulated, "image flag");
    for (format, file, comment) in [("c", "t.h", "/* "), ("rust", "t.rs", "// ")] {
        ok_in(
            dir,
            &[
                "table",
                &part,
                "--budget",
                budget,
                "--format",
                format,
                "--out",
                &d(file),
            ],
        );
        let header = std::fs::read_to_string(dir.join(file)).unwrap();
        let marked = header
            .lines()
            .take(4)
            .any(|l| l.starts_with(comment) && l.contains(SIMULATED_CAUTION));
        assert_eq!(marked, want_simulated, "{file}:\n{header}");
        assert!(
            header
                .lines()
                .take(3)
                .any(|l| l.starts_with(comment) && l.contains(LINE_CAUTION)),
            "{file}"
        );
    }

    let verify = ok_in(
        dir,
        &[
            "verify",
            &d("t.bin"),
            "--against",
            &part,
            "--budget",
            budget,
            "--json",
        ],
    );
    let verify: Value = serde_json::from_str(&verify).unwrap();
    assert_marked(
        "verify --json",
        &verify["simulated"],
        &verify["caution"],
        want_simulated,
    );
    let text = ok_in(
        dir,
        &[
            "verify",
            &d("t.bin"),
            "--against",
            &part,
            "--budget",
            budget,
        ],
    );
    assert!(
        text.contains("PASS is against the part's fitted model, not against the part itself"),
        "verify:\n{text}"
    );

    let apply = ok_in(
        dir,
        &[
            "apply",
            &d("t.bin"),
            &d("check.csv"),
            "--against",
            &part,
            "--json",
        ],
    );
    let apply: Value = serde_json::from_str(&apply).unwrap();
    assert_marked(
        "apply --json",
        &apply["simulated"],
        &apply["caution"],
        want_simulated,
    );
    let text = ok_in(
        dir,
        &["apply", &d("t.bin"), &d("check.csv"), "--against", &part],
    );
    assert!(text.contains(LINE_CAUTION), "apply:\n{text}");
}

#[test]
fn simulated_data_carries_the_mark_and_the_caution() {
    let dir = tempfile::tempdir().unwrap();
    // Calibrated with the scenario file `simulate` wrote.
    let spec = dir.path().join("sim.toml").display().to_string();
    chain(dir.path(), "battery-current", &spec, true);
}

#[test]
fn an_element_spec_is_not_claimed_simulated() {
    let dir = tempfile::tempdir().unwrap();
    let hall = ok_in(dir.path(), &["element", "--example", "hall"]);
    // The example spec carries its own caution line.
    assert!(
        hall.lines().take(3).any(|l| l.starts_with("# CAUTION:")),
        "{hall}"
    );
    let spec = dir.path().join("hall.toml");
    std::fs::write(&spec, hall).unwrap();
    let spec = spec.display().to_string();
    chain(dir.path(), &spec, &spec, false);
}

#[test]
fn demo_outputs_carry_the_mark_and_the_caution() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("demo").display().to_string();
    let text = ok_in(
        dir.path(),
        &["demo", "--parts", "1", "--quiet", "--out-dir", &out],
    );
    let summary = std::fs::read_to_string(dir.path().join("demo/summary.txt")).unwrap();
    for (what, t) in [("stdout", &text), ("summary.txt", &summary)] {
        assert!(t.lines().any(|l| l == "simulated: true"), "{what}:\n{t}");
        assert!(
            t.lines()
                .any(|l| l.starts_with(LINE_CAUTION) && l.contains(SIMULATED_CAUTION)),
            "{what}:\n{t}"
        );
    }
    for scenario in ["well", "battery"] {
        let base = dir.path().join("demo").join(scenario);
        let s = read_json(&base.join("summary.json"));
        for key in ["comparison", "qualified"] {
            assert_marked(
                &format!("{scenario} summary.json {key}"),
                &s[key]["simulated"],
                &s[key]["caution"],
                true,
            );
        }
        let toml = std::fs::read_to_string(base.join("scenario.toml")).unwrap();
        assert!(toml.contains("\nsimulated = true\n"), "{scenario}: {toml}");
        let parts: Vec<_> = std::fs::read_dir(base.join("parts"))
            .unwrap()
            .map(|e| e.unwrap().path())
            .collect();
        assert!(!parts.is_empty(), "{scenario}: no part files");
        for p in parts {
            let part = read_json(&p);
            let sc = &part["scenario"];
            assert_marked(
                &p.display().to_string(),
                &sc["simulated"],
                &sc["caution"],
                true,
            );
        }
    }
}
