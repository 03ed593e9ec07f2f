//! The chamber CSV (DEVELOPERS.md "Architecture and data flow"): one row per reading of one part at one
//! chamber temperature and one stimulus.
//!
//! Columns `serial, chamber_c, stimulus, output, temp_signal` in any order
//! (header row required, extra columns ignored). Units are those declared in
//! the element spec. A bad row is reported with file, line and column and
//! skipped; the other rows (and so the other parts) are still used.

use crate::station::output::fmt_f64;
use std::collections::BTreeMap;
use std::path::Path;

/// The columns a chamber CSV must have.
pub const COLUMNS: [&str; 5] = ["serial", "chamber_c", "stimulus", "output", "temp_signal"];

/// One reading of one part.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct ChamberRow {
    /// Part serial number.
    pub serial: String,
    /// Chamber set-point temperature in degrees Celsius.
    pub chamber_c: f64,
    /// Applied reference stimulus (pressure, current, ...) in spec units.
    pub stimulus: f64,
    /// Raw element output as read by the ADC, in spec units.
    pub output: f64,
    /// Raw temperature signal (e.g. bridge resistance) in spec units.
    pub temp_signal: f64,
    /// 1-based line of the row in its file (header is line 1).
    pub line: usize,
}

/// A row that could not be read.
#[derive(Debug, Clone, PartialEq)]
pub struct RowError {
    /// File the row came from.
    pub file: String,
    /// 1-based line number.
    pub line: usize,
    /// Column (field) name.
    pub field: String,
    /// What is wrong.
    pub message: String,
}

impl std::fmt::Display for RowError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "{}:{}: field '{}': {}",
            self.file, self.line, self.field, self.message
        )
    }
}

/// Why a chamber file could not be read at all.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum ChamberError {
    /// The file could not be opened or read.
    #[error("{file}: cannot read: {message}")]
    Io {
        /// File name.
        file: String,
        /// Underlying error text.
        message: String,
    },
    /// A required column is missing from the header.
    #[error("{file}:1: field '{field}': required column missing from the header")]
    MissingColumn {
        /// File name.
        file: String,
        /// Missing column.
        field: &'static str,
    },
}

/// The readable rows of a chamber file and the rows that were rejected.
#[derive(Debug, Clone, Default)]
pub struct ChamberData {
    /// Rows that parsed, in file order.
    pub rows: Vec<ChamberRow>,
    /// Rows that did not, in file order.
    pub errors: Vec<RowError>,
    /// Rows that repeat an earlier row's serial, chamber temperature and
    /// stimulus (used, but reported as warnings), in file order.
    pub repeats: Vec<RowError>,
}

impl From<Vec<ChamberRow>> for ChamberData {
    /// Rows measured or simulated here: none failed to parse, none repeats.
    fn from(rows: Vec<ChamberRow>) -> Self {
        ChamberData {
            rows,
            ..ChamberData::default()
        }
    }
}

impl ChamberData {
    /// Groups the rows by serial number (serials in sorted order, rows in file order).
    pub fn by_serial(&self) -> BTreeMap<&str, Vec<&ChamberRow>> {
        let mut map: BTreeMap<&str, Vec<&ChamberRow>> = BTreeMap::new();
        for row in &self.rows {
            map.entry(row.serial.as_str()).or_default().push(row);
        }
        map
    }
}

// Same capped read as PartFile::read; the two formats differ after it.
/// Reads a chamber CSV from a file.
pub fn read_file(path: &Path) -> Result<ChamberData, ChamberError> {
    let name = path.display().to_string();
    let bytes = crate::station::limits::read_capped(
        path,
        crate::station::limits::MAX_CSV_BYTES,
        "chamber CSV",
    )
    .map_err(|message| ChamberError::Io {
        file: name.clone(),
        message,
    })?;
    read_bytes(&name, &bytes)
}

