//! The lot report's figures read back from a demo folder (one scenario's
//! folder as `semidrift demo` writes it), so that a report can be made
//! from the files alone: the same figures, hence the same report bytes, as
//! the demo's own `report.html` for that folder.
//!
//! Layout read (every name relative to the folder):
//! - `scenario.toml` (required): name, budget, operating range, simulated;
//! - `parts/*.part.json` (required, one or more): every fitted part;
//! - `design.json`: the design the parts were fitted on (required when a
//!   part records one, and must be that design);
//! - `tables/SERIAL.bin` and `verify/SERIAL.json`: a part's image and its
//!   verification report; `tables/SERIAL.error.txt`: why no table could be
//!   built (the rejection's reason);
//! - `chamber-check.csv`: held-out rows; each image's end-of-line check is
//!   recomputed from them with the image, as the demo computes it;
//! - `chamber-calibration.csv`: its SHA-256 is shown.
//!
//! A part with neither an image nor a table error, or with an image and no
//! verification report, is shown as `calibrated` (not through every check).

use super::{VerifyFacts, lot_name, part_figures, rejected_figures};
use crate::station::chamber::{self, ChamberData};
use crate::station::curves::ShapeCurves;
use crate::station::design::DesignFile;
use crate::station::limits::{
    MAX_CSV_BYTES, MAX_IMAGE_BYTES, MAX_JSON_BYTES, MAX_SIMULATED_PARTS, read_capped,
    read_text_capped,
};
use crate::station::model_shapes::shapes_for;
use crate::station::part_file::PartFile;
use crate::station::scenario::Scenario;
use crate::stationdb::figures::{DesignFigures, LotFigures, PartFigures, cautions};
use crate::stationdb::record::{image_crc, sha256_hex};
use crate::stationdb::run::eol_check;
use std::path::{Path, PathBuf};

/// Why a folder could not be read: names the file, and the line and field
/// where there is one.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum FolderError {
    /// A file or folder could not be read, or is missing.
    #[error("{file}: {message}")]
    File {
        /// The file or folder.
        file: String,
        /// What went wrong.
        message: String,
    },
    /// A file the station's own readers refused (their message names the
    /// file, line and field).
    #[error("{0}")]
    Refused(String),
    // Same Field variant as design/file.rs's error: each file kind has its own error type.
    /// A value in a file is wrong.
    #[error("{file}:{line}: field '{field}': {message}")]
    Field {
        /// The file.
        file: String,
        /// Line (1-based).
        line: usize,
        /// Field name.
        field: String,
        /// What is wrong.
        message: String,
    },
}

fn file_error(path: &Path, message: impl Into<String>) -> FolderError {
    FolderError::File {
        file: path.display().to_string(),
        message: message.into(),
    }
}

/// An error of a reader whose message names the file already.
fn refused(e: impl std::fmt::Display) -> FolderError {
    FolderError::Refused(e.to_string())
}

/// The 1-based line of the first line of `text` containing `"key"`, 1 if none.
fn line_of(text: &str, key: &str) -> usize {
    let quoted = format!("\"{key}\"");
    text.lines()
        .position(|l| l.contains(&quoted))
        .map_or(1, |k| k + 1)
}

/// The part files of `parts/`, in name order, at most
/// [`MAX_SIMULATED_PARTS`].
fn part_paths(dir: &Path) -> Result<Vec<PathBuf>, FolderError> {
    let parts_dir = dir.join("parts");
    let entries = std::fs::read_dir(&parts_dir).map_err(|e| {
        file_error(
            &parts_dir,
            format!("{e} (a demo folder has its part files in parts/)"),
        )
    })?;
    let mut paths = Vec::new();
    for entry in entries {
        let path = entry
            .map_err(|e| file_error(&parts_dir, e.to_string()))?
            .path();
        if path
            .file_name()
            .and_then(|n| n.to_str())
            .is_some_and(|n| n.ends_with(".part.json"))
        {
            if paths.len() == MAX_SIMULATED_PARTS {
                return Err(file_error(
                    &parts_dir,
                    format!("more than {MAX_SIMULATED_PARTS} part files"),
                ));
            }
            paths.push(path);
        }
    }
    if paths.is_empty() {
        return Err(file_error(
            &parts_dir,
            "no *.part.json file: no part to report",
        ));
    }
    paths.sort();
    Ok(paths)
}

