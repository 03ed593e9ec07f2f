//! Hostile input: every way a station can be fed bad data must end in a
//! one-line message naming the file, line and field (or the option), with
//! exit 2 for bad input or 1 for a failed check, within seconds; the good
//! parts of a lot still get their files; nothing is written outside the
//! output folder, over an input or over a special file.
//!
//! Each command runs under a 10 s watchdog (the acceptance limit): a hang
//! fails the test instead of stalling the suite.

mod common;

use common::semidrift_bin;
use compensate::image::layout::{CRC_LEN, off};
use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};
use std::sync::OnceLock;
use std::time::{Duration, Instant};

/// Acceptance limit per command.
const WATCHDOG: Duration = Duration::from_secs(10);

/// Runs semidrift in `dir` and kills it after [`WATCHDOG`].
fn run(dir: &Path, args: &[&str]) -> Output {
    let mut child = Command::new(semidrift_bin())
        .args(args)
        .current_dir(dir)
        .stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("semidrift runs");
    let start = Instant::now();
    loop {
        if child.try_wait().expect("wait").is_some() {
            return child.wait_with_output().expect("output");
        }
        if start.elapsed() > WATCHDOG {
            let _ = child.kill();
            panic!("semidrift {args:?} still running after {WATCHDOG:?}");
        }
        std::thread::sleep(Duration::from_millis(20));
    }
}

fn text(bytes: &[u8]) -> String {
    String::from_utf8_lossy(bytes).into_owned()
}

/// Asserts exit `code` and that stderr's last line holds every fragment.
#[track_caller]
fn expect(o: &Output, code: i32, fragments: &[&str]) -> String {
    let err = text(&o.stderr);
    assert_eq!(o.status.code(), Some(code), "stderr: {err}");
    let last = err.lines().last().unwrap_or("").to_string();
    for f in fragments {
        assert!(err.contains(f), "stderr lacks {f:?}: {err}");
    }
    last
}

/// A shared lot: scenario, a 3-part calibration CSV, a check CSV, the
/// part files and f32 images of the first two parts.
struct Lot {
    _dir: tempfile::TempDir,
    path: PathBuf,
}

fn lot() -> &'static Lot {
    static LOT: OnceLock<Lot> = OnceLock::new();
    LOT.get_or_init(|| {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path();
        let ok = |args: &[&str]| {
            let o = run(p, args);
            assert!(o.status.success(), "{args:?}: {}", text(&o.stderr));
        };
        common::calibrated_lot(p, "3");
        ok(&[
            "simulate",
            "well-logger",
            "--parts",
            "3",
            "--check",
            "--out",
            "check.csv",
        ]);
        for s in ["WELL-0001", "WELL-0002"] {
            ok(&[
                "table",
                &format!("parts/{s}.part.json"),
                "--number-format",
                "f32",
                "--out",
                &format!("{s}.bin"),
            ]);
        }
        Lot {
            path: p.to_path_buf(),
            _dir: dir,
        }
    })
}

/// A fresh folder with copies of the lot's files.
fn scratch() -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap();
    let src = &lot().path;
    for f in [
        "spec.toml",
        "cal.csv",
        "check.csv",
        "WELL-0001.bin",
        "WELL-0002.bin",
    ] {
        std::fs::copy(src.join(f), dir.path().join(f)).unwrap();
    }
    std::fs::create_dir(dir.path().join("parts")).unwrap();
    for s in ["WELL-0001", "WELL-0002", "WELL-0003"] {
        let f = format!("parts/{s}.part.json");
        std::fs::copy(src.join(&f), dir.path().join(&f)).unwrap();
    }
    dir
}

/// The calibration CSV with `edit` applied to WELL-0002's rows.
fn edited_csv(dir: &Path, name: &str, edit: impl Fn(&mut Vec<String>)) {
    let csv = std::fs::read_to_string(dir.join("cal.csv")).unwrap();
    let mut out = String::new();
    for (k, line) in csv.lines().enumerate() {
        let mut cells: Vec<String> = line.split(',').map(str::to_string).collect();
        if k > 0 && cells[0] == "WELL-0002" {
            edit(&mut cells);
        }
        out.push_str(&cells.join(","));
        out.push('\n');
    }
    std::fs::write(dir.join(name), out).unwrap();
}

