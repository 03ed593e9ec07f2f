//! The part file: everything the station learned about one part, written by
//! `calibrate` and read by `table`, `verify`, `apply` and `plot`.
//!
//! JSON, fields in declaration order, floats in shortest round-trip form:
//! the same fit gives the same bytes. Non-finite numbers (the covariance of an
//! ill-conditioned fit) are written as `null`.

use crate::station::design::basis::Family;
use crate::station::design::model::{DesignCore, FamilyFit};
use crate::station::output::to_json_bytes;
use crate::station::part_model::PartParams;
use crate::station::polynomial::PolyCal;
use crate::station::scenario::Scenario;
use std::path::Path;

/// Format tag written into every part file.
pub const PART_FORMAT: &str = "semidrift-part/1";

/// One calibration point as the fit saw it.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct FitPoint {
    /// Chamber set point, C.
    pub chamber_c: f64,
    /// Applied stimulus.
    pub stimulus: f64,
    /// Raw output.
    pub output: f64,
    /// Raw temperature signal.
    pub temp_signal: f64,
    /// Temperature the fitted thermometer reads from `temp_signal`, C.
    pub t_est_c: f64,
    /// Thermometer residual (reading minus chamber), K.
    pub thermometer_residual_k: f64,
    /// Output residual (data minus fit), ppm of span.
    pub residual_ppm: f64,
}

impl FitPoint {
    /// The point of chamber row `r` where the thermometer reads `t_est_c`
    /// and the output fit leaves `residual_ppm`.
    pub fn of(r: &crate::station::chamber::ChamberRow, t_est_c: f64, residual_ppm: f64) -> Self {
        FitPoint {
            chamber_c: r.chamber_c,
            stimulus: r.stimulus,
            output: r.output,
            temp_signal: r.temp_signal,
            t_est_c,
            thermometer_residual_k: t_est_c - r.chamber_c,
            residual_ppm,
        }
    }
}

/// One leave-one-temperature-out refit, judged at the temperature left out
/// (see [`crate::station::calibrate::cross_validate`]).
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct HoldOut {
    /// The chamber temperature left out, C.
    pub chamber_c: f64,
    /// Whether it lies strictly inside the calibrated span (interpolation;
    /// the end temperatures are extrapolations of the reduced fit).
    pub interior: bool,
    /// Worst |error| of the refitted part at that temperature, ppm of span
    /// (`null` when the refit failed).
    #[serde(with = "nan_as_null")]
    pub max_error_ppm: f64,
    /// Worst |thermometer error| of the refitted part there, K.
    #[serde(with = "nan_as_null")]
    pub thermometer_error_k: f64,
}

/// Writes NaN as `null` and reads `null` back as NaN.
mod nan_as_null {
    /// Serializes a float, NaN or infinite as `null`.
    pub fn serialize<S: serde::Serializer>(x: &f64, s: S) -> Result<S::Ok, S::Error> {
        if x.is_finite() {
            s.serialize_f64(*x)
        } else {
            s.serialize_none()
        }
    }
    /// Deserializes a float or `null` (as NaN).
    pub fn deserialize<'de, D: serde::Deserializer<'de>>(d: D) -> Result<f64, D::Error> {
        let v: Option<f64> = serde::Deserialize::deserialize(d)?;
        Ok(v.unwrap_or(f64::NAN))
    }
}

/// Reads a float, or `null` (how an infinite value is written) as +infinity.
fn null_as_infinity<'de, D: serde::Deserializer<'de>>(d: D) -> Result<f64, D::Error> {
    let v: Option<f64> = serde::Deserialize::deserialize(d)?;
    Ok(v.unwrap_or(f64::INFINITY))
}

/// The outcome of one part's calibration.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct PartFile {
    /// Always [`PART_FORMAT`].
    pub format: String,
    /// Serial number.
    pub serial: String,
    /// `ok`, or why the fit must not be used (ill-conditioned, too few points).
    pub status: String,
    /// The element and lot description the part was fitted with.
    pub scenario: Scenario,
    /// Fitted parameters of the physics model (absent for a part fitted on
    /// a design, whose coefficients are in `design`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub params: Option<PartParams>,
    /// Parameter names in covariance order.
    pub param_names: Vec<String>,
    /// One-sigma standard errors.
    pub std_errors: Vec<Option<f64>>,
    /// Covariance matrix (thermometer and output blocks; the blocks are fitted
    /// separately, so the cross terms are zero).
    pub covariance: Vec<Vec<Option<f64>>>,
    /// Largest condition number of the two fits' scaled Jacobians (written
    /// as `null` when infinite: a singular fit, always rejected).
    #[serde(deserialize_with = "null_as_infinity")]
    pub condition: f64,
    /// Thermometer residual rms, K.
    pub thermometer_rms_k: f64,
    /// Largest thermometer residual, K.
    pub thermometer_max_k: f64,
    /// Temperature-signal noise referred to temperature at T_ref, K (one sigma).
    pub signal_noise_k: f64,
    // Documented fields read alike (design/model.rs, fitting/curves.rs); each is its own.
    /// Output residual rms, ppm of span.
    pub fit_rms_ppm: f64,
    /// Largest output residual, ppm of span.
    pub fit_max_ppm: f64,
    /// The points and their residuals.
    pub points: Vec<FitPoint>,
    /// The usual-practice polynomial through the same points (for comparison).
    pub polynomial: Option<PolyCal>,
    /// Worst error at an interior left-out calibration temperature, ppm of
    /// span: the estimate of model error between chamber points that `table`
    /// and `verify` count in the fit residual term (absent in part files
    /// written before cross-validation existed).
    #[serde(default)]
    pub holdout_max_ppm: Option<f64>,
    /// Worst thermometer error at an interior left-out temperature, K.
    #[serde(default)]
    pub holdout_thermometer_max_k: Option<f64>,
    /// Every leave-one-temperature-out refit, ascending in temperature.
    #[serde(default)]
    pub holdouts: Vec<HoldOut>,
    /// Where the model error between chamber temperatures comes from, or
    /// that it has not been measured.
    #[serde(default)]
    pub model_error: String,
    /// The design the part was fitted on (absent: physics-only fit).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub design: Option<PartDesign>,
}