/// Reads a verification report and checks that it is of this part and this
/// image.
fn read_verify(path: &Path, part: &PartFile, image: &[u8]) -> Result<VerifyFacts, FolderError> {
    let text = read_text_capped(path, MAX_JSON_BYTES, "verification report")
        .map_err(|m| file_error(path, m))?;
    let field = |key: &str, message: String| FolderError::Field {
        file: path.display().to_string(),
        line: line_of(&text, key),
        field: key.to_string(),
        message,
    };
    #[derive(serde::Deserialize)]
    struct Header {
        serial: String,
        bytes: usize,
    }
    let header: Header = serde_json::from_str(&text).map_err(|e| FolderError::Field {
        file: path.display().to_string(),
        line: e.line().max(1),
        field: crate::station::limits::json_error_field(&e.to_string()),
        message: e.to_string(),
    })?;
    if header.serial != part.serial {
        return Err(field(
            "serial",
            format!("report of part {}, not of {}", header.serial, part.serial),
        ));
    }
    if header.bytes != image.len() {
        return Err(field(
            "bytes",
            format!(
                "report of a {}-byte image; the part's image has {} bytes",
                header.bytes,
                image.len()
            ),
        ));
    }
    serde_json::from_str(&text).map_err(|e| FolderError::Field {
        file: path.display().to_string(),
        line: e.line().max(1),
        field: crate::station::limits::json_error_field(&e.to_string()),
        message: e.to_string(),
    })
}

/// The design of the folder's parts (`design.json`), checked against the
/// scenario and every part that records one.
fn read_design(
    dir: &Path,
    scenario: &Scenario,
    parts: &[(PathBuf, PartFile)],
) -> Result<Option<DesignFile>, FolderError> {
    let path = dir.join("design.json");
    let design = if path.exists() {
        Some(DesignFile::read_for(&path, scenario).map_err(refused)?)
    } else {
        None
    };
    for (part_path, part) in parts {
        let Some(pd) = &part.design else { continue };
        let located = |message: String| {
            let text = read_text_capped(part_path, MAX_JSON_BYTES, "part file").unwrap_or_default();
            FolderError::Field {
                file: part_path.display().to_string(),
                line: line_of(&text, "design_hash"),
                field: "design.design_hash".to_string(),
                message,
            }
        };
        match &design {
            Some(d) if d.hash == pd.design_hash => {}
            Some(d) => {
                return Err(located(format!(
                    "part fitted on design {}, the folder's design.json is {}",
                    pd.design_hash, d.hash
                )));
            }
            None => {
                return Err(located(format!(
                    "part fitted on design {}, and the folder has no design.json",
                    pd.design_hash
                )));
            }
        }
    }
    Ok(design)
}

/// The held-out rows, when the folder has them; a CSV with a bad row is
/// refused (a report must not leave rows out silently).
fn read_check(dir: &Path) -> Result<Option<ChamberData>, FolderError> {
    let path = dir.join("chamber-check.csv");
    if !path.exists() {
        return Ok(None);
    }
    let data = chamber::read_file(&path).map_err(refused)?;
    if let Some(e) = data.errors.first() {
        return Err(file_error(
            &path,
            format!("{} bad row(s), first: {e}", data.errors.len()),
        ));
    }
    Ok(Some(data))
}

