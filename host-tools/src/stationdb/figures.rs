//! What the HTML lot report shows, gathered from the database or from the
//! demo's own results: plain data and the arithmetic on it (yield, error
//! envelope, histogram, worst budget terms, outliers), no drawing.

use super::query::{LotInfo, PartRecord, Terms};

/// One part in the report.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct PartFigures {
    /// Serial.
    pub serial: String,
    /// `released`, `passed`, `rejected` or `calibrated`.
    pub state: String,
    /// Fit RMS residual, ppm of span.
    pub fit_rms_ppm: Option<f64>,
    /// Image size, bytes.
    pub image_bytes: Option<i64>,
    /// Image CRC-32, hex.
    pub image_crc32: Option<String>,
    /// Dense table error of the verification, ppm of span.
    pub verify_max_ppm: Option<f64>,
    /// Table allowance, ppm of span.
    pub allowance_ppm: Option<f64>,
    /// End-of-line worst error, ppm of span.
    pub eol_max_ppm: Option<f64>,
    /// Budget terms of the verification.
    pub terms: Option<Terms>,
    /// End-of-line envelope: [t_c, least, greatest error ppm].
    pub envelope: Vec<[f64; 3]>,
    /// Rejection: (stage, reason).
    pub reject: Option<(String, String)>,
}

impl PartFigures {
    /// The part's worst error: the end-of-line check's when there is one
    /// (against the part itself), else the verification's (against its fit).
    pub fn worst_ppm(&self) -> Option<f64> {
        self.eol_max_ppm.or(self.verify_max_ppm)
    }
}

/// The design a lot was fitted on.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct DesignFigures {
    /// Content hash.
    pub hash: String,
    /// Parts of its qualification lot.
    pub qualification_parts: Option<usize>,
    /// Model error of the production plan inside the operating range, ppm.
    pub model_error_ppm: Option<f64>,
}

/// Everything the lot report shows.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct LotFigures {
    /// Lot name.
    pub lot: String,
    /// Scenario name.
    pub scenario: String,
    /// Invented data.
    pub simulated: bool,
    /// The cautions that go with the figures.
    pub cautions: Vec<String>,
    /// Budget, ppm of span.
    pub budget_ppm: f64,
    /// Operating range, C.
    pub range_c: (f64, f64),
    /// Design used, if any.
    pub design: Option<DesignFigures>,
    /// Calibration CSV content hash.
    pub calibration_sha256: Option<String>,
    /// Parts, in serial order.
    pub parts: Vec<PartFigures>,
}

/// Counts of the yield figure.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
pub struct YieldCounts {
    /// Parts recorded.
    pub parts: usize,
    /// Fitted.
    pub fitted: usize,
    /// Image verified within its allowance.
    pub verified: usize,
    /// End-of-line check passed.
    pub eol_passed: usize,
    /// Released for flashing.
    pub released: usize,
    /// Rejected at any stage.
    pub rejected: usize,
}

impl LotFigures {
    /// Builds the figures of a recorded lot.
    pub fn from_records(
        info: &LotInfo,
        parts: &[PartRecord],
        design: Option<DesignFigures>,
    ) -> Self {
        let scenario = crate::station::spec::parse_text("lot scenario", &info.scenario_toml).ok();
        LotFigures {
            lot: info.name.clone(),
            scenario: info.scenario_name.clone(),
            simulated: info.simulated,
            cautions: cautions(info.simulated),
            budget_ppm: info.budget_ppm,
            range_c: scenario.map_or((f64::NAN, f64::NAN), |s| s.range_c),
            design,
            calibration_sha256: info.calibration_sha256.clone(),
            parts: parts
                .iter()
                .map(|p| PartFigures {
                    serial: p.serial.clone(),
                    state: p.state.clone(),
                    fit_rms_ppm: p.fit_rms_ppm,
                    image_bytes: p.image_bytes,
                    image_crc32: p.image_crc32.clone(),
                    verify_max_ppm: p.verify_max_ppm,
                    allowance_ppm: p.allowance_ppm,
                    eol_max_ppm: p.eol_max_ppm,
                    terms: p.terms,
                    envelope: p.envelope.clone(),
                    reject: p.reject_stage.clone().zip(p.reject_reason.clone()),
                })
                .collect(),
        }
    }

    /// The yield counts.
    pub fn yield_counts(&self) -> YieldCounts {
        let n = |f: &dyn Fn(&PartFigures) -> bool| self.parts.iter().filter(|p| f(p)).count();
        YieldCounts {
            parts: self.parts.len(),
            fitted: n(&|p| p.reject.as_ref().is_none_or(|r| r.0 != "fit")),
            verified: n(&|p| {
                p.verify_max_ppm
                    .zip(p.allowance_ppm)
                    .is_some_and(|(m, a)| m <= a)
            }),
            eol_passed: n(&|p| p.eol_max_ppm.is_some() && p.reject.is_none()),
            released: n(&|p| p.state == "released"),
            rejected: n(&|p| p.reject.is_some()),
        }
    }

    /// Per end-of-line temperature over the lot: [t_c, least, greatest
    /// error ppm], ascending temperature.
    pub fn envelope(&self) -> Vec<[f64; 3]> {
        let mut all: Vec<[f64; 3]> = Vec::new();
        for p in &self.parts {
            for e in &p.envelope {
                match all.iter_mut().find(|a| a[0] == e[0]) {
                    Some(a) => {
                        a[1] = a[1].min(e[1]);
                        a[2] = a[2].max(e[2]);
                    }
                    None => all.push(*e),
                }
            }
        }
        all.sort_by(|a, b| a[0].total_cmp(&b[0]));
        all
    }