/// Part files written to `out` (sorted names).
fn part_files(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = std::fs::read_dir(dir)
        .map(|r| {
            r.map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
                .collect()
        })
        .unwrap_or_default();
    v.sort();
    v
}

#[test]
fn a_degenerate_part_never_hangs_the_lot_and_the_good_parts_are_written() {
    let d = scratch();
    let p = d.path();
    // (edit of WELL-0002's rows, exit code, fragment, files expected).
    // All-zero outputs and an output of 1e20 are readable rows: the part's
    // fit fails (exit 1) but it still gets a part file marking it failed.
    // A subnormal temperature signal or a chamber temperature of 1e154 is
    // refused as a row (exit 2, field named); the part then has too few rows.
    type Edit = fn(&mut Vec<String>);
    let cases: [(&str, Edit, i32, &str); 4] = [
        ("zero", |c| c[3] = "0".into(), 1, "WELL-0002"),
        (
            "huge",
            |c| {
                if c[2] == "5" {
                    c[3] = "1e20".into()
                }
            },
            1,
            "WELL-0002",
        ),
        (
            "subnormal",
            |c| {
                if c[2] == "5" {
                    c[4] = "1e-320".into()
                }
            },
            2,
            "field 'temp_signal'",
        ),
        (
            "hot",
            |c| {
                if c[2] == "5" {
                    c[1] = "1e154".into()
                }
            },
            2,
            "field 'chamber_c'",
        ),
    ];
    for (name, edit, code, fragment) in cases {
        let csv = format!("{name}.csv");
        edited_csv(p, &csv, edit);
        let out = format!("out-{name}");
        let o = run(
            p,
            &["calibrate", "spec.toml", &csv, "--out-dir", &out, "-q"],
        );
        expect(&o, code, &[fragment]);
        let files = part_files(&p.join(&out));
        for good in ["WELL-0001.part.json", "WELL-0003.part.json"] {
            assert!(files.contains(&good.to_string()), "{name}: {files:?}");
        }
    }
}

#[test]
fn a_serial_never_becomes_a_path() {
    let d = scratch();
    let p = d.path();
    for (k, evil) in ["../../evil", "/tmp/semidrift-evil", "a/b", ".hidden"]
        .iter()
        .enumerate()
    {
        let csv = format!("evil{k}.csv");
        edited_csv(p, &csv, |c| c[0] = (*evil).to_string());
        let out = format!("out{k}");
        let o = run(
            p,
            &["calibrate", "spec.toml", &csv, "--out-dir", &out, "-q"],
        );
        expect(&o, 2, &["field 'serial'", &format!("{csv}:")]);
        assert_eq!(
            part_files(&p.join(&out)),
            vec!["WELL-0001.part.json", "WELL-0003.part.json"],
            "{evil}"
        );
    }
    assert!(!p.join("../../evil.part.json").exists());
    assert!(!Path::new("/tmp/semidrift-evil.part.json").exists());
    assert!(!p.join("out2/a").exists());
}

#[test]
fn sizes_a_user_sets_are_capped_before_allocating() {
    let d = scratch();
    let p = d.path();
    let image = "WELL-0001.bin";
    let part = "parts/WELL-0001.part.json";
    for (option, value) in [("--stimuli", "4000000000"), ("--temps", "100000000")] {
        let o = run(p, &["verify", image, "--against", part, option, value]);
        expect(&o, 2, &[&format!("{option} '{value}'")]);
    }
    let o = run(
        p,
        &[
            "verify",
            image,
            "--against",
            part,
            "--temps",
            "20000",
            "--stimuli",
            "20000",
        ],
    );
    expect(&o, 2, &["--temps/--stimuli", "at most"]);
    let o = run(
        p,
        &[
            "simulate",
            "well-logger",
            "--parts",
            "100000000",
            "--out",
            "big.csv",
        ],
    );
    expect(&o, 2, &["--parts '100000000'"]);
    assert!(!p.join("big.csv").exists());
    // An element spec whose range the element models accept but the
    // station's limits refuse (docs/station.md "Input limits").
    let spec = run(p, &["element", "--example", "bridge"]);
    let spec = text(&spec.stdout).replace("max_c = 85.0", "max_c = 1e9");
    std::fs::write(p.join("wide.toml"), &spec).unwrap();
    let line = spec.lines().position(|l| l.starts_with("max_c")).unwrap() + 1;
    let o = run(
        p,
        &["calibrate", "wide.toml", "cal.csv", "--out-dir", "w", "-q"],
    );
    expect(
        &o,
        2,
        &[&format!("wide.toml:{line}: field 'temperature.max_c'")],
    );
}

