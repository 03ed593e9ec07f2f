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
    /// The destination exists and is not a regular file (a symlink, FIFO,
    /// device or directory), which an atomic rename would replace.
    #[error("{path}: refusing to replace a {kind} with an output file; give a regular file's path")]
    NotRegular {
        /// Destination path.
        path: PathBuf,
        /// What is there.
        kind: &'static str,
    },
    /// The destination is one of the command's own inputs.
    #[error("{path}: is also the command's input {input}; write the output elsewhere")]
    IsInput {
        /// Destination path.
        path: PathBuf,
        /// The input it would overwrite, as given.
        input: String,
    },
    /// A file name (from a serial number) would leave its folder.
    #[error("{dir}: output name '{name}' is not a plain file name")]
    Escapes {
        /// Output folder.
        dir: PathBuf,
        /// Offending name.
        name: String,
    },
}

/// Prefix of the station's temporary files: `.semidrift-PID-` then random
/// characters, `.tmp` and the destination's extension. A run killed between writing and renaming leaves
/// one behind; the next write into that folder removes those whose process
/// is gone ([`remove_stale_temporaries`]).
pub const TEMP_PREFIX: &str = ".semidrift-";

/// Refuses a destination that exists and is not a regular file: an atomic
/// rename would replace a symlink, FIFO or device node instead of writing
/// through it.
pub fn check_destination(path: &Path) -> Result<(), OutputError> {
    let Ok(meta) = std::fs::symlink_metadata(path) else {
        return Ok(()); // absent: will be created
    };
    let t = meta.file_type();
    let kind = if t.is_file() {
        return Ok(());
    } else if t.is_symlink() {
        "symbolic link"
    } else if t.is_dir() {
        "directory"
    } else {
        "special file (FIFO, socket or device)"
    };
    Err(OutputError::NotRegular {
        path: path.to_path_buf(),
        kind,
    })
}

/// Refuses `output` when it names the same file as one of `inputs` (same
/// device and inode where both exist, else the same absolute path).
pub fn check_not_input(output: &Path, inputs: &[&Path]) -> Result<(), OutputError> {
    for input in inputs {
        if same_file(output, input) {
            return Err(OutputError::IsInput {
                path: output.to_path_buf(),
                input: input.display().to_string(),
            });
        }
    }
    Ok(())
}

fn same_file(a: &Path, b: &Path) -> bool {
    #[cfg(unix)]
    {
        use std::os::unix::fs::MetadataExt;
        if let (Ok(x), Ok(y)) = (std::fs::metadata(a), std::fs::metadata(b)) {
            return x.dev() == y.dev() && x.ino() == y.ino();
        }
    }
    let abs = |p: &Path| std::path::absolute(p).unwrap_or_else(|_| p.to_path_buf());
    abs(a) == abs(b)
}

/// `dir/name` for a file name made from data (a serial number): refused
/// unless `name` is one plain component (no separator, not `.` or `..`,
/// not hidden), so that the file stays inside `dir`.
pub fn path_in(dir: &Path, name: &str) -> Result<PathBuf, OutputError> {
    let plain = !name.is_empty()
        && !name.starts_with('.')
        && !name.contains(['/', '\\', '\0'])
        && Path::new(name).components().count() == 1;
    if plain {
        Ok(dir.join(name))
    } else {
        Err(OutputError::Escapes {
            dir: dir.to_path_buf(),
            name: name.to_string(),
        })
    }
}

/// Writes `bytes` to `path` atomically (temporary file in the same directory,
/// flushed and synced, given ordinary 0644 permissions, then renamed over
/// `path`); creates missing parent directories. Refuses a destination that
/// exists and is not a regular file ([`check_destination`]).
pub fn write_atomic(path: &Path, bytes: &[u8]) -> Result<(), OutputError> {
    write_atomic_with(path, |_, file| file.write_all(bytes))
}

/// [`write_atomic`] with the contents written by `fill`, which gets the
/// temporary file's path and handle (writers that need a path, like an
/// image encoder, write to the path).
pub fn write_atomic_with(
    path: &Path,
    fill: impl FnOnce(&Path, &mut std::fs::File) -> std::io::Result<()>,
) -> Result<(), OutputError> {
    let io = |source| OutputError::Io {
        path: path.to_path_buf(),
        source,
    };
    check_destination(path)?;
    let dir = match path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d.to_path_buf(),
        _ => PathBuf::from("."),
    };
    std::fs::create_dir_all(&dir).map_err(io)?;
    remove_stale_temporaries_once(&dir);
    // The destination's extension follows `.tmp`: encoders that pick the
    // format from the name (PNG) see it.
    let suffix = match path.extension().and_then(|e| e.to_str()) {
        Some(ext) => format!(".tmp.{ext}"),
        None => ".tmp".to_string(),
    };
    let mut tmp = tempfile::Builder::new()
        .prefix(&format!("{TEMP_PREFIX}{}-", std::process::id()))
        .suffix(&suffix)
        .tempfile_in(&dir)
        .map_err(io)?;
    let tmp_path = tmp.path().to_path_buf();
    fill(&tmp_path, tmp.as_file_mut()).map_err(io)?;
    tmp.as_file_mut().flush().map_err(io)?;
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        tmp.as_file()
            .set_permissions(std::fs::Permissions::from_mode(0o644))
            .map_err(io)?;
    }
    tmp.as_file().sync_all().map_err(io)?;
    tmp.persist(path).map_err(|e| io(e.error))?;
    Ok(())
}

