//! The HTML lot report in a real browser: headless Chromium (Debian
//! package `chromium`, installed by scripts/install-prereqs.sh) loads the
//! report of a recorded lot and the 50-part demo's reports, with no console
//! message; the key figures on the page equal those read from the database
//! with rusqlite (not through host-tools' queries), or the demo's summary;
//! a screenshot is not blank.
//!
//! The 50-part demo's two reports and summaries are kept in
//! `docs/lot-report/` and opened from there; a test runs the 50-part demo
//! and fails unless those files are byte for byte its output (and the
//! report made from its folder with `lot report --folder` too).

mod common;

use common::{ok_in, run_in, stderr};
use rusqlite::Connection;
use std::path::{Path, PathBuf};
use std::process::Command;

/// What the browser gave: the DOM after load, its console lines, and the
/// screenshot's PNG bytes.
struct Rendered {
    dom: String,
    console: Vec<String>,
    png: Vec<u8>,
}

/// Runs headless Chromium on `page` twice (DOM with the console on stderr,
/// then a screenshot), each with a fresh profile folder and no network
/// services.
fn render(page: &Path, work: &Path) -> Rendered {
    let url = format!("file://{}", page.canonicalize().unwrap().display());
    let base = |profile: &str| {
        let mut c = Command::new("chromium");
        c.args([
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--disable-quic",
            "--no-first-run",
            "--disable-background-networking",
            "--disable-component-update",
            "--disable-sync",
            "--enable-logging=stderr",
            "--v=0",
        ])
        .arg(format!("--user-data-dir={}", work.join(profile).display()));
        c
    };
    let dom = base("profile-dom")
        .arg("--dump-dom")
        .arg(&url)
        .output()
        .expect("chromium runs (scripts/install-prereqs.sh installs it)");
    assert!(dom.status.success(), "chromium: {}", stderr(&dom));
    let shot_path = work.join("shot.png");
    let shot = base("profile-shot")
        .arg(format!("--screenshot={}", shot_path.display()))
        .arg("--window-size=1000,1600")
        .arg(&url)
        .output()
        .expect("chromium runs");
    assert!(shot.status.success(), "chromium: {}", stderr(&shot));
    // Chromium logs every console message (errors included) as
    // `INFO:CONSOLE`; the report has no script, so any is a failure.
    let console = stderr(&dom)
        .lines()
        .chain(stderr(&shot).lines())
        .filter(|l| l.contains(":CONSOLE"))
        .map(str::to_string)
        .collect();
    Rendered {
        dom: String::from_utf8(dom.stdout).unwrap(),
        console,
        png: std::fs::read(shot_path).unwrap(),
    }
}

/// The text of the element with `id` in the DOM.
fn figure(dom: &str, id: &str) -> String {
    let key = format!("id=\"{id}\">");
    let start = dom
        .find(&key)
        .unwrap_or_else(|| panic!("no #{id} on the page"))
        + key.len();
    let end = start + dom[start..].find('<').unwrap();
    dom[start..end].to_string()
}

/// Share of pixels that are not white, and the number of distinct colours.
fn ink(png_bytes: &[u8]) -> (f64, usize) {
    let decoder = png::Decoder::new(std::io::Cursor::new(png_bytes));
    let mut reader = decoder.read_info().unwrap();
    let mut buf = vec![0; reader.output_buffer_size()];
    let info = reader.next_frame(&mut buf).unwrap();
    let px = info.color_type.samples();
    let data = &buf[..info.buffer_size()];
    let mut colours = std::collections::BTreeSet::new();
    let mut inked = 0usize;
    let n = data.len() / px;
    for p in data.chunks(px) {
        colours.insert(p[..3].to_vec());
        if p[..3].iter().any(|&c| c < 240) {
            inked += 1;
        }
    }
    (inked as f64 / n as f64, colours.len())
}

/// A page that loads without a console message, fetches nothing and
/// paints something.
fn assert_clean(r: &Rendered, html: &str) {
    assert!(r.console.is_empty(), "console: {:?}", r.console);
    for bad in ["<script", "<link", "src=", "@import", "url("] {
        assert!(
            !html.contains(bad),
            "the report refers outside itself: {bad}"
        );
    }
    let (share, colours) = ink(&r.png);
    // A blank page is one colour and no ink; the report's first screen has
    // its title, caution box, yield table and a plot: several per cent of
    // the pixels inked and dozens of colours (anti-aliased text).
    assert!(
        share > 0.02 && colours > 20,
        "screenshot looks blank: {share} inked, {colours} colours"
    );
}