/// Reads a chamber CSV from memory; `file` names it in messages.
pub fn read_bytes(file: &str, bytes: &[u8]) -> Result<ChamberData, ChamberError> {
    let mut reader = csv::ReaderBuilder::new()
        .trim(csv::Trim::All)
        .flexible(true)
        .comment(Some(b'#'))
        .from_reader(bytes);
    let headers = reader
        .headers()
        .map_err(|e| ChamberError::Io {
            file: file.to_string(),
            message: e.to_string(),
        })?
        .clone();
    let mut index = [0usize; 5];
    for (slot, name) in index.iter_mut().zip(COLUMNS) {
        *slot = headers
            .iter()
            .position(|h| h.eq_ignore_ascii_case(name))
            .ok_or(ChamberError::MissingColumn {
                file: file.to_string(),
                field: name,
            })?;
    }
    let mut data = ChamberData::default();
    for record in reader.records() {
        let record = match record {
            Ok(r) => r,
            Err(e) => {
                let line = e.position().map_or(0, |p| p.line() as usize);
                let (field, message) = match e.kind() {
                    csv::ErrorKind::Utf8 { err, .. } => (
                        headers
                            .get(err.field())
                            .map_or_else(|| format!("column {}", err.field() + 1), str::to_string),
                        "not UTF-8 text".to_string(),
                    ),
                    _ => ("-".to_string(), e.to_string()),
                };
                data.errors.push(RowError {
                    file: file.to_string(),
                    line,
                    field,
                    message,
                });
                continue;
            }
        };
        let line = record.position().map_or(0, |p| p.line() as usize);
        match parse_record(&record, &index) {
            Ok((serial, [chamber_c, stimulus, output, temp_signal])) => {
                data.rows.push(ChamberRow {
                    serial,
                    chamber_c,
                    stimulus,
                    output,
                    temp_signal,
                    line,
                })
            }
            Err((field, message)) => data.errors.push(RowError {
                file: file.to_string(),
                line,
                field: field.to_string(),
                message,
            }),
        }
    }
    data.repeats = repeats(file, &data.rows);
    Ok(data)
}

/// Rows that repeat an earlier row's serial, chamber temperature and
/// stimulus: both are used (repeated readings average), but a station
/// engineer should know, because a copy-paste error looks the same.
fn repeats(file: &str, rows: &[ChamberRow]) -> Vec<RowError> {
    let mut first: BTreeMap<(&str, u64, u64), &ChamberRow> = BTreeMap::new();
    let mut out = Vec::new();
    for r in rows {
        let key = (
            r.serial.as_str(),
            r.chamber_c.to_bits(),
            r.stimulus.to_bits(),
        );
        match first.get(&key) {
            Some(earlier) => out.push(RowError {
                file: file.to_string(),
                line: r.line,
                field: "stimulus".to_string(),
                message: format!(
                    "repeats line {} (serial {}, {} C, stimulus {}): output {} vs {}, temp_signal {} vs {}; both rows are used",
                    earlier.line,
                    r.serial,
                    fmt_f64(r.chamber_c),
                    fmt_f64(r.stimulus),
                    fmt_f64(r.output),
                    fmt_f64(earlier.output),
                    fmt_f64(r.temp_signal),
                    fmt_f64(earlier.temp_signal)
                ),
            }),
            None => {
                first.insert(key, r);
            }
        }
    }
    out
}

fn parse_record(
    record: &csv::StringRecord,
    index: &[usize; 5],
) -> Result<(String, [f64; 4]), (&'static str, String)> {
    let serial = record.get(index[0]).unwrap_or("");
    crate::station::limits::check_serial(serial).map_err(|m| ("serial", m))?;
    let mut values = [0.0; 4];
    for (k, value) in values.iter_mut().enumerate() {
        let field = COLUMNS[k + 1];
        let text = record
            .get(index[k + 1])
            .ok_or((field, "missing value (row too short)".to_string()))?;
        let x: f64 = text
            .parse()
            .map_err(|_| (field, format!("'{text}' is not a number")))?;
        if !x.is_finite() {
            return Err((field, format!("'{text}' is not finite")));
        }
        let check = if k == 0 {
            crate::station::limits::check_temperature_c(x)
        } else {
            crate::station::limits::check_reading(x)
        };
        check.map_err(|m| (field, m))?;
        *value = x;
    }
    Ok((serial.to_string(), values))
}

