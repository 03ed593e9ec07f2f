//! Atomic, byte-reproducible file output and deterministic number formatting.
//!
//! Every file the station writes goes through [`write_atomic`]: the bytes are
//! written to a temporary file in the destination's own directory and renamed
//! over the destination only when complete, so a reader (or a flashing jig)
//! never sees a half-written part file or image, and a failed run leaves the
//! previous file untouched.

use std::io::Write;
use std::path::{Path, PathBuf};

/// The one-line caution of the station's text and JSON outputs.
pub const CAUTION: &str = "caution: where a reading protects people or property, this output is \
one input to a design qualified under the standards that apply and verified on real parts \
(semidrift --help)";

/// The caution carried by everything made from simulated data (part files,
/// JSON reports, table image exports, scenario files).
pub const SIMULATED_CAUTION: &str = "simulated data, not a measurement: never flash or trust \
a table image made from it where a reading protects people or property";

/// The caution field of a JSON report: [`CAUTION`], followed for simulated
/// data by [`SIMULATED_CAUTION`].
pub fn caution_for(simulated: bool) -> String {
    if simulated {
        format!("{CAUTION}; {SIMULATED_CAUTION}")
    } else {
        CAUTION.to_string()
    }
}

/// Why an output file could not be written.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum OutputError {
    /// The directory, the temporary file or the final rename failed.
    #[error("{path}: cannot write: {source}")]
    Io {
        /// Destination path.
        path: PathBuf,
        /// Underlying error.
        source: std::io::Error,
    },
}

/// Writes `bytes` to `path` atomically (temporary file in the same directory,
/// flushed and synced, then renamed over `path`); creates missing parent
/// directories.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> Result<(), OutputError> {
    let io = |source| OutputError::Io {
        path: path.to_path_buf(),
        source,
    };
    let dir = match path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d.to_path_buf(),
        _ => PathBuf::from("."),
    };
    std::fs::create_dir_all(&dir).map_err(io)?;
    let mut tmp = tempfile::Builder::new()
        .prefix(".semidrift-")
        .suffix(".tmp")
        .tempfile_in(&dir)
        .map_err(io)?;
    tmp.write_all(bytes).map_err(io)?;
    tmp.as_file().sync_all().map_err(io)?;
    tmp.persist(path).map_err(|e| io(e.error))?;
    Ok(())
}

/// Formats a float in its shortest round-trip decimal form (Rust's `Display`),
/// which depends only on the value, never on locale or platform; non-finite
/// values become `nan`, `inf`, `-inf`.
pub fn fmt_f64(x: f64) -> String {
    if x.is_nan() {
        "nan".to_string()
    } else if x.is_infinite() {
        if x > 0.0 { "inf" } else { "-inf" }.to_string()
    } else if x == 0.0 {
        // Normalise -0 so that equal values print equal.
        "0".to_string()
    } else {
        format!("{x}")
    }
}

/// Formats a float with `digits` decimals (fixed notation), normalising -0.
pub fn fmt_fixed(x: f64, digits: usize) -> String {
    let s = format!("{x:.digits$}");
    if s.starts_with('-') && s[1..].chars().all(|c| c == '0' || c == '.') {
        s[1..].to_string()
    } else {
        s
    }
}

/// Serializes `value` as pretty JSON with a trailing newline. Field order is
/// the struct's declaration order and floats use serde_json's shortest
/// round-trip form, so equal inputs give equal bytes.
pub fn to_json_bytes<T: serde::Serialize>(value: &T) -> Vec<u8> {
    // serde_json only fails on non-string map keys or a failing Serialize
    // impl; our report types have neither, so a failure is a programming error
    // that we still report in the text instead of panicking.
    let mut bytes = serde_json::to_vec_pretty(value)
        .unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}").into_bytes());
    bytes.push(b'\n');
    bytes
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn float_formats_are_canonical() {
        // (input, shortest, fixed 3)
        let table: [(f64, &str, &str); 6] = [
            (0.1, "0.1", "0.100"),
            (-0.0, "0", "0.000"),
            (-0.0001, "-0.0001", "0.000"),
            (1e-20, "0.00000000000000000001", "0.000"),
            (f64::NAN, "nan", "NaN"),
            (123456.789, "123456.789", "123456.789"),
        ];
        for (x, shortest, fixed) in table {
            assert_eq!(fmt_f64(x), shortest, "fmt_f64({x:e})");
            assert_eq!(fmt_fixed(x, 3), fixed, "fmt_fixed({x:e}, 3)");
        }
        // Shortest form round-trips exactly.
        for x in [0.1, 1.0 / 3.0, 2.0e18, -7.25e-9] {
            let back: f64 = fmt_f64(x).parse().unwrap();
            assert_eq!(back.to_bits(), x.to_bits(), "round trip of {x:e}");
        }
    }

    #[test]
    fn atomic_write_replaces_whole_file_and_creates_dirs() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("a/b/part.json");
        write_atomic(&path, b"first").unwrap();
        write_atomic(&path, b"second").unwrap();
        assert_eq!(std::fs::read(&path).unwrap(), b"second");
        // No temporary files left behind.
        let left: Vec<_> = std::fs::read_dir(path.parent().unwrap())
            .unwrap()
            .map(|e| e.unwrap().file_name())
            .collect();
        assert_eq!(left.len(), 1, "leftover files: {left:?}");
    }

    #[test]
    fn atomic_write_to_unwritable_place_fails_cleanly() {
        let dir = tempfile::tempdir().unwrap();
        let file = dir.path().join("plain");
        std::fs::write(&file, b"x").unwrap();
        // A path below a regular file cannot be created.
        let err = write_atomic(&file.join("sub/out.bin"), b"y").unwrap_err();
        assert!(err.to_string().contains("out.bin"), "{err}");
        assert_eq!(std::fs::read(&file).unwrap(), b"x");
    }
}
