//! The design file `semidrift qualify` writes: JSON, fields in declaration
//! order, floats in shortest round-trip form, ending in a SHA-256 content
//! hash over the file with the hash itself blank. A part calibrated on the
//! design records that hash; an edited design file no longer matches it and
//! is refused.

use super::super::output::to_json_bytes;
use super::super::scenario::{ElementKind, Scenario};
use super::learn::{Learned, Movement, PlanError};
use super::model::DesignCore;
use sha2::{Digest, Sha256};
use std::path::Path;

/// Format tag of design files.
pub const DESIGN_FORMAT: &str = "semidrift-design/1";

/// Where the qualification data came from.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct QualificationSummary {
    // Plain documented structs read alike (stationdb/figures.rs, remainder.rs); each is its own.
    /// The qualification CSV as given.
    pub file: String,
    /// Parts learned from.
    pub parts: usize,
    /// Their serials.
    pub serials: Vec<String>,
    /// Chamber temperatures, C.
    pub temps_c: Vec<f64>,
    /// Stimuli.
    pub stimuli: Vec<f64>,
}

/// Limits a production part's coefficients and residual are held to.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct OutlierLimits {
    /// Largest |coefficient - lot mean| in lot standard deviations.
    pub max_sigma: f64,
    /// Largest production-fit residual, ppm of span.
    pub max_residual_ppm: f64,
}

/// A learned design.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct DesignFile {
    /// Always [`DESIGN_FORMAT`].
    pub format: String,
    /// Element kind of the design.
    pub kind: ElementKind,
    /// Scenario name.
    pub scenario: String,
    /// Hash of the scenario fields that define the element ([`element_hash`]).
    pub element_hash: String,
    /// The curves a part is fitted on.
    pub core: DesignCore,
    /// Model error of the production plan (leave-one-part-out).
    pub plan_error: PlanError,
    /// How far the data moved each family's mean curve from the physics.
    pub movement: Vec<Movement>,
    /// Outlier limits for production parts.
    pub outlier: OutlierLimits,
    /// The qualification lot.
    pub qualification: QualificationSummary,
    /// SHA-256 of this file with this field empty, hex.
    pub hash: String,
}

/// Why a design file cannot be used.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum DesignFileError {
    /// Unreadable.
    #[error("{file}: cannot read: {message}")]
    Io {
        /// File.
        file: String,
        /// Why.
        message: String,
    },
    /// Malformed or inconsistent.
    #[error("{file}:{line}: field '{field}': {message}")]
    Field {
        /// File.
        file: String,
        /// Line.
        line: usize,
        /// Field.
        field: String,
        /// Why.
        message: String,
    },
}

/// The fields of a scenario that define its element (die, doping, range,
/// stimulus, excitation, ADCs), hashed: two scenarios with the same hash
/// describe the same design whatever their lot spread or chamber plans.
pub fn element_hash(s: &Scenario) -> String {
    let key = serde_json::json!({
        "name": s.name,
        "kind": s.kind,
        "sample": s.sample,
        "t_ref_c": s.t_ref_c,
        "stimulus_fs": s.stimulus_fs,
        "stimulus_unit": s.stimulus_unit,
        "excitation": s.excitation,
        "resistance_ohm": s.resistance_ohm,
        "fs_effect": s.fs_effect,
    });
    hex(&Sha256::digest(key.to_string().as_bytes()))[..16].to_string()
}

fn hex(bytes: &[u8]) -> String {
    bytes.iter().map(|b| format!("{b:02x}")).collect()
}

impl DesignFile {
    /// A design file from what a qualification lot gave.
    pub fn new(
        scenario: &Scenario,
        learned: Learned,
        qual_file: &str,
        outlier: OutlierLimits,
    ) -> DesignFile {
        let mut d = DesignFile {
            format: DESIGN_FORMAT.into(),
            kind: scenario.kind,
            scenario: scenario.name.clone(),
            element_hash: element_hash(scenario),
            core: learned.core,
            plan_error: learned.plan_error,
            movement: learned.movement,
            outlier,
            qualification: QualificationSummary {
                file: qual_file.into(),
                parts: learned.serials.len(),
                serials: learned.serials,
                temps_c: learned.temps_c,
                stimuli: learned.stimuli,
            },
            hash: String::new(),
        };
        d.hash = d.content_hash();
        d
    }