#[test]
fn endless_inputs_are_read_up_to_a_cap() {
    let p = lot().path.clone();
    let o = run(
        &p,
        &[
            "verify",
            "/dev/zero",
            "--against",
            "parts/WELL-0001.part.json",
        ],
    );
    expect(&o, 2, &["/dev/zero", "larger than any table image"]);
    let o = run(&p, &["apply", "/dev/zero", "check.csv"]);
    expect(&o, 2, &["/dev/zero", "more than"]);
}

/// A copy of `image` with `edit` applied and the CRC recomputed.
fn resigned(image: &[u8], edit: impl Fn(&mut [u8])) -> Vec<u8> {
    let mut v = image.to_vec();
    edit(&mut v);
    let body = v.len() - CRC_LEN;
    let crc = compensate::crc::crc32(&v[..body]);
    v[body..].copy_from_slice(&crc.to_le_bytes());
    v
}

#[test]
fn another_parts_image_or_a_foreign_header_is_refused_by_field() {
    let d = scratch();
    let p = d.path();
    let part = "parts/WELL-0001.part.json";
    // The second part's image against the first part.
    let o = run(
        p,
        &["apply", "WELL-0002.bin", "check.csv", "--against", part],
    );
    expect(&o, 2, &["field 'serial'", "WELL-0002", "WELL-0001"]);
    let o = run(p, &["verify", "WELL-0002.bin", "--against", part]);
    expect(&o, 2, &["field 'serial'"]);
    // The part's own image with a header field changed and re-signed.
    let own = std::fs::read(p.join("WELL-0001.bin")).unwrap();
    type Edit = fn(&mut [u8]);
    let edits: [(&str, Edit); 3] = [
        ("full_scale", |v| {
            v[off::FULL_SCALE..off::FULL_SCALE + 4].copy_from_slice(&1e30f32.to_le_bytes())
        }),
        ("unit", |v| {
            v[off::UNIT] = if v[off::UNIT] == 1 { 2 } else { 1 }
        }),
        ("flags", |v| v[off::FLAGS] |= 1),
    ];
    for (field, edit) in edits {
        let name = format!("{field}.bin");
        std::fs::write(p.join(&name), resigned(&own, edit)).unwrap();
        for cmd in ["verify", "apply"] {
            let mut args = vec![cmd, name.as_str()];
            if cmd == "apply" {
                args.push("check.csv");
            }
            args.extend(["--against", part]);
            let o = run(p, &args);
            expect(&o, 2, &[&format!("field '{field}'")]);
        }
    }
}

#[test]
fn a_failed_part_is_refused_by_table_verify_and_apply() {
    let d = scratch();
    let p = d.path();
    let failed = std::fs::read_to_string(p.join("parts/WELL-0001.part.json"))
        .unwrap()
        .replacen(
            "\"status\": \"ok\"",
            "\"status\": \"too few points: 2 points for 4 parameters\"",
            1,
        );
    assert!(
        failed.contains("too few points"),
        "fixture lost its status field"
    );
    std::fs::write(p.join("failed.part.json"), &failed).unwrap();
    let line = failed
        .lines()
        .position(|l| l.contains("\"status\""))
        .unwrap()
        + 1;
    let want = format!("failed.part.json:{line}: field 'status'");
    for args in [
        vec!["apply", "failed.part.json", "check.csv"],
        vec![
            "apply",
            "WELL-0001.bin",
            "check.csv",
            "--against",
            "failed.part.json",
        ],
        vec!["verify", "WELL-0001.bin", "--against", "failed.part.json"],
        vec!["table", "failed.part.json", "--out", "f.bin"],
    ] {
        let o = run(p, &args);
        expect(&o, 2, &[&want]);
    }
    assert!(!p.join("f.bin").exists());
}

