//! `semidrift plot part|lot|table` through the real binary: files created
//! with a valid SVG or PNG signature, byte-identical from run to run, and bad
//! input named by file, line and field with exit code 2 and no file written.

mod common;

use common::{ok_in, run_in, stderr};
use std::path::Path;

/// PNG file signature (ISO/IEC 15948:2004, sec. 5.2).
const PNG_SIGNATURE: &[u8] = b"\x89PNG\r\n\x1a\n";

/// Simulates, calibrates and builds a table for 3 well-logger parts in `dir`.
fn station(dir: &Path) {
    for args in [
        &[
            "simulate",
            "well-logger",
            "--parts",
            "3",
            "--seed",
            "5",
            "--out",
            "cal.csv",
            "--write-spec",
            "well.toml",
        ][..],
        &[
            "simulate",
            "well.toml",
            "--parts",
            "3",
            "--seed",
            "5",
            "--check",
            "--out",
            "check.csv",
        ],
        &[
            "calibrate",
            "well.toml",
            "cal.csv",
            "--out-dir",
            "parts",
            "--quiet",
        ],
        &["table", "parts/WELL-0001.part.json", "--out", "t.bin"],
    ] {
        ok_in(dir, args);
    }
}

/// The three plots in both formats, as (file name, command).
fn plots() -> Vec<(String, Vec<String>)> {
    let mut out = Vec::new();
    for ext in ["svg", "png"] {
        let s = |v: &[&str]| v.iter().map(|x| x.to_string()).collect::<Vec<_>>();
        out.push((
            format!("part.{ext}"),
            s(&[
                "plot",
                "part",
                "parts/WELL-0001.part.json",
                "--chamber",
                "check.csv",
            ]),
        ));
        out.push((
            format!("lot.{ext}"),
            s(&["plot", "lot", "parts", "--chamber", "check.csv"]),
        ));
        out.push((
            format!("table.{ext}"),
            s(&[
                "plot",
                "table",
                "t.bin",
                "--against",
                "parts/WELL-0001.part.json",
            ]),
        ));
    }
    out
}

#[test]
fn station_plots_are_valid_and_byte_identical() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    station(d);
    for (file, cmd) in plots() {
        let mut args: Vec<&str> = cmd.iter().map(String::as_str).collect();
        let second = format!("again-{file}");
        args.extend(["--out", &file]);
        let said = ok_in(d, &args);
        assert!(
            said.contains(&file),
            "{args:?}: stdout {said:?} names no file"
        );
        let n = args.len();
        args[n - 1] = &second;
        ok_in(d, &args);
        let a = std::fs::read(d.join(&file)).unwrap();
        let b = std::fs::read(d.join(&second)).unwrap();
        assert!(a == b, "{file}: two runs gave different bytes");
        if file.ends_with(".png") {
            assert!(a.starts_with(PNG_SIGNATURE), "{file}: no PNG signature");
            // A 900x560 plot with text and curves compresses to tens of kB; a
            // blank image would be a few hundred bytes.
            assert!(a.len() > 10_000, "{file}: {} bytes looks blank", a.len());
        } else {
            let text = String::from_utf8(a).unwrap();
            assert!(
                text.starts_with("<svg") && text.trim_end().ends_with("</svg>"),
                "{file}: not an SVG document"
            );
            assert!(
                text.contains("budget") || text.contains("allowance"),
                "{file}: no budget line"
            );
        }
    }
    let lot = std::fs::read_to_string(d.join("lot.svg")).unwrap();
    for label in ["lot of 3 parts", "uncompensated", "physics calibration"] {
        assert!(lot.contains(label), "lot.svg lacks {label:?}");
    }
    // The same lot from its calibration CSV, fitted in memory, draws the
    // same figure as from the part files `calibrate` wrote.
    ok_in(
        d,
        &[
            "plot",
            "lot",
            "cal.csv",
            "--spec",
            "well.toml",
            "--chamber",
            "check.csv",
            "--out",
            "lot-csv.svg",
        ],
    );
    assert!(
        std::fs::read(d.join("lot-csv.svg")).unwrap() == lot.as_bytes(),
        "lot from cal.csv differs from lot from the part files"
    );
    let table = std::fs::read_to_string(d.join("table.svg")).unwrap();
    assert!(table.contains("WELL-0001: table error"), "table.svg title");
}

#[test]
fn bad_input_names_file_line_and_field() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    station(d);
    let check = std::fs::read_to_string(d.join("check.csv")).unwrap();
    // Line 3 (second data row): temperature signal made unreadable.
    let bad: Vec<String> = check
        .lines()
        .enumerate()
        .map(|(k, l)| {
            if k == 2 {
                let cut = l.rfind(',').unwrap();
                format!("{},abc", &l[..cut])
            } else {
                l.to_string()
            }
        })
        .collect();
    std::fs::write(d.join("bad.csv"), bad.join("\n") + "\n").unwrap();
    std::fs::write(d.join("notes.txt"), "not a table image\n").unwrap();
    let cases: [(&[&str], &[&str]); 5] = [
        (
            &[
                "plot",
                "part",
                "parts/WELL-0001.part.json",
                "--chamber",
                "bad.csv",
            ],
            &["bad.csv:3", "temp_signal"],
        ),
        (
            &["plot", "lot", "parts", "--chamber", "bad.csv"],
            &["bad.csv:3", "temp_signal"],
        ),
        (
            &["plot", "lot", "cal.csv", "--chamber", "check.csv"],
            &["--spec", "cal.csv"],
        ),
        (
            &[
                "plot",
                "lot",
                "bad.csv",
                "--spec",
                "well.toml",
                "--chamber",
                "check.csv",
            ],
            &["bad.csv:3", "temp_signal"],
        ),
        (
            &[
                "plot",
                "table",
                "notes.txt",
                "--against",
                "parts/WELL-0001.part.json",
            ],
            &["notes.txt", "table image"],
        ),
    ];
    for (args, fragments) in cases {
        let mut args = args.to_vec();
        args.extend(["--out", "x.svg"]);
        let o = run_in(d, &args);
        let err = stderr(&o);
        assert_eq!(o.status.code(), Some(2), "{args:?}: stderr {err:?}");
        assert_eq!(
            err.trim_end().lines().count(),
            1,
            "{args:?}: one line: {err:?}"
        );
        for f in fragments {
            assert!(err.contains(f), "{args:?}: {err:?} lacks {f:?}");
        }
        assert!(
            !d.join("x.svg").exists(),
            "{args:?} wrote a file on failure"
        );
    }
}