    /// SHA-256 of the file's bytes with `hash` blank.
    pub fn content_hash(&self) -> String {
        let blank = DesignFile {
            hash: String::new(),
            ..self.clone()
        };
        hex(&Sha256::digest(to_json_bytes(&blank)))
    }

    /// The file's bytes.
    pub fn to_bytes(&self) -> Vec<u8> {
        to_json_bytes(self)
    }

    /// Reads and checks a design file (format and content hash).
    pub fn read(path: &Path) -> Result<DesignFile, DesignFileError> {
        let file = path.display().to_string();
        let limits = crate::station::limits::MAX_JSON_BYTES;
        let text = crate::station::limits::read_text_capped(path, limits, "design file").map_err(
            |message| DesignFileError::Io {
                file: file.clone(),
                message,
            },
        )?;
        Self::parse(&file, &text)
    }

    /// Parses and checks a design file's text; `file` names it in messages.
    pub fn parse(file: &str, text: &str) -> Result<DesignFile, DesignFileError> {
        let line_of = |key: &str| {
            text.lines()
                .position(|l| l.trim_start().starts_with(&format!("\"{key}\"")))
                .map_or(1, |k| k + 1)
        };
        let d: DesignFile = serde_json::from_str(text).map_err(|e| {
            let message = e.to_string();
            let field = crate::station::limits::json_error_field(&message);
            DesignFileError::Field {
                file: file.into(),
                line: e.line(),
                field,
                message,
            }
        })?;
        if d.format != DESIGN_FORMAT {
            return Err(DesignFileError::Field {
                file: file.into(),
                line: line_of("format"),
                field: "format".into(),
                message: format!("expected \"{DESIGN_FORMAT}\", found \"{}\"", d.format),
            });
        }
        let h = d.content_hash();
        if h != d.hash {
            return Err(DesignFileError::Field {
                file: file.into(),
                line: line_of("hash"),
                field: "hash".into(),
                message: format!(
                    "content hash mismatch: the file was edited after qualification (recorded {}, content {h})",
                    d.hash
                ),
            });
        }
        let shape_ok = d.core.families.len() == 4
            && d.core.families.iter().enumerate().all(|(k, f)| {
                f.family.index() == k
                    && f.mean.len() == d.core.basis.len(f.family)
                    && f.modes.iter().all(|m| m.len() == f.mean.len())
                    && (f.modes_used <= f.modes.len() || f.modes_used == super::model::ALL_MODES)
            });
        if !shape_ok {
            return Err(DesignFileError::Field {
                file: file.into(),
                line: line_of("core"),
                field: "core".into(),
                message: "curve weights do not match the basis".into(),
            });
        }
        Ok(d)
    }

    /// Reads a design file and checks that it was learned for `scenario`'s
    /// element ([`DesignFile::read`], then [`DesignFile::check_scenario`]).
    pub fn read_for(path: &Path, scenario: &Scenario) -> Result<DesignFile, DesignFileError> {
        let d = DesignFile::read(path)?;
        d.check_scenario(&path.display().to_string(), scenario)?;
        Ok(d)
    }

    /// Checks that `scenario` describes this design's element.
    pub fn check_scenario(&self, file: &str, scenario: &Scenario) -> Result<(), DesignFileError> {
        let err = |field: &str, message: String| DesignFileError::Field {
            file: file.into(),
            line: 1,
            field: field.into(),
            message,
        };
        if self.kind != scenario.kind {
            return Err(err(
                "kind",
                format!(
                    "design of a {:?} element, scenario '{}' is a {:?}",
                    self.kind, scenario.name, scenario.kind
                ),
            ));
        }
        if self.scenario != scenario.name || self.element_hash != element_hash(scenario) {
            return Err(err(
                "element_hash",
                format!(
                    "design qualified for scenario '{}' (element {}), given scenario '{}' (element {})",
                    self.scenario,
                    self.element_hash,
                    scenario.name,
                    element_hash(scenario)
                ),
            ));
        }
        Ok(())
    }
}