/// [`remove_stale_temporaries`] for the first write into `dir` in this
/// process only: `calibrate` writes a thousand part files into one folder,
/// and scanning it before each would cost a thousand directory listings.
fn remove_stale_temporaries_once(dir: &Path) {
    use std::collections::HashSet;
    use std::sync::{Mutex, OnceLock};
    static CLEANED: OnceLock<Mutex<HashSet<PathBuf>>> = OnceLock::new();
    let key = std::path::absolute(dir).unwrap_or_else(|_| dir.to_path_buf());
    let first = CLEANED
        .get_or_init(|| Mutex::new(HashSet::new()))
        .lock()
        .map(|mut seen| seen.insert(key))
        .unwrap_or(true);
    if first {
        remove_stale_temporaries(dir);
    }
}

/// Removes `.semidrift-PID-*.tmp*` files in `dir` whose process no longer
/// runs (left by a killed run). Only on Linux, where `/proc` says which
/// processes run; elsewhere nothing is removed. Failures are ignored: a
/// stale temporary file is untidy, never wrong.
pub fn remove_stale_temporaries(dir: &Path) {
    if !Path::new("/proc/self").exists() {
        return;
    }
    let Ok(entries) = std::fs::read_dir(dir) else {
        return;
    };
    for entry in entries.flatten() {
        let name = entry.file_name();
        let Some(name) = name.to_str() else { continue };
        let Some(rest) = name.strip_prefix(TEMP_PREFIX) else {
            continue;
        };
        if !name.contains(".tmp") {
            continue;
        }
        let Some(pid) = rest.split('-').next().and_then(|p| p.parse::<u32>().ok()) else {
            continue;
        };
        if pid != std::process::id() && !Path::new(&format!("/proc/{pid}")).exists() {
            let _ = std::fs::remove_file(entry.path());
        }
    }
}

/// CSV text through `csv::Writer` (quoting where a field needs it, `\n`
/// line ends): a header and rows of already formatted fields.
pub fn csv_text<R, F>(header: &[&str], rows: R) -> String
where
    R: IntoIterator<Item = F>,
    F: IntoIterator<Item = String>,
{
    let mut w = csv::WriterBuilder::new()
        .terminator(csv::Terminator::Any(b'\n'))
        .flexible(true)
        .from_writer(Vec::new());
    // Writing into a Vec cannot fail.
    let _ = w.write_record(header);
    for row in rows {
        let _ = w.write_record(row.into_iter().collect::<Vec<String>>());
    }
    String::from_utf8(w.into_inner().unwrap_or_default()).unwrap_or_default()
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
    fn special_files_inputs_and_escaping_names_are_refused() {
        let dir = tempfile::tempdir().unwrap();
        let target = dir.path().join("target.json");
        std::fs::write(&target, b"keep").unwrap();
        #[cfg(unix)]
        {
            let link = dir.path().join("link.json");
            std::os::unix::fs::symlink(&target, &link).unwrap();
            let err = write_atomic(&link, b"new").unwrap_err();
            assert!(matches!(err, OutputError::NotRegular { .. }), "{err}");
            assert!(
                std::fs::symlink_metadata(&link)
                    .unwrap()
                    .file_type()
                    .is_symlink()
            );
            let err = write_atomic(Path::new("/dev/null"), b"x").unwrap_err();
            assert!(matches!(err, OutputError::NotRegular { .. }), "{err}");
        }
        let err = write_atomic(dir.path(), b"x").unwrap_err();
        assert!(matches!(err, OutputError::NotRegular { .. }), "{err}");
        assert_eq!(std::fs::read(&target).unwrap(), b"keep");
        // An output naming an input (also through another spelling).
        let other = dir.path().join(".").join("target.json");
        assert!(check_not_input(&other, &[target.as_path()]).is_err());
        assert!(check_not_input(&dir.path().join("new.json"), &[target.as_path()]).is_ok());
        for (name, ok) in [
            ("A-1.part.json", true),
            ("../x", false),
            ("/abs", false),
            ("a/b", false),
            (".x", false),
            ("", false),
        ] {
            assert_eq!(path_in(dir.path(), name).is_ok(), ok, "{name:?}");
        }
    }

    #[test]
    fn csv_text_quotes_what_needs_it_and_round_trips() {
        let text = csv_text(
            &["serial", "x"],
            [
                vec!["A,1".to_string(), "2".to_string()],
                vec!["say \"hi\"".to_string(), String::new()],
            ],
        );
        assert_eq!(text, "serial,x\n\"A,1\",2\n\"say \"\"hi\"\"\",\n");
        let mut r = csv::Reader::from_reader(text.as_bytes());
        let back: Vec<Vec<String>> = r
            .records()
            .map(|rec| rec.unwrap().iter().map(str::to_string).collect())
            .collect();
        assert_eq!(back, vec![vec!["A,1", "2"], vec!["say \"hi\"", ""]]);
    }

    #[test]
    fn stale_temporaries_of_dead_processes_are_removed() {
        let dir = tempfile::tempdir().unwrap();
        // PID 0 is never a user process; our own PID is alive.
        let dead = dir.path().join(format!("{TEMP_PREFIX}0-abc.tmp"));
        let alive = dir
            .path()
            .join(format!("{TEMP_PREFIX}{}-abc.tmp", std::process::id()));
        let other = dir.path().join("keep.tmp");
        for p in [&dead, &alive, &other] {
            std::fs::write(p, b"x").unwrap();
        }
        write_atomic(&dir.path().join("out.bin"), b"y").unwrap();
        if Path::new("/proc/self").exists() {
            assert!(!dead.exists(), "stale temporary left");
        }
        assert!(alive.exists() && other.exists());
        #[cfg(unix)]
        {
            use std::os::unix::fs::PermissionsExt;
            let mode = std::fs::metadata(dir.path().join("out.bin"))
                .unwrap()
                .permissions()
                .mode();
            assert_eq!(mode & 0o777, 0o644, "ordinary permissions");
        }
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
