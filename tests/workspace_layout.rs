//! The fixed top-level layout of the repository (see DEVELOPERS.md) is present.

use std::path::Path;

#[test]
fn top_level_layout_is_complete() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    for entry in [
        "Cargo.toml",
        "README.md",
        "DEVELOPERS.md",
        "LICENSE",
        "compensate/Cargo.toml",
        "host-tools/Cargo.toml",
        "examples",
        "tests",
        ".ci/run",
        "rust-toolchain.toml",
    ] {
        assert!(root.join(entry).exists(), "missing {entry}");
    }
}