    /// Worst error per part, in serial order (parts without one left out).
    pub fn worst_errors(&self) -> Vec<(String, f64)> {
        self.parts
            .iter()
            .filter_map(|p| p.worst_ppm().map(|w| (p.serial.clone(), w)))
            .collect()
    }

    /// The worst of each budget term over the lot.
    pub fn worst_terms(&self) -> Option<Terms> {
        let mut it = self.parts.iter().filter_map(|p| p.terms);
        let first = it.next()?;
        Some(it.fold(first, |a, t| Terms {
            interpolation_ppm: a.interpolation_ppm.max(t.interpolation_ppm),
            quantization_ppm: a.quantization_ppm.max(t.quantization_ppm),
            runtime_model_ppm: a.runtime_model_ppm.max(t.runtime_model_ppm),
            fit_residual_ppm: a.fit_residual_ppm.max(t.fit_residual_ppm),
            temperature_ppm: a.temperature_ppm.max(t.temperature_ppm),
            total_ppm: a.total_ppm.max(t.total_ppm),
        }))
    }

    /// Parts whose worst error lies above the upper Tukey fence of the lot
    /// (third quartile + 1.5 interquartile ranges; Tukey, Exploratory Data
    /// Analysis, 1977), largest first; needs 4 or more parts.
    pub fn outliers(&self) -> Vec<(String, f64, f64)> {
        let w = self.worst_errors();
        if w.len() < 4 {
            return Vec::new();
        }
        let mut v: Vec<f64> = w.iter().map(|x| x.1).collect();
        v.sort_by(f64::total_cmp);
        let q = |f: f64| {
            let x = f * (v.len() - 1) as f64;
            let k = x.floor() as usize;
            let r = x - k as f64;
            v[k] + r * (v[(k + 1).min(v.len() - 1)] - v[k])
        };
        let fence = q(0.75) + 1.5 * (q(0.75) - q(0.25));
        let mut out: Vec<(String, f64, f64)> = w
            .into_iter()
            .filter(|x| x.1 > fence)
            .map(|(s, e)| (s, e, fence))
            .collect();
        out.sort_by(|a, b| b.1.total_cmp(&a.1).then_with(|| a.0.cmp(&b.0)));
        out
    }
}

/// The report figures of a recorded lot.
pub fn lot_figures(db: &super::Db, lot: &str) -> Result<LotFigures, super::DbError> {
    let (info, parts) = super::query::lot_status(db, lot)?;
    let design = match &info.design_hash {
        Some(h) => {
            let bytes: Vec<u8> = db
                .conn
                .query_row(
                    "SELECT design_json FROM designs WHERE design_hash = ?",
                    [h],
                    |r| r.get(0),
                )
                .map_err(|e| db.err(e))?;
            let parsed = crate::station::design::DesignFile::parse(
                "recorded design",
                &String::from_utf8_lossy(&bytes),
            )
            .ok();
            Some(DesignFigures {
                hash: h.clone(),
                qualification_parts: parsed.as_ref().map(|d| d.qualification.parts),
                model_error_ppm: parsed.as_ref().map(|d| d.plan_error.operating_range_ppm),
            })
        }
        None => None,
    };
    Ok(LotFigures::from_records(&info, &parts, design))
}

/// The cautions every lot report carries.
pub fn cautions(simulated: bool) -> Vec<String> {
    let mut c = vec![
        "Verification is against each part's fitted model; the end-of-line check is against the part at held-out temperatures. Neither replaces qualification of the design.".to_string(),
        crate::station::output::caution_for(simulated),
        "Where a reading protects people or property (pressure vessels, battery-pack current sensing, medical devices, vehicles), the applicable standards, local codes and qualified engineers decide; this report is one input.".to_string(),
    ];
    c.dedup();
    c
}

#[cfg(test)]
mod tests {
    use super::*;

    fn part(serial: &str, worst: f64) -> PartFigures {
        PartFigures {
            serial: serial.into(),
            state: "passed".into(),
            fit_rms_ppm: Some(1.0),
            image_bytes: Some(100),
            image_crc32: Some("00000000".into()),
            verify_max_ppm: Some(worst / 2.0),
            allowance_ppm: Some(1000.0),
            eol_max_ppm: Some(worst),
            terms: None,
            envelope: vec![[25.0, -worst, worst]],
            reject: None,
        }
    }

    fn lot(ws: &[f64]) -> LotFigures {
        LotFigures {
            lot: "L".into(),
            scenario: "s".into(),
            simulated: true,
            cautions: vec![],
            budget_ppm: 500.0,
            range_c: (0.0, 50.0),
            design: None,
            calibration_sha256: None,
            parts: ws
                .iter()
                .enumerate()
                .map(|(k, w)| part(&format!("P{k}"), *w))
                .collect(),
        }
    }

    #[test]
    fn outlier_above_the_fence_only() {
        // Quartiles of 10, 11, 12, 13, 100: 11 and 13, fence 13 + 3 = 16.
        let l = lot(&[10.0, 11.0, 12.0, 13.0, 100.0]);
        let o = l.outliers();
        assert_eq!(o.len(), 1, "{o:?}");
        assert_eq!(o[0].0, "P4");
        assert_eq!(o[0].2, 16.0);
        assert!(lot(&[10.0, 11.0, 12.0, 13.0, 16.0]).outliers().is_empty());
    }

    #[test]
    fn envelope_merges_parts_per_temperature() {
        let l = lot(&[10.0, 30.0]);
        assert_eq!(l.envelope(), vec![[25.0, -30.0, 30.0]]);
        assert_eq!(l.yield_counts().eol_passed, 2);
    }
}
