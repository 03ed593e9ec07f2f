//! `semidrift demo` end to end on small lots: the qualification lot and its
//! design, parts fitted on it with tables and verification, and every
//! written byte identical from run to run (the demo's contract).

mod common;

use common::ok_in;
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
}
