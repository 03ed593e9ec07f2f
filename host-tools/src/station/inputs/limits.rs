//! The station's documented input limits, checked before anything is
//! allocated or written (docs/station.md "Input limits").
//!
//! A station runs unattended on data from real chambers: one bad row, part
//! or option must be refused with its file, line and field, never hang,
//! abort or write outside the output folder.

use std::io::Read;
use std::path::Path;

/// Longest serial number, in bytes.
pub const SERIAL_MAX_LEN: usize = 64;

/// Lowest and highest temperature the station accepts anywhere (chamber
/// rows, operating range, plans), C. Wider than any sensor chamber (common
/// practice: -70..+200 C) and inside the full model's range.
pub const TEMPERATURE_LIMITS_C: (f64, f64) = (-200.0, 500.0);

/// Smallest and largest non-zero magnitude of a chamber reading (stimulus,
/// output, temperature signal), in the spec's units: outside it a value is
/// a unit or transcription error, and subnormal or huge values would only
/// make the fits lose their arithmetic.
pub const READING_MAGNITUDE: (f64, f64) = (1e-30, 1e30);

/// Largest table image read, bytes: the station's largest image (4 096
/// temperature nodes by 256 raw nodes of 4-byte words) is 4 MiB.
pub const MAX_IMAGE_BYTES: u64 = 16 << 20;

/// Largest part, design or JSON file read, bytes (a part file is a few
/// kB, a design file well under 1 MB).
pub const MAX_JSON_BYTES: u64 = 16 << 20;

/// Largest scenario or element spec TOML read, bytes (they are ~2 kB).
pub const MAX_TOML_BYTES: u64 = 1 << 20;

/// Largest chamber CSV read, bytes: about 16 million rows, a thousand times
/// a 1 000-part qualification lot.
pub const MAX_CSV_BYTES: u64 = 1 << 30;

/// Most points of `verify`'s dense grid per axis.
pub const MAX_DENSE_PER_AXIS: usize = 100_000;

/// Most points of `verify`'s dense grid in all (each costs one full-model
/// evaluation and one runtime evaluation; 10 million take about a minute).
pub const MAX_DENSE_POINTS: usize = 10_000_000;

/// Most parts `simulate` writes in one lot.
pub const MAX_SIMULATED_PARTS: usize = 100_000;

/// Most temperatures or stimuli in a plan (calibration, check,
/// qualification) or a `--temps` / `--stimuli` list.
pub const MAX_PLAN_POINTS: usize = 256;

/// Largest error budget, ppm of span (the whole span).
pub const MAX_BUDGET_PPM: f64 = 1e6;

/// Checks a serial number: 1 to [`SERIAL_MAX_LEN`] bytes of ASCII letters,
/// digits, `-`, `_` and `.`, starting with a letter or digit. Serials name
/// files (`SERIAL.part.json`), so anything that could be a path (`/`, `..`,
/// a leading `.`) or need quoting is refused.
pub fn check_serial(serial: &str) -> Result<(), String> {
    if serial.is_empty() {
        return Err("empty serial number".into());
    }
    if serial.len() > SERIAL_MAX_LEN {
        return Err(format!(
            "serial is {} bytes long; at most {SERIAL_MAX_LEN}",
            serial.len()
        ));
    }
    if !serial.as_bytes()[0].is_ascii_alphanumeric() {
        return Err(format!(
            "serial '{}' must start with a letter or digit",
            serial.escape_debug()
        ));
    }
    if let Some(c) = serial
        .chars()
        .find(|c| !(c.is_ascii_alphanumeric() || matches!(c, '-' | '_' | '.')))
    {
        return Err(format!(
            "serial '{}' has '{}'; allowed: letters, digits, '-', '_', '.'",
            serial.escape_debug(),
            c.escape_debug()
        ));
    }
    Ok(())
}

/// Checks a temperature against [`TEMPERATURE_LIMITS_C`].
pub fn check_temperature_c(t_c: f64) -> Result<(), String> {
    let (lo, hi) = TEMPERATURE_LIMITS_C;
    if t_c.is_finite() && (lo..=hi).contains(&t_c) {
        Ok(())
    } else {
        Err(format!("{t_c} C is outside {lo}..{hi} C"))
    }
}

/// Checks a reading against [`READING_MAGNITUDE`] (zero is allowed).
pub fn check_reading(x: f64) -> Result<(), String> {
    let (lo, hi) = READING_MAGNITUDE;
    if !x.is_finite() {
        return Err("not finite".into());
    }
    if x != 0.0 && !(lo..=hi).contains(&x.abs()) {
        return Err(format!("magnitude {x:e} is outside {lo:e}..{hi:e}"));
    }
    Ok(())
}