#[test]
fn outputs_never_replace_inputs_or_special_files() {
    let d = scratch();
    let p = d.path();
    let part = p.join("parts/WELL-0001.part.json");
    let before = std::fs::read(&part).unwrap();
    let o = run(
        p,
        &[
            "table",
            "parts/WELL-0001.part.json",
            "--out",
            "parts/WELL-0001.part.json",
        ],
    );
    expect(&o, 2, &["is also the command's input"]);
    assert_eq!(std::fs::read(&part).unwrap(), before);
    let o = run(
        p,
        &[
            "simulate",
            "well-logger",
            "--parts",
            "2",
            "--out",
            "x.csv",
            "--write-spec",
            "x.csv",
        ],
    );
    expect(&o, 2, &["is also the command's input"]);
    assert!(!p.join("x.csv").exists());
    let spec_before = std::fs::read(p.join("spec.toml")).unwrap();
    let o = run(
        p,
        &[
            "simulate",
            "spec.toml",
            "--parts",
            "2",
            "--out",
            "spec.toml",
        ],
    );
    expect(&o, 2, &["is also the command's input"]);
    assert_eq!(std::fs::read(p.join("spec.toml")).unwrap(), spec_before);
    #[cfg(unix)]
    {
        std::os::unix::fs::symlink(p.join("cal.csv"), p.join("link.csv")).unwrap();
        let o = run(
            p,
            &[
                "simulate",
                "well-logger",
                "--parts",
                "2",
                "--out",
                "link.csv",
            ],
        );
        expect(&o, 2, &["symbolic link"]);
        assert!(
            std::fs::symlink_metadata(p.join("link.csv"))
                .unwrap()
                .file_type()
                .is_symlink()
        );
        let o = run(
            p,
            &[
                "simulate",
                "well-logger",
                "--parts",
                "2",
                "--out",
                "/dev/null",
            ],
        );
        expect(&o, 2, &["special file"]);
    }
}

#[test]
fn scenario_nonsense_is_refused_at_load_with_line_and_key() {
    let d = scratch();
    let p = d.path();
    let spec = std::fs::read_to_string(p.join("spec.toml")).unwrap();
    // (text to replace, replacement, key named in the message)
    let cases = [
        (
            "kind = \"bridge\"",
            "kind = \"bridge\"\ncolour = 5",
            "colour",
        ),
        ("bits = 24", "bits = 24\nXx = 1", "output_adc.Xx"),
        ("budget_ppm = 500.0", "budget_ppm = 0.0", "budget_ppm"),
        ("budget_ppm = 500.0", "budget_ppm = -5.0", "budget_ppm"),
        ("budget_ppm = 500.0", "budget_ppm = nan", "budget_ppm"),
        ("budget_ppm = 500.0", "budget_ppm = inf", "budget_ppm"),
        (
            "range_c = [-20.0, 85.0]",
            "range_c = [85.0, -20.0]",
            "range_c",
        ),
        (
            "range_c = [-20.0, 85.0]",
            "range_c = [25.0, 25.0]",
            "range_c",
        ),
        (
            "cal_temps_c = [-20.0, 25.0, 85.0]",
            "cal_temps_c = []",
            "cal_temps_c",
        ),
        ("stimuli = [0.0, 5.0, 10.0]", "stimuli = []", "stimuli"),
        (
            "stimulus_fs = [0.0, 10.0]",
            "stimulus_fs = [0.0, 0.0]",
            "stimulus_fs",
        ),
        ("bits = 24", "bits = 0", "output_adc.bits"),
        ("bits = 24", "bits = 200", "output_adc.bits"),
        (
            "noise_rms = 0.00000008",
            "noise_rms = nan",
            "output_adc.noise_rms",
        ),
        // Table-driven: one row per scenario field made bad, so the rows share their shape.
        ("range = 0.0515625", "range = 0.0", "output_adc.range"),
        (
            "resistance_ohm = 5000.0",
            "resistance_ohm = 0.0",
            "resistance_ohm",
        ),
        ("bits = 24", "bits = \"x\"", "output_adc.bits"),
    ];
    for (k, (from, to, key)) in cases.iter().enumerate() {
        assert!(spec.contains(from), "fixture lacks {from:?}");
        let bad = spec.replacen(from, to, 1);
        let name = format!("bad{k}.toml");
        std::fs::write(p.join(&name), &bad).unwrap();
        let last_key = key.rsplit('.').next().unwrap();
        // The line of the key's last appearance in the edited region: the
        // first line at or after the replacement's start that sets it.
        let start = bad[..bad.find(to).unwrap()].lines().count().max(1);
        let line = bad
            .lines()
            .enumerate()
            .skip(start - 1)
            .find(|(_, l)| l.trim_start().starts_with(&format!("{last_key} ")))
            .map(|(i, _)| i + 1)
            .unwrap();
        for args in [
            vec!["simulate", name.as_str(), "--parts", "1", "--out", "o.csv"],
            vec![
                "calibrate",
                name.as_str(),
                "cal.csv",
                "--out-dir",
                "o",
                "-q",
            ],
        ] {
            let o = run(p, &args);
            expect(&o, 2, &[&format!("{name}:{line}: field '{key}'")]);
        }
    }
    assert!(!p.join("o.csv").exists() && !p.join("o").exists());
}

