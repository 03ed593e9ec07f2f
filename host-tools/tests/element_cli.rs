//! `semidrift element` and `semidrift plot element` through the real binary:
//! example specs, the JSON contract (DEVELOPERS.md "Element models"), located errors with exit
//! code 2, and byte-identical output. (These live in host-tools because only
//! this package's tests get `CARGO_BIN_EXE_semidrift`.)

use std::path::Path;
use std::process::{Command, Output};

fn run_in(dir: &Path, args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_semidrift"))
        .args(args)
        .current_dir(dir)
        .output()
        .expect("semidrift runs")
}

fn text(bytes: &[u8]) -> String {
    String::from_utf8(bytes.to_vec()).expect("UTF-8")
}

/// Writes the example of `kind` into `dir` as `NAME.toml`, optionally edited.
fn example_file(dir: &Path, kind: &str, edit: impl Fn(String) -> String) -> String {
    let o = run_in(dir, &["element", "--example", kind]);
    assert_eq!(
        o.status.code(),
        Some(0),
        "--example {kind}: {}",
        text(&o.stderr)
    );
    let name = format!("{kind}.toml");
    std::fs::write(dir.join(&name), edit(text(&o.stdout))).expect("write spec");
    name
}

#[test]
fn examples_run_and_give_the_json_contract() {
    let dir = tempfile::tempdir().expect("temp dir");
    for kind in ["bridge", "hall"] {
        let spec = example_file(dir.path(), kind, |s| s);
        let o = run_in(
            dir.path(),
            &["element", &spec, "--celsius", "-20:80:20", "--json"],
        );
        assert_eq!(o.status.code(), Some(0), "{kind}: {}", text(&o.stderr));
        let v: serde_json::Value = serde_json::from_slice(&o.stdout).expect("stdout is JSON alone");
        assert_eq!(v["kind"], kind);
        assert_eq!(v["spec"], spec.as_str());
        let rows = v["rows"].as_array().expect("rows");
        assert_eq!(rows.len(), 6, "-20..80 step 20 is six rows");
        for key in [
            "t_c",
            "t_k",
            "span_rel",
            "offset_ppm_fs",
            "resistance_ohm",
            "span_v",
            "span_rel_cv",
            "span_rel_cc",
        ] {
            assert!(
                rows.iter().all(|r| r[key].is_number()),
                "{kind}: every row needs {key}"
            );
        }
        // span_rel is 1 at the reference temperature (25 C, not on this grid):
        // rows straddle it, so span_rel must cross 1 between 20 C and 40 C.
        let at = |i: usize| rows[i]["span_rel"].as_f64().unwrap_or(f64::NAN);
        assert!(
            (at(2) - 1.0) * (at(3) - 1.0) <= 0.0,
            "{kind}: span_rel {} at 20 C, {} at 40 C",
            at(2),
            at(3)
        );
        for key in [
            "tcs_ppm_per_k",
            "tco_ppm_fs_per_k",
            "tcr_ppm_per_k",
            "tcs_cv_ppm_per_k",
            "tcs_cc_ppm_per_k",
            "tco_cv_ppm_fs_per_k",
            "tco_cc_ppm_fs_per_k",
        ] {
            assert!(v["summary"][key].is_number(), "{kind}: summary needs {key}");
        }
    }
}

#[test]
fn output_is_byte_identical_from_run_to_run() {
    let dir = tempfile::tempdir().expect("temp dir");
    let spec = example_file(dir.path(), "bridge", |s| s);
    for format in ["--json", "--csv", "--celsius=0:50:10"] {
        let a = run_in(dir.path(), &["element", &spec, format]);
        let b = run_in(dir.path(), &["element", &spec, format]);
        assert_eq!(a.status.code(), Some(0), "{format}: {}", text(&a.stderr));
        assert_eq!(a.stdout, b.stdout, "{format}: output differs between runs");
    }
    for out in ["a.svg", "b.svg"] {
        let o = run_in(
            dir.path(),
            &[
                "plot",
                "element",
                &spec,
                "--celsius",
                "-20:85:5",
                "--out",
                out,
            ],
        );
        assert_eq!(o.status.code(), Some(0), "plot: {}", text(&o.stderr));
    }
    let a = std::fs::read(dir.path().join("a.svg")).expect("a.svg");
    let b = std::fs::read(dir.path().join("b.svg")).expect("b.svg");
    assert!(a == b, "SVG differs between runs");
    let svg = text(&a);
    assert!(
        svg.starts_with("<svg") && svg.contains("constant current") && svg.contains("Span drift")
    );
}

