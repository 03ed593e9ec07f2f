//! `semidrift demo` end to end on small lots: the qualification lot and its
//! design, parts fitted on it with tables and verification, and every
//! written byte identical from run to run (the demo's contract); the lot
//! report made from a demo folder (`lot report --folder`) is the demo's own.

mod common;

use common::{ok_in, run_in, stderr};
use std::collections::BTreeMap;
use std::path::Path;

/// Every file under `dir` with its bytes, keyed by relative path.
fn tree(dir: &Path) -> BTreeMap<String, Vec<u8>> {
    let mut out = BTreeMap::new();
    let mut stack = vec![dir.to_path_buf()];
    while let Some(d) = stack.pop() {
        for e in std::fs::read_dir(&d).unwrap() {
            let p = e.unwrap().path();
            if p.is_dir() {
                stack.push(p);
            } else {
                let rel = p.strip_prefix(dir).unwrap().display().to_string();
                out.insert(rel, std::fs::read(&p).unwrap());
            }
        }
    }
    out
}

#[test]
fn demo_learns_a_design_and_is_byte_identical() {
    let tmp = tempfile::tempdir().unwrap();
    let d = tmp.path();
    let text = ok_in(d, &["demo", "--parts", "2", "--out-dir", "a", "-q"]);
    ok_in(d, &["demo", "--parts", "2", "--out-dir", "b", "-q"]);
    let (a, b) = (tree(&d.join("a")), tree(&d.join("b")));
    assert_eq!(a.keys().collect::<Vec<_>>(), b.keys().collect::<Vec<_>>());
    for (k, v) in &a {
        assert!(b[k] == *v, "{k} differs between two runs");
    }
    for scenario in ["well", "battery"] {
        for f in [
            "qualification.csv",
            "design.json",
            "summary.json",
            "comparison.json",
            "plots/lot-error.svg",
        ] {
            let key = format!("{scenario}/{f}");
            assert!(a.contains_key(&key), "missing {key}");
        }
        // Parts fitted on the design carry its hash, and get tables.
        let design: serde_json::Value =
            serde_json::from_slice(&a[&format!("{scenario}/design.json")]).unwrap();
        let hash = design["hash"].as_str().unwrap();
        let serial = if scenario == "well" {
            "WELL-0001"
        } else {
            "BATTERY-0001"
        };
        let part: serde_json::Value =
            serde_json::from_slice(&a[&format!("{scenario}/parts/{serial}.part.json")]).unwrap();
        assert_eq!(part["design"]["design_hash"].as_str(), Some(hash));
        assert!(a.contains_key(&format!("{scenario}/tables/{serial}.bin")));
    }
    assert!(
        text.contains("on the design learned from a 20-part qualification lot"),
        "{text}"
    );
    report_from_folder(d);
}

/// The text of the element with `id` in a report page.
fn figure(html: &str, id: &str) -> String {
    let key = format!("id=\"{id}\">");
    let start = html.find(&key).unwrap_or_else(|| panic!("no #{id}")) + key.len();
    html[start..start + html[start..].find('<').unwrap()].to_string()
}

/// `lot report --folder` on the demo's folders (`d/a`, written by the test
/// above): byte for byte the demo's own report, whose figures are the
/// demo's summary; and a folder that contradicts itself is refused.
fn report_from_folder(d: &Path) {
    for scenario in ["well", "battery"] {
        let folder = format!("a/{scenario}");
        let out = format!("{scenario}.html");
        let said = ok_in(d, &["lot", "report", "--folder", &folder, "-o", &out]);
        assert!(said.contains("(2 parts)"), "{said}");
        let demo = std::fs::read(d.join(&folder).join("report.html")).unwrap();
        assert!(
            std::fs::read(d.join(&out)).unwrap() == demo,
            "{scenario}: the report from the folder differs from the demo's"
        );
        let html = String::from_utf8(demo).unwrap();
        let summary: serde_json::Value =
            serde_json::from_slice(&std::fs::read(d.join(&folder).join("summary.json")).unwrap())
                .unwrap();
        assert_eq!(figure(&html, "parts"), summary["parts"].to_string());
        assert_eq!(
            figure(&html, "verified"),
            summary["verified_pass"].to_string()
        );
        assert_eq!(
            figure(&html, "design"),
            summary["design_hash"].as_str().unwrap()
        );
        // A name of our own replaces the demo's.
        ok_in(
            d,
            &[
                "lot",
                "report",
                "L-7",
                "--folder",
                &folder,
                "-o",
                "named.html",
            ],
        );
        let named = std::fs::read_to_string(d.join("named.html")).unwrap();
        assert_eq!(figure(&named, "lot"), "L-7");
    }

    // Refused with exit 2 and one line naming the file (and the field),
    // nothing written.
    let refused = |folder: &str, says: &[&str]| {
        let o = run_in(d, &["lot", "report", "--folder", folder, "-o", "bad.html"]);
        let err = stderr(&o);
        assert_eq!(o.status.code(), Some(2), "{folder}: {err}");
        assert_eq!(err.lines().count(), 1, "{err}");
        for s in says {
            assert!(err.contains(s), "{folder}: {err} lacks {s}");
        }
        assert!(!d.join("bad.html").exists());
    };
    refused("nosuch", &["nosuch/scenario.toml", "missing"]);
    let copy = |name: &str| {
        let to = d.join(name);
        for (rel, bytes) in tree(&d.join("a/well")) {
            let p = to.join(rel);
            std::fs::create_dir_all(p.parent().unwrap()).unwrap();
            std::fs::write(p, bytes).unwrap();
        }
        to
    };
    // Another part's verification report under this part's name.
    let swapped = copy("swapped");
    std::fs::copy(
        swapped.join("verify/WELL-0002.json"),
        swapped.join("verify/WELL-0001.json"),
    )
    .unwrap();
    refused(
        "swapped",
        &[
            "swapped/verify/WELL-0001.json:2: field 'serial'",
            "WELL-0002",
        ],
    );
    // Refusals read alike: each breaks the folder its own way and names its own reason.
    // Parts fitted on a design the folder does not hold.
    let no_design = copy("no-design");
    std::fs::remove_file(no_design.join("design.json")).unwrap();
    refused(
        "no-design",
        &[
            "no-design/parts/WELL-0001.part.json",
            "design.design_hash",
            "no design.json",
        ],
    );
    // A folder part-way through the chain: a part without its image is
    // shown as calibrated, not as passed.
    let partial = copy("partial");
    std::fs::remove_file(partial.join("tables/WELL-0002.bin")).unwrap();
    ok_in(
        d,
        &["lot", "report", "--folder", "partial", "-o", "partial.html"],
    );
    let html = std::fs::read_to_string(d.join("partial.html")).unwrap();
    assert_eq!(figure(&html, "verified"), "1");
    assert!(html.contains("<td class=\"l\">WELL-0002</td><td class=\"l\">calibrated</td>"));
}