#[test]
fn messages_name_the_field_and_the_kind_of_file() {
    let d = scratch();
    let p = d.path();
    // A non-UTF-8 output cell names its column.
    let mut csv = std::fs::read(p.join("cal.csv")).unwrap();
    let at = csv.windows(10).position(|w| w == b"WELL-0002,").unwrap();
    let comma = at + csv[at..].iter().position(|&b| b == b'\n').unwrap();
    let cell = csv[..comma].iter().rposition(|&b| b == b',').unwrap();
    csv.splice(cell + 1..cell + 2, [0xff]);
    std::fs::write(p.join("latin.csv"), &csv).unwrap();
    let o = run(
        p,
        &[
            "calibrate",
            "spec.toml",
            "latin.csv",
            "--out-dir",
            "l",
            "-q",
        ],
    );
    expect(&o, 2, &["field 'temp_signal': not UTF-8 text"]);
    // Neither an image nor a part file.
    let mut corrupt = std::fs::read(p.join("WELL-0001.bin")).unwrap();
    corrupt[0] = b'X';
    std::fs::write(p.join("corrupt.bin"), &corrupt).unwrap();
    std::fs::write(p.join("tiny.bin"), b"SD").unwrap();
    for f in ["corrupt.bin", "tiny.bin"] {
        let o = run(p, &["apply", f, "check.csv"]);
        expect(&o, 2, &["not a table image or part file"]);
    }
    // A budget of 0 from the scenario names the part file's field.
    let zero = std::fs::read_to_string(p.join("parts/WELL-0001.part.json"))
        .unwrap()
        .replacen("\"budget_ppm\": 500.0", "\"budget_ppm\": 0.0", 1);
    assert!(
        zero.contains("\"budget_ppm\": 0.0"),
        "fixture lost budget_ppm"
    );
    std::fs::write(p.join("zero.part.json"), zero).unwrap();
    let o = run(p, &["table", "zero.part.json", "--out", "z.bin"]);
    expect(&o, 2, &["zero.part.json:", "field 'scenario.budget_ppm'"]);
    // An address overflow names --address.
    let o = run(
        p,
        &[
            "table",
            "parts/WELL-0001.part.json",
            "--format",
            "hex",
            "--address",
            "0xFFFFFFF0",
            "--out",
            "a.hex",
        ],
    );
    expect(
        &o,
        2,
        &["--address '0xfffffff0'", "past the 32-bit address space"],
    );
    assert!(!p.join("a.hex").exists());
    // A TOML type error names the key, not the value.
    let spec = std::fs::read_to_string(p.join("spec.toml")).unwrap();
    std::fs::write(
        p.join("t.toml"),
        spec.replacen("bits = 24", "bits = 5.5", 1),
    )
    .unwrap();
    let o = run(
        p,
        &["calibrate", "t.toml", "cal.csv", "--out-dir", "t", "-q"],
    );
    expect(&o, 2, &["field 'output_adc.bits'"]);
}