#[test]
fn bad_specs_name_file_line_and_key_and_exit_2() {
    // (edit of the example, expected fragment of the one-line error)
    type Edit = fn(String) -> String;
    // Table-driven: one row per edited field, so the rows share their shape.
    let cases: [(&str, Edit, &str); 8] = [
        (
            "hall",
            |s| s.replace("thickness_um = 3.0", "thickness_um = -3.0"),
            ":26: field 'plate.thickness_um'",
        ),
        (
            "hall",
            |s| s.replace("density_cm3 = 1.5e16", "density_cm3 = 1e22"),
            ":23: field 'plate.density_cm3'",
        ),
        (
            "hall",
            |s| s.replace("current_a = 1.0e-3", "current_a = 0.0"),
            ":35: field 'excitation.current_a'",
        ),
        (
            "bridge",
            |s| s.replace("min_c = -20.0", "min_c = -300.0"),
            ":16: field 'temperature.min_c'",
        ),
        (
            "bridge",
            |s| s.replace("voltage_v = 3.3", "voltage_v = 0"),
            ":30: field 'excitation.voltage_v'",
        ),
        (
            "bridge",
            |s| {
                s.replace(
                    "width_um = 10.0\n\n[[arm]]\norientation = \"transverse\"",
                    "width_um = 10.0\ncolour = 1\n\n[[arm]]\norientation = \"transverse\"",
                )
            },
            ":59: field 'arm[2].colour'",
        ),
        (
            "bridge",
            |s| s.replacen("density_cm3 = 2.004e18", "density_cm3 = \"high\"", 1),
            ":56: field 'arm[2].density_cm3'",
        ),
        (
            "bridge",
            |s| s.replace("direction = \"110\"", "direction = \"111\""),
            ":22: field 'die.direction'",
        ),
    ];
    let dir = tempfile::tempdir().expect("temp dir");
    for (kind, edit, fragment) in cases {
        let spec = example_file(dir.path(), kind, edit);
        let o = run_in(dir.path(), &["element", &spec, "--json"]);
        let err = text(&o.stderr);
        assert_eq!(o.status.code(), Some(2), "{fragment}: stderr {err:?}");
        assert!(o.stdout.is_empty(), "{fragment}: stdout must stay empty");
        assert_eq!(err.lines().count(), 1, "one-line error expected: {err:?}");
        assert!(
            err.contains(&format!("{spec}{fragment}")),
            "error {err:?} lacks {spec}{fragment}"
        );
    }
    let o = run_in(dir.path(), &["element", "missing.toml"]);
    assert_eq!(
        o.status.code(),
        Some(2),
        "missing file: {}",
        text(&o.stderr)
    );
    let o = run_in(
        dir.path(),
        &["element", "bridge.toml", "--celsius", "0:10:0"],
    );
    assert_eq!(o.status.code(), Some(2), "bad sweep: {}", text(&o.stderr));
    // Temperatures beyond the full model's range (Si: up to 1000 K) name the
    // option when given, else the spec key that set them.
    let spec = example_file(dir.path(), "bridge", |s| s);
    let o = run_in(dir.path(), &["element", &spec, "--celsius", "900:1000:50"]);
    assert_eq!(o.status.code(), Some(2), "hot sweep: {}", text(&o.stderr));
    assert!(
        text(&o.stderr).contains("--celsius '900:1000:50'"),
        "{}",
        text(&o.stderr)
    );
    let spec = example_file(dir.path(), "bridge", |s| {
        s.replace("max_c = 85.0", "max_c = 1000.0")
    });
    let o = run_in(dir.path(), &["element", &spec]);
    assert_eq!(o.status.code(), Some(2), "hot spec: {}", text(&o.stderr));
    let want = format!("{spec}:17: field 'temperature.max_c'");
    assert!(
        text(&o.stderr).contains(&want),
        "{} lacks {want}",
        text(&o.stderr)
    );
}