/// A part's fit on a design.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct PartDesign {
    /// Content hash of the design file (see `station::design::file`).
    pub design_hash: String,
    /// The design's production-plan model error inside the operating range,
    /// ppm of span: budgeted as the fit residual term.
    pub model_error_ppm: f64,
    /// Largest distance of a coefficient from the qualification lot's mean,
    /// in lot standard deviations.
    pub outlier_sigma: f64,
    /// The design's curves (so that the part file alone evaluates the part).
    pub core: DesignCore,
    /// The part's coefficients per family.
    pub fit: Vec<FamilyFit>,
}

/// Why a part file could not be read.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum PartFileError {
    /// The file could not be read.
    #[error("{file}: cannot read: {message}")]
    Io {
        /// File name.
        file: String,
        /// Underlying error.
        message: String,
    },
    /// The JSON is malformed or a field is missing or wrong.
    #[error("{file}:{line}: field '{field}': {message}")]
    Parse {
        /// File name.
        file: String,
        /// Line of the error.
        line: usize,
        /// Field (JSON path as far as known).
        field: String,
        /// What is wrong.
        message: String,
    },
}

/// Converts a float to `Some` only when finite.
pub fn finite(x: f64) -> Option<f64> {
    x.is_finite().then_some(x)
}

impl PartFile {
    /// Whether the fit may be used for a table.
    pub fn is_ok(&self) -> bool {
        self.status == "ok"
    }

    /// The file's bytes.
    pub fn to_bytes(&self) -> Vec<u8> {
        to_json_bytes(self)
    }

    /// Reads a part file.
    pub fn read(path: &Path) -> Result<PartFile, PartFileError> {
        let file = path.display().to_string();
        let text = crate::station::limits::read_text_capped(
            path,
            crate::station::limits::MAX_JSON_BYTES,
            "part file",
        )
        .map_err(|message| PartFileError::Io {
            file: file.clone(),
            message,
        })?;
        Self::parse(&file, &text)
    }

    /// Parses a part file's text; `file` names it in messages.
    pub fn parse(file: &str, text: &str) -> Result<PartFile, PartFileError> {
        // Same serde error-to-field mapping as design/file.rs; each file type has its own error.
        let part: PartFile = serde_json::from_str(text).map_err(|e| {
            let message = e.to_string();
            let field = crate::station::limits::json_error_field(&message);
            PartFileError::Parse {
                file: file.to_string(),
                line: e.line(),
                field,
                message,
            }
        })?;
        // The first line that names `key`, for messages (1 when none does).
        let line_of = |key: &str| {
            text.lines()
                .position(|l| l.contains(&format!("\"{key}\"")))
                .map_or(1, |k| k + 1)
        };
        let families_ok = part.design.as_ref().is_none_or(|d| {
            d.core.families.len() == 4
                && d.fit.len() == 4
                && d.fit
                    .iter()
                    .zip(Family::ALL)
                    .all(|(f, want)| f.family == want && !f.values.is_empty())
                && d.core.families.iter().enumerate().all(|(k, f)| {
                    f.family.index() == k
                        && f.mean.len() == d.core.basis.len(f.family)
                        && f.modes.iter().all(|m| m.len() == f.mean.len())
                })
        });
        if part.params.is_none() && part.design.is_none() || !families_ok {
            let line = line_of("design");
            return Err(PartFileError::Parse {
                file: file.to_string(),
                line,
                field: if part.design.is_none() {
                    "params"
                } else {
                    "design"
                }
                .into(),
                message: "neither physics parameters nor a complete design fit".into(),
            });
        }
        if part.format != PART_FORMAT {
            let line = line_of("format");
            return Err(PartFileError::Parse {
                file: file.to_string(),
                line,
                field: "format".into(),
                message: format!("expected \"{PART_FORMAT}\", found \"{}\"", part.format),
            });
        }
        Ok(part)
    }
}