/// Writes rows as a chamber CSV (columns in [`COLUMNS`] order, shortest
/// round-trip floats, quoted by `csv::Writer` where a field needs it), the
/// same bytes for the same rows.
pub fn to_csv_bytes(rows: &[ChamberRow]) -> Vec<u8> {
    let mut w = csv::WriterBuilder::new()
        .terminator(csv::Terminator::Any(b'\n'))
        .from_writer(Vec::with_capacity(64 * (rows.len() + 1)));
    // Writing into a Vec cannot fail; a failure would be a csv bug, and the
    // rows written so far are still returned.
    let _ = w.write_record(COLUMNS);
    for r in rows {
        let _ = w.write_record([
            r.serial.as_str(),
            &fmt_f64(r.chamber_c),
            &fmt_f64(r.stimulus),
            &fmt_f64(r.output),
            &fmt_f64(r.temp_signal),
        ]);
    }
    w.into_inner().unwrap_or_default()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn columns_in_any_order_and_extra_columns_are_ignored() {
        let csv = "note, temp_signal,output,stimulus,chamber_c,serial\n\
                   x,1000.5,0.001,5,25,A1\n\
                   y,1001,0.002,10,25,A1\n";
        let data = read_bytes("t.csv", csv.as_bytes()).unwrap();
        assert!(data.errors.is_empty(), "{:?}", data.errors);
        assert_eq!(data.rows.len(), 2);
        let r = &data.rows[0];
        assert_eq!(
            (
                r.serial.as_str(),
                r.chamber_c,
                r.stimulus,
                r.output,
                r.temp_signal,
                r.line
            ),
            ("A1", 25.0, 5.0, 0.001, 1000.5, 2)
        );
    }

    #[test]
    fn bad_rows_name_line_and_field_and_do_not_stop_others() {
        // (csv body after the header, expected line, expected field)
        let table = [
            ("A,25,0,abc,1000\nB,25,0,1,1000\n", 2, "output"),
            ("B,25,0,1,1000\nA,hot,0,1,1000\n", 3, "chamber_c"),
            ("B,25,0,1,1000\n,25,0,1,1000\n", 3, "serial"),
            ("B,25,0,1,1000\nA,25,0,1\n", 3, "temp_signal"),
            ("B,25,0,1,1000\nA,25,inf,1,1000\n", 3, "stimulus"),
        ];
        for (body, line, field) in table {
            let csv = format!("serial,chamber_c,stimulus,output,temp_signal\n{body}");
            let data = read_bytes("lot.csv", csv.as_bytes()).unwrap();
            assert_eq!(data.rows.len(), 1, "body {body:?}: good row must survive");
            assert_eq!(data.errors.len(), 1, "body {body:?}");
            let e = &data.errors[0];
            assert_eq!(
                (e.line, e.field.as_str()),
                (line, field),
                "body {body:?}: {e}"
            );
            assert!(
                e.to_string()
                    .starts_with(&format!("lot.csv:{line}: field '{field}'"))
            );
        }
    }

    #[test]
    fn missing_column_is_fatal_and_named() {
        let err = read_bytes("x.csv", b"serial,chamber_c,stimulus,output\nA,1,2,3\n").unwrap_err();
        assert_eq!(
            err.to_string(),
            "x.csv:1: field 'temp_signal': required column missing from the header"
        );
    }

    #[test]
    fn write_then_read_round_trips() {
        let rows: Vec<ChamberRow> = (0..4)
            .map(|k| ChamberRow {
                serial: format!("S{k}"),
                chamber_c: -20.0 + 35.0 * k as f64,
                stimulus: k as f64 / 3.0,
                output: 1e-3 * (k as f64 + 0.1),
                temp_signal: 4321.123456789 + k as f64,
                line: k + 2,
            })
            .collect();
        let bytes = to_csv_bytes(&rows);
        assert!(bytes.starts_with(b"serial,chamber_c,stimulus,output,temp_signal\nS0,-20,0,"));
        let back = read_bytes("rt.csv", &bytes).unwrap();
        assert_eq!(back.rows, rows);
        assert_eq!(to_csv_bytes(&back.rows), bytes);
        assert_eq!(back.by_serial().len(), 4);
    }
}