#[test]
fn the_checks_can_fail() {
    let dir = tempfile::tempdir().unwrap();
    let bad = dir.path().join("bad.html");
    std::fs::write(
        &bad,
        "<!DOCTYPE html><html><body><script>nosuch();</script></body></html>",
    )
    .unwrap();
    let r = render(&bad, dir.path());
    assert!(
        !r.console.is_empty(),
        "a script error must reach the console check"
    );
    let (share, _) = ink(&r.png);
    assert!(share < 0.02, "an empty page must read as blank: {share}");
}

#[test]
fn recorded_lot_report_shows_the_databases_figures() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    for extra in [&[][..], &["--check"][..]] {
        let out = if extra.is_empty() {
            "l.csv"
        } else {
            "l-check.csv"
        };
        let mut a = vec![
            "simulate",
            "well-logger",
            "--parts",
            "12",
            "--seed",
            "8",
            "--out",
            out,
        ];
        a.extend_from_slice(extra);
        ok_in(d, &a);
    }
    // A budget that rejects some parts (see tests/station_db.rs), so the
    // rejects table is on the page.
    let o = run_in(
        d,
        &[
            "lot",
            "run",
            "well-logger",
            "l.csv",
            "--check",
            "l-check.csv",
            "--db",
            "s.sqlite",
            "--budget",
            "250",
            "-q",
        ],
    );
    assert!(o.status.success(), "{}", stderr(&o));
    ok_in(d, &["lot", "release", "l", "--db", "s.sqlite"]);
    ok_in(
        d,
        &[
            "lot",
            "report",
            "l",
            "--db",
            "s.sqlite",
            "-o",
            "report.html",
        ],
    );
    let html = std::fs::read_to_string(d.join("report.html")).unwrap();
    let r = render(&d.join("report.html"), d);
    assert_clean(&r, &html);

    let c = Connection::open(d.join("s.sqlite")).unwrap();
    let q = |sql: &str| -> i64 { c.query_row(sql, [], |r| r.get(0)).unwrap() };
    // Figure checks read alike: each compares one id on the page with its own query.
    assert_eq!(
        figure(&r.dom, "parts"),
        q("SELECT count(*) FROM fits").to_string()
    );
    assert_eq!(
        figure(&r.dom, "released"),
        q("SELECT count(*) FROM releases").to_string()
    );
    assert_eq!(
        figure(&r.dom, "rejected"),
        q("SELECT count(DISTINCT fit_id) FROM rejects").to_string()
    );
    assert_eq!(
        figure(&r.dom, "verified"),
        q("SELECT count(*) FROM verifications WHERE pass = 1").to_string()
    );
    assert!(
        q("SELECT count(*) FROM rejects") > 0,
        "the lot should have rejects"
    );
    let worst: f64 = c
        .query_row(
            "SELECT max(COALESCE(e.max_error_ppm, v.max_error_ppm)) FROM images i
             LEFT JOIN verifications v ON v.image_id = i.id LEFT JOIN eol_checks e ON e.image_id = i.id",
            [],
            |r| r.get(0),
        )
        .unwrap();
    assert_eq!(figure(&r.dom, "worst-ppm"), format!("{worst:.1}"));
    let budget: f64 = c
        .query_row("SELECT budget_ppm FROM lots", [], |r| r.get(0))
        .unwrap();
    assert_eq!(figure(&r.dom, "budget-ppm"), budget.to_string());
    // Every rejected serial is listed with its reason.
    let mut st = c
        .prepare("SELECT f.serial, x.reason FROM rejects x JOIN fits f ON f.id = x.fit_id")
        .unwrap();
    let rejects: Vec<(String, String)> = st
        .query_map([], |r| Ok((r.get(0)?, r.get(1)?)))
        .unwrap()
        .collect::<Result<_, _>>()
        .unwrap();
    let table = &r.dom[r.dom.find("id=\"rejects\"").unwrap()..];
    for (serial, reason) in rejects {
        assert!(
            table.contains(&serial) && table.contains(&reason),
            "{serial}: {reason}"
        );
    }
}