#[test]
fn bad_budgets_are_bad_input_not_failed_checks() {
    let p = lot().path.clone();
    for budget in ["0", "-5", "nan", "inf", "2e6"] {
        let o = run(
            &p,
            &[
                "verify",
                "WELL-0001.bin",
                "--against",
                "parts/WELL-0001.part.json",
                "--budget",
                budget,
            ],
        );
        // The option's value as parsed (f64 Display).
        let shown = budget.parse::<f64>().unwrap().to_string();
        expect(&o, 2, &[&format!("--budget '{shown}'")]);
        let o = run(
            &p,
            &[
                "table",
                "parts/WELL-0001.part.json",
                "--budget",
                budget,
                "--out",
                "never.bin",
            ],
        );
        expect(&o, 2, &["--budget '"]);
    }
    assert!(!p.join("never.bin").exists());
}

#[test]
fn smaller_cases_header_only_repeats_clamped_rows_closed_stdout_stale_temporaries() {
    let d = scratch();
    let p = d.path();
    // A header-only CSV: nothing calibrated is a failed run (exit 1).
    std::fs::write(
        p.join("empty.csv"),
        "serial,chamber_c,stimulus,output,temp_signal\n",
    )
    .unwrap();
    let o = run(
        p,
        &[
            "calibrate",
            "spec.toml",
            "empty.csv",
            "--out-dir",
            "e",
            "-q",
        ],
    );
    expect(&o, 1, &["no readable rows"]);
    // A repeated reading is used and reported as a warning with both lines.
    let mut csv = std::fs::read_to_string(p.join("cal.csv")).unwrap();
    let second = csv.lines().nth(1).unwrap().to_string();
    csv.push_str(&second);
    csv.push('\n');
    let last_line = csv.lines().count();
    std::fs::write(p.join("rep.csv"), &csv).unwrap();
    let o = run(
        p,
        &["calibrate", "spec.toml", "rep.csv", "--out-dir", "r", "-q"],
    );
    let err = text(&o.stderr);
    assert_eq!(o.status.code(), Some(0), "{err}");
    assert!(
        err.contains(&format!(
            "warning: rep.csv:{last_line}: field 'stimulus': repeats line 2"
        )),
        "{err}"
    );
    // Rows outside the table's domain are flagged per row by apply.
    let o = run(
        p,
        &[
            "apply",
            "WELL-0001.bin",
            "check.csv",
            "--against",
            "parts/WELL-0001.part.json",
            "--json",
        ],
    );
    let out = text(&o.stdout);
    assert!(
        out.contains("\"runtime_status\""),
        "no row flagged: {}",
        text(&o.stderr)
    );
    // A closed standard output is a normal end.
    // Same model arguments as tests/cli_model.rs: here with a closed standard output.
    let mut child = Command::new(semidrift_bin())
        .args([
            "model",
            "--material",
            "si",
            "--donor",
            "P=1e15",
            "--kelvin",
            "20:1000:0.01",
        ])
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    drop(child.stdout.take());
    let o = child.wait_with_output().unwrap();
    assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
    assert!(o.stderr.is_empty(), "{}", text(&o.stderr));
    // A temporary file of a killed run is removed by the next write there.
    let stale = p.join("parts/.semidrift-0-killed.tmp");
    std::fs::write(&stale, b"half").unwrap();
    let o = run(
        p,
        &[
            "table",
            "parts/WELL-0003.part.json",
            "--out",
            "parts/W3.bin",
        ],
    );
    assert!(o.status.success(), "{}", text(&o.stderr));
    if Path::new("/proc/self").exists() {
        assert!(!stale.exists(), "stale temporary file left");
    }
}