/// The figures of the lot report of the demo folder `dir` (one scenario's
/// folder), under the lot name `lot` or the demo's own.
pub fn lot_figures(dir: &Path, lot: Option<&str>) -> Result<LotFigures, FolderError> {
    let scenario_path = dir.join("scenario.toml");
    if !scenario_path.is_file() {
        return Err(file_error(
            &scenario_path,
            "missing: a demo folder has its scenario in scenario.toml",
        ));
    }
    let scenario =
        crate::station::spec::load(&scenario_path.display().to_string()).map_err(refused)?;
    let mut parts = Vec::new();
    for path in part_paths(dir)? {
        let part = PartFile::read(&path).map_err(refused)?;
        parts.push((path, part));
    }
    let design = read_design(dir, &scenario, &parts)?;
    let check = read_check(dir)?;
    let groups = check
        .as_ref()
        .map(ChamberData::by_serial)
        .unwrap_or_default();
    let mut curves: Option<ShapeCurves> = None;
    let mut figures: Vec<PartFigures> = Vec::with_capacity(parts.len());
    for (_, part) in &parts {
        if !part.is_ok() {
            figures.push(rejected_figures(part, "fit", &part.status));
            continue;
        }
        let file = |folder: &str, ext: &str| {
            crate::station::output::path_in(&dir.join(folder), &format!("{}.{ext}", part.serial))
                .map_err(|e| file_error(dir, e.to_string()))
        };
        let error_path = file("tables", "error.txt")?;
        let image_path = file("tables", "bin")?;
        if error_path.exists() && !image_path.exists() {
            let reason = read_text_capped(&error_path, MAX_JSON_BYTES, "table error")
                .map_err(|m| file_error(&error_path, m))?;
            figures.push(rejected_figures(
                part,
                "table",
                reason.trim_end_matches('\n'),
            ));
            continue;
        }
        if !image_path.exists() {
            figures.push(calibrated_figures(part, None));
            continue;
        }
        let image = read_capped(&image_path, MAX_IMAGE_BYTES, "table image")
            .map_err(|m| file_error(&image_path, m))?;
        let verify_path = file("verify", "json")?;
        if !verify_path.exists() {
            figures.push(calibrated_figures(part, Some(&image)));
            continue;
        }
        let v = read_verify(&verify_path, part, &image)?;
        let eol = match groups.get(part.serial.as_str()) {
            Some(rows) => {
                if curves.is_none() {
                    curves = Some(
                        shapes_for(&scenario)
                            .map_err(|e| file_error(&scenario_path, format!("full model: {e}")))?,
                    );
                }
                let c = curves
                    .as_ref()
                    .ok_or_else(|| file_error(&scenario_path, "full model"))?;
                Some(
                    eol_check(part, c, &image, rows, scenario.budget_ppm)
                        .map_err(|m| file_error(&image_path, m))?,
                )
            }
            None => None,
        };
        figures.push(part_figures(part, &image, &v, eol.as_ref()));
    }
    figures.sort_by(|a, b| a.serial.cmp(&b.serial));
    let calibration = dir.join("chamber-calibration.csv");
    let calibration_sha256 = if calibration.exists() {
        let bytes = read_capped(&calibration, MAX_CSV_BYTES, "chamber CSV")
            .map_err(|m| file_error(&calibration, m))?;
        Some(sha256_hex(&bytes))
    } else {
        None
    };
    Ok(LotFigures {
        lot: lot.map_or_else(|| lot_name(&scenario), str::to_string),
        scenario: scenario.name.clone(),
        simulated: scenario.simulated,
        cautions: cautions(scenario.simulated),
        budget_ppm: scenario.budget_ppm,
        range_c: scenario.range_c,
        design: design.map(|d| DesignFigures {
            hash: d.hash.clone(),
            qualification_parts: Some(d.qualification.parts),
            model_error_ppm: Some(d.plan_error.operating_range_ppm),
        }),
        calibration_sha256,
        parts: figures,
    })
}

/// A fitted part not through every check: no image, or an image not verified.
fn calibrated_figures(part: &PartFile, image: Option<&[u8]>) -> PartFigures {
    PartFigures {
        serial: part.serial.clone(),
        state: "calibrated".to_string(),
        fit_rms_ppm: part.fit_rms_ppm.is_finite().then_some(part.fit_rms_ppm),
        image_bytes: image.map(|i| i.len() as i64),
        image_crc32: image.map(|i| format!("{:08x}", image_crc(i))),
        verify_max_ppm: None,
        allowance_ppm: None,
        eol_max_ppm: None,
        terms: None,
        envelope: Vec::new(),
        reject: None,
    }
}