/// The 50-part demo's reports and summaries kept in the docs.
fn docs_reports() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("docs/lot-report")
}

/// The demo's scenario folders.
const SCENARIOS: [&str; 2] = ["well", "battery"];

/// Every section the lot report has, by its heading.
const SECTIONS: [&str; 7] = [
    "Yield",
    "Error envelope against temperature",
    "Worst error per part",
    "Budget terms",
    "Outliers and rejected parts",
    "Design",
    "Parts",
];

#[test]
fn fifty_part_demo_reports_show_their_figures_in_the_browser() {
    let dir = tempfile::tempdir().unwrap();
    for scenario in SCENARIOS {
        let page = docs_reports().join(format!("{scenario}.html"));
        let html = std::fs::read_to_string(&page).unwrap();
        let r = render(&page, dir.path());
        assert_clean(&r, &html);
        let summary: serde_json::Value = serde_json::from_slice(
            &std::fs::read(docs_reports().join(format!("{scenario}-summary.json"))).unwrap(),
        )
        .unwrap();
        // The page's figures are the demo's own summary.
        assert_eq!(summary["parts"], 50, "{scenario}: not the 50-part demo");
        assert_eq!(figure(&r.dom, "parts"), summary["parts"].to_string());
        assert_eq!(
            figure(&r.dom, "verified"),
            summary["verified_pass"].to_string()
        );
        assert_eq!(
            figure(&r.dom, "design"),
            summary["design_hash"].as_str().unwrap()
        );
        // Rust's float display round-trips: equal as numbers, exactly.
        assert_eq!(
            figure(&r.dom, "budget-ppm").parse::<f64>().unwrap(),
            summary["budget_ppm"].as_f64().unwrap()
        );
        let eol_worst = summary["image_check_max_ppm"].as_f64().unwrap();
        let worst: f64 = figure(&r.dom, "worst-ppm").parse().unwrap();
        // The page's worst is the end-of-line worst (each part has check
        // rows), printed with one decimal: equal within half a unit of it.
        assert!(
            (worst - eol_worst).abs() <= 0.05 + 1e-9,
            "{scenario}: {worst} vs {eol_worst}"
        );
        // Every section, its four plots (yield, envelope, histogram, budget
        // terms), one table row per part, and the cautions.
        for h in SECTIONS {
            assert!(
                r.dom.contains(&format!("<h2>{h}</h2>")),
                "{scenario}: no {h}"
            );
        }
        assert_eq!(r.dom.matches("<svg").count(), 4, "{scenario}: plots");
        let table = &r.dom[r.dom.find("id=\"parts-table\"").unwrap()..];
        let table = &table[..table.find("</table>").unwrap()];
        assert_eq!(table.matches("<tr class=").count(), 50, "{scenario}: rows");
        assert!(
            r.dom.contains(summary["caution"].as_str().unwrap()),
            "{scenario}: caution"
        );
    }
}

#[test]
fn docs_reports_are_the_current_fifty_part_demos() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    ok_in(d, &["demo", "--parts", "50", "--out-dir", "demo", "-q"]);
    let regenerate = "regenerate with scripts/lot-report-docs.sh";
    for scenario in SCENARIOS {
        let folder = d.join("demo").join(scenario);
        let report = std::fs::read(folder.join("report.html")).unwrap();
        for (name, fresh) in [
            (format!("{scenario}.html"), report.clone()),
            (
                format!("{scenario}-summary.json"),
                std::fs::read(folder.join("summary.json")).unwrap(),
            ),
        ] {
            // Compared as booleans: a failure must not print two files.
            assert!(
                std::fs::read(docs_reports().join(&name)).unwrap() == fresh,
                "docs/lot-report/{name} is not the 50-part demo's: {regenerate}"
            );
        }
        let from_folder = d.join(format!("{scenario}-folder.html"));
        ok_in(
            d,
            &[
                "lot",
                "report",
                "--folder",
                folder.to_str().unwrap(),
                "-o",
                from_folder.to_str().unwrap(),
            ],
        );
        assert!(
            std::fs::read(&from_folder).unwrap() == report,
            "{scenario}: the report from the demo folder differs from the demo's"
        );
    }
}
