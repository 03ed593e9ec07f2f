//! The checked-in C header equals what cbindgen generates from this crate
//! now (run with `SEMIDRIFT_BLESS=1` to rewrite it after changing the API).

use std::path::Path;

#[test]
fn header_is_current() {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR"));
    let config = cbindgen::Config::from_file(dir.join("cbindgen.toml"))
        .unwrap_or_else(|e| panic!("compensate/ffi/cbindgen.toml: {e}"));
    let bindings = cbindgen::Builder::new()
        .with_crate(dir)
        .with_config(config)
        .generate()
        .unwrap_or_else(|e| panic!("cbindgen on compensate/ffi: {e}"));
    let mut generated = Vec::new();
    bindings.write(&mut generated);
    let path = dir.join("include/semidrift_compensate.h");
    if std::env::var_os("SEMIDRIFT_BLESS").is_some() {
        std::fs::write(&path, &generated).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
        return;
    }
    let committed = std::fs::read(&path).unwrap_or_else(|e| {
        panic!(
            "{}: {e}; generate it with SEMIDRIFT_BLESS=1 cargo test -p compensate-ffi --test header",
            path.display()
        )
    });
    assert!(
        committed == generated,
        "{} is not what cbindgen generates from compensate/ffi/src; \
         regenerate with SEMIDRIFT_BLESS=1 cargo test -p compensate-ffi --test header",
        path.display()
    );
}