/// Checks an error budget: finite, above zero, at most [`MAX_BUDGET_PPM`].
pub fn check_budget_ppm(budget: f64) -> Result<(), String> {
    if budget.is_finite() && budget > 0.0 && budget <= MAX_BUDGET_PPM {
        Ok(())
    } else {
        Err(format!(
            "must be a finite number of ppm above 0 and at most {MAX_BUDGET_PPM:e}"
        ))
    }
}

/// Reads at most `cap` bytes of `path`: the bytes, or a message saying the
/// file is larger than the cap (named `what`), is a directory or cannot be
/// read. FIFOs and character devices are read up to the cap, never further.
pub fn read_capped(path: &Path, cap: u64, what: &str) -> Result<Vec<u8>, String> {
    let file = std::fs::File::open(path).map_err(|e| format!("cannot read: {e}"))?;
    let meta = file.metadata().map_err(|e| format!("cannot read: {e}"))?;
    if meta.is_dir() {
        return Err("is a directory, not a file".into());
    }
    if meta.is_file() && meta.len() > cap {
        return Err(format!(
            "{} bytes is larger than any {what} ({cap} bytes at most)",
            meta.len()
        ));
    }
    let mut bytes = Vec::new();
    file.take(cap + 1)
        .read_to_end(&mut bytes)
        .map_err(|e| format!("cannot read: {e}"))?;
    if bytes.len() as u64 > cap {
        return Err(format!("more than {cap} bytes: larger than any {what}"));
    }
    Ok(bytes)
}

/// [`read_capped`] as UTF-8 text.
pub fn read_text_capped(path: &Path, cap: u64, what: &str) -> Result<String, String> {
    let bytes = read_capped(path, cap, what)?;
    String::from_utf8(bytes).map_err(|e| {
        format!(
            "not UTF-8 text (first bad byte at offset {}): not a {what}",
            e.utf8_error().valid_up_to()
        )
    })
}

/// The field a serde_json error message names (serde_json quotes missing
/// and unknown fields in backticks), or `-` when it names none.
pub fn json_error_field(message: &str) -> String {
    message.split('`').nth(1).unwrap_or("-").to_string()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn json_error_field_is_the_backticked_name() {
        assert_eq!(
            json_error_field("missing field `serial` at line 3 column 1"),
            "serial"
        );
        assert_eq!(json_error_field("expected value at line 1 column 1"), "-");
    }

    #[test]
    fn serials_that_could_be_paths_are_refused() {
        // (serial, accepted)
        let table = [
            ("WELL-0001", true),
            ("a.b_c-9", true),
            ("9", true),
            ("../../evil", false),
            ("/etc/passwd", false),
            ("a/b", false),
            ("a\\b", false),
            (".hidden", false),
            ("..", false),
            ("", false),
            ("with space", false),
            ("naïve", false),
            ("x\0y", false),
        ];
        for (serial, ok) in table {
            assert_eq!(check_serial(serial).is_ok(), ok, "{serial:?}");
        }
        assert!(check_serial(&"A".repeat(SERIAL_MAX_LEN)).is_ok());
        assert!(check_serial(&"A".repeat(SERIAL_MAX_LEN + 1)).is_err());
    }

    #[test]
    fn readings_and_temperatures_outside_the_limits_are_refused() {
        for (x, ok) in [
            (0.0, true),
            (1e-30, true),
            (-1e30, true),
            (1e-320, false),
            (1e20, true),
            (1e31, false),
            (f64::NAN, false),
            (f64::INFINITY, false),
        ] {
            assert_eq!(check_reading(x).is_ok(), ok, "{x:e}");
        }
        for (t, ok) in [
            (-200.0, true),
            (500.0, true),
            (500.1, false),
            (1e154, false),
            (f64::NAN, false),
        ] {
            assert_eq!(check_temperature_c(t).is_ok(), ok, "{t}");
        }
        for (b, ok) in [
            (500.0, true),
            (0.0, false),
            (-5.0, false),
            (f64::NAN, false),
            (f64::INFINITY, false),
            (1e6, true),
            (1.1e6, false),
        ] {
            assert_eq!(check_budget_ppm(b).is_ok(), ok, "{b}");
        }
    }

    #[test]
    fn capped_reads_stop_at_the_cap() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("f");
        std::fs::write(&path, vec![b'x'; 100]).unwrap();
        assert_eq!(read_capped(&path, 100, "thing").unwrap().len(), 100);
        let err = read_capped(&path, 99, "thing").unwrap_err();
        assert!(err.contains("larger than any thing"), "{err}");
        assert!(
            read_capped(dir.path(), 100, "thing")
                .unwrap_err()
                .contains("directory")
        );
        // A character device that never ends is read up to the cap only.
        let err = read_capped(Path::new("/dev/zero"), 1000, "thing").unwrap_err();
        assert!(err.contains("more than 1000 bytes"), "{err}");
    }
}
