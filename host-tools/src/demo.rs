//! The README's main command: the whole station chain for both demo
//! scenarios, everything written under one folder, byte-identical from run to
//! run (fixed seeds, sorted outputs, no timestamps, deterministic reductions).

use crate::plot::report::lot_report_html;
use crate::plot::station::{comparison_series, error_svg, table_series};
use crate::station::chamber::{self, ChamberData};
use crate::station::compare::{Comparison, QualifiedComparison, compare, compare_qualified};
use crate::station::curves::ShapeCurves;
use crate::station::design::{self, DesignFile, ProductionPlan};
use crate::station::export::{ExportFormat, export_with};
use crate::station::lot::{Progress, calibrate_lot, calibrate_lot_with};
use crate::station::model_shapes::shapes_for;
use crate::station::output::{OutputError, to_json_bytes, write_atomic};
use crate::station::part_file::PartFile;
use crate::station::pipeline::{self, DENSE_STIMULI, DENSE_TEMPS};
use crate::station::scenario::Scenario;
use crate::station::simulate::{Plan, draw_parts, measure};
use crate::station::spec::to_toml;
use crate::stationdb::figures::{DesignFigures, LotFigures, PartFigures, cautions};
use crate::stationdb::query::Terms;
use crate::stationdb::record::{EolCheck, image_crc, sha256_hex};
use crate::stationdb::run::eol_check;
use rayon::prelude::*;
use std::path::Path;

pub mod folder;

/// Seed of the demo lots.
pub const DEMO_SEED: u64 = 2026;
/// Flash address of the exported Intel HEX example.
pub const DEMO_ADDRESS: u32 = 0x0800_F000;

/// Why the demo stopped.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum DemoError {
    /// Writing a file failed.
    #[error(transparent)]
    Output(#[from] OutputError),
    /// A chain step failed.
    #[error("{scenario}: {message}")]
    Step {
        /// Scenario name.
        scenario: String,
        /// What failed.
        message: String,
    },
}

/// What one scenario's run gave.
#[derive(Debug, Clone, serde::Serialize)]
pub struct ScenarioSummary {
    /// Scenario name.
    pub scenario: String,
    /// Whether the lot is simulated (invented data, never a measurement).
    pub simulated: bool,
    /// The caution that goes with every figure here.
    pub caution: String,
    /// Parts simulated.
    pub parts: usize,
    /// Parts whose fit was accepted.
    pub calibrated: usize,
    /// Calibration temperatures, C.
    pub cal_temps_c: Vec<f64>,
    /// Physics vs polynomial at held-out temperatures (f64 models).
    pub comparison: Comparison,
    /// Worst error of the flashed images at held-out temperatures inside the
    /// operating range (the station's final check), ppm of span.
    pub image_check_max_ppm: f64,
    /// Parts fitted on the design against the polynomial at equal memory.
    pub qualified: QualifiedComparison,
    /// Parts accepted on the design.
    pub qualified_ok: usize,
    /// Content hash of the design learned from the qualification lot.
    pub design_hash: String,
    /// The design's model error for the production plan inside the
    /// operating range, ppm of span: budgeted in every part's fit residual.
    pub model_error_ppm: f64,
    /// Smallest, largest table image, bytes.
    pub table_bytes: (usize, usize),
    /// Budget, ppm of span.
    pub budget_ppm: f64,
    /// Parts whose image passed verification.
    pub verified_pass: usize,
    /// Largest dense-grid table error over the lot, ppm of span.
    pub verify_max_ppm: f64,
}

/// A part's image and its verification report.
type BuiltTable = (String, Vec<u8>, pipeline::VerifyReport);

fn step<T, E: std::fmt::Display>(scenario: &Scenario, r: Result<T, E>) -> Result<T, DemoError> {
    r.map_err(|e| DemoError::Step {
        scenario: scenario.name.clone(),
        message: e.to_string(),
    })
}

/// Seed of the qualification lot: other parts than the demo lot's.
pub const QUALIFICATION_SEED: u64 = 7_001;
/// Parts in the qualification lot (10 or more is a good plan; 20 leave the
/// leave-one-part-out model error a worst case over 20 parts).
pub const QUALIFICATION_PARTS: usize = 20;

/// The calibration plan and the held-out check plan (ascending
/// temperatures, the check at 5 stimuli) of a scenario.
fn chamber_plans(scenario: &Scenario) -> (Plan, Plan) {
    let mut check_temps = scenario.check_temps_c.clone();
    check_temps.sort_by(f64::total_cmp);
    (
        Plan {
            temps_c: scenario.cal_temps_c.clone(),
            stimuli: scenario.stimuli.clone(),
        },
        Plan {
            temps_c: check_temps,
            stimuli: scenario.check_stimuli(),
        },
    )
}

/// Measures a qualification lot of the scenario's design (other parts than
/// the demo lot's, at the qualification plan), writes its CSV and learns
/// the design for the scenario's production plan.
pub fn qualify_lot(
    scenario: &Scenario,
    curves: &ShapeCurves,
    dir: &Path,
) -> Result<DesignFile, DemoError> {
    let parts = draw_parts(scenario, QUALIFICATION_PARTS, QUALIFICATION_SEED);
    let plan = Plan {
        temps_c: scenario.qualification_plan_temps_c(),
        stimuli: scenario.qualification_stimuli(),
    };
    let rows = step(
        scenario,
        measure(scenario, &parts, &plan, QUALIFICATION_SEED),
    )?;
    let name = "qualification.csv";
    write_atomic(&dir.join(name), &chamber::to_csv_bytes(&rows))?;
    let data = ChamberData::from(rows);
    let production = ProductionPlan {
        temps_c: scenario.cal_temps_c.clone(),
        stimuli: scenario.stimuli.clone(),
    };
    let d = step(
        scenario,
        design::qualify(scenario, curves, &data, name, &production),
    )?;
    write_atomic(&dir.join("design.json"), &d.to_bytes())?;
    Ok(d)
}

/// Runs one scenario into `dir`: qualifies the model error on a separate
/// lot (stated in the written scenario), then calibrates, tables, verifies
/// and checks the demo lot.
pub fn run_scenario(
    scenario: &Scenario,
    parts_n: usize,
    dir: &Path,
    progress: &dyn Progress,
) -> Result<ScenarioSummary, DemoError> {
    let curves = step(scenario, shapes_for(scenario))?;
    let design = qualify_lot(scenario, &curves, dir)?;
    let model_error_ppm = design.plan_error.operating_range_ppm;
    write_atomic(&dir.join("scenario.toml"), to_toml(scenario).as_bytes())?;
    let parts = draw_parts(scenario, parts_n, DEMO_SEED);
    let (cal_plan, check_plan) = chamber_plans(scenario);
    let cal_rows = step(scenario, measure(scenario, &parts, &cal_plan, DEMO_SEED))?;
    let check_rows = step(scenario, measure(scenario, &parts, &check_plan, DEMO_SEED))?;
    let cal_csv = chamber::to_csv_bytes(&cal_rows);
    write_atomic(&dir.join("chamber-calibration.csv"), &cal_csv)?;
    write_atomic(
        &dir.join("chamber-check.csv"),
        &chamber::to_csv_bytes(&check_rows),
    )?;
    let cal = ChamberData::from(cal_rows);
    let check = ChamberData::from(check_rows);

    // Physics-only fits (for the comparison) and fits on the design (the
    // parts that get tables).
    let physics: Vec<PartFile> = calibrate_lot(scenario, &curves, &cal, progress);
    for p in &physics {
        write_atomic(
            &dir.join("parts-physics")
                .join(format!("{}.part.json", p.serial)),
            &p.to_bytes(),
        )?;
    }
    let fitted: Vec<PartFile> =
        calibrate_lot_with(scenario, &curves, &cal, Some(&design), progress);
    for p in &fitted {
        write_atomic(
            &dir.join("parts").join(format!("{}.part.json", p.serial)),
            &p.to_bytes(),
        )?;
    }
    let comparison = compare(&physics, &curves, &check);
    let qualified = compare_qualified(&fitted, &curves, &check);
    write_atomic(
        &dir.join("comparison.json"),
        &to_json_bytes(&(&comparison, &qualified)),
    )?;
    let lot_svg = step(
        scenario,
        error_svg(
            &format!(
                "{}: worst error over the lot at held-out temperatures",
                scenario.name
            ),
            &comparison_series(&comparison, Some(&qualified)),
            Some((scenario.budget_ppm, "budget")),
        ),
    )?;
    write_atomic(&dir.join("plots").join("lot-error.svg"), lot_svg.as_bytes())?;

    let ok: Vec<&PartFile> = fitted.iter().filter(|p| p.is_ok()).collect();
    progress.begin(ok.len(), "tables");
    let tables: Vec<Result<BuiltTable, String>> = ok
        .par_iter()
        .map(|p| {
            let r = pipeline::build_table(p, &curves, scenario.budget_ppm)
                .and_then(|o| {
                    let v = pipeline::verify(
                        &o.image,
                        p,
                        &curves,
                        scenario.budget_ppm,
                        DENSE_TEMPS,
                        DENSE_STIMULI,
                    )?;
                    Ok((p.serial.clone(), o.image, v))
                })
                .map_err(|e| format!("{}: {e}", p.serial));
            progress.advance();
            r
        })
        .collect();
    progress.end();
    let mut bytes = (usize::MAX, 0usize);
    let mut verified_pass = 0;
    let mut verify_max: f64 = 0.0;
    let mut image_check_max: f64 = 0.0;
    let groups = check.by_serial();
    let mut report_parts: Vec<PartFigures> = fitted
        .iter()
        .filter(|p| !p.is_ok())
        .map(|p| rejected_figures(p, "fit", &p.status))
        .collect();
    for (k, t) in tables.iter().enumerate() {
        let (serial, image, report) = match t {
            Ok(x) => x,
            Err(e) => {
                write_atomic(
                    &dir.join("tables")
                        .join(format!("{}.error.txt", ok[k].serial)),
                    format!("{e}\n").as_bytes(),
                )?;
                report_parts.push(rejected_figures(ok[k], "table", e));
                continue;
            }
        };
        write_atomic(&dir.join("tables").join(format!("{serial}.bin")), image)?;
        write_atomic(
            &dir.join("verify").join(format!("{serial}.json")),
            &to_json_bytes(report),
        )?;
        bytes = (bytes.0.min(image.len()), bytes.1.max(image.len()));
        verified_pass += usize::from(report.pass);
        verify_max = verify_max.max(report.max_error_ppm);
        if k == 0 {
            let curve = step(scenario, pipeline::table_error_curve(image, ok[k], &curves))?;
            let (title, series) = table_series(report, curve);
            let svg = step(
                scenario,
                error_svg(
                    &title,
                    &series,
                    Some((report.table_allowance_ppm, "allowance")),
                ),
            )?;
            write_atomic(
                &dir.join("plots").join(format!("table-error-{serial}.svg")),
                svg.as_bytes(),
            )?;
            // One part exported in every flashing format, as a station would.
            for f in [ExportFormat::Rust, ExportFormat::C, ExportFormat::Hex] {
                let data = step(
                    scenario,
                    export_with(image, f, "drift_table", DEMO_ADDRESS, scenario.simulated),
                )?;
                write_atomic(
                    &dir.join("tables")
                        .join(format!("{serial}.{}", f.extension())),
                    &data,
                )?;
            }
        }
        let part = ok[k];
        let eol = match groups.get(part.serial.as_str()) {
            Some(rows) => Some(step(
                scenario,
                eol_check(part, &curves, image, rows, scenario.budget_ppm),
            )?),
            None => None,
        };
        if let Some(e) = &eol {
            image_check_max = image_check_max.max(e.max_error_ppm);
        }
        report_parts.push(part_figures(
            part,
            image,
            &VerifyFacts::of(report),
            eol.as_ref(),
        ));
    }
    report_parts.sort_by(|a, b| a.serial.cmp(&b.serial));
    let figures = LotFigures {
        lot: lot_name(scenario),
        scenario: scenario.name.clone(),
        simulated: scenario.simulated,
        cautions: cautions(scenario.simulated),
        budget_ppm: scenario.budget_ppm,
        range_c: scenario.range_c,
        design: Some(DesignFigures {
            hash: design.hash.clone(),
            qualification_parts: Some(design.qualification.parts),
            model_error_ppm: Some(model_error_ppm),
        }),
        calibration_sha256: Some(sha256_hex(&cal_csv)),
        parts: report_parts,
    };
    let html = step(scenario, lot_report_html(&figures))?;
    write_atomic(&dir.join("report.html"), html.as_bytes())?;
    let summary = ScenarioSummary {
        scenario: scenario.name.clone(),
        simulated: scenario.simulated,
        caution: crate::station::output::caution_for(scenario.simulated),
        parts: parts.len(),
        calibrated: ok.len(),
        cal_temps_c: scenario.cal_temps_c.clone(),
        comparison,
        qualified,
        qualified_ok: ok.len(),
        design_hash: design.hash.clone(),
        image_check_max_ppm: image_check_max,
        model_error_ppm,
        table_bytes: if bytes.0 == usize::MAX { (0, 0) } else { bytes },
        budget_ppm: scenario.budget_ppm,
        verified_pass,
        verify_max_ppm: verify_max,
    };
    write_atomic(&dir.join("summary.json"), &to_json_bytes(&summary))?;
    Ok(summary)
}

/// The name the demo gives a scenario's lot in its report.
pub fn lot_name(scenario: &Scenario) -> String {
    format!("{} demo lot", scenario.name)
}

/// What the lot report shows of a verification: from the report in memory
/// (the demo) or from its JSON (a demo folder's `verify/SERIAL.json`).
#[derive(Debug, Clone, PartialEq, serde::Deserialize)]
pub struct VerifyFacts {
    /// Largest dense-grid table error, ppm of span.
    pub max_error_ppm: f64,
    /// What the budget leaves for the table, ppm of span.
    pub table_allowance_ppm: f64,
    /// Within the allowance.
    pub pass: bool,
    /// Budget terms.
    pub terms: Terms,
}

impl VerifyFacts {
    /// The facts of a verification report.
    pub fn of(v: &pipeline::VerifyReport) -> VerifyFacts {
        let t = &v.terms;
        VerifyFacts {
            max_error_ppm: v.max_error_ppm,
            table_allowance_ppm: v.table_allowance_ppm,
            pass: v.pass,
            terms: Terms {
                interpolation_ppm: t.interpolation_ppm,
                quantization_ppm: t.quantization_ppm,
                runtime_model_ppm: t.runtime_model_ppm,
                fit_residual_ppm: t.fit_residual_ppm,
                temperature_ppm: t.temperature_ppm,
                total_ppm: t.total_ppm,
            },
        }
    }
}

/// A part the demo rejected, as the lot report shows it.
fn rejected_figures(part: &PartFile, stage: &str, reason: &str) -> PartFigures {
    PartFigures {
        serial: part.serial.clone(),
        state: "rejected".to_string(),
        fit_rms_ppm: part.fit_rms_ppm.is_finite().then_some(part.fit_rms_ppm),
        image_bytes: None,
        image_crc32: None,
        verify_max_ppm: None,
        allowance_ppm: None,
        eol_max_ppm: None,
        terms: None,
        envelope: Vec::new(),
        reject: Some((stage.to_string(), reason.to_string())),
    }
}

/// A part with its verified image (and end-of-line check), as the lot
/// report shows it; `passed` when both checks passed (the demo releases
/// nothing).
fn part_figures(
    part: &PartFile,
    image: &[u8],
    v: &VerifyFacts,
    eol: Option<&EolCheck>,
) -> PartFigures {
    let reject = if !v.pass {
        Some((
            "verify".to_string(),
            format!(
                "table error {:.1} ppm exceeds the allowance {:.1} ppm",
                v.max_error_ppm, v.table_allowance_ppm
            ),
        ))
    } else {
        match eol {
            Some(e) if !e.pass => Some((
                "end-of-line".to_string(),
                format!(
                    "worst error {:.1} ppm at held-out temperatures exceeds the budget {:.1} ppm",
                    e.max_error_ppm, e.limit_ppm
                ),
            )),
            Some(_) => None,
            None => Some(("end-of-line".to_string(), "no check rows".to_string())),
        }
    };
    PartFigures {
        serial: part.serial.clone(),
        state: if reject.is_some() {
            "rejected"
        } else {
            "passed"
        }
        .to_string(),
        fit_rms_ppm: part.fit_rms_ppm.is_finite().then_some(part.fit_rms_ppm),
        image_bytes: Some(image.len() as i64),
        image_crc32: Some(format!("{:08x}", image_crc(image))),
        verify_max_ppm: Some(v.max_error_ppm),
        allowance_ppm: Some(v.table_allowance_ppm),
        eol_max_ppm: eol.map(|e| e.max_error_ppm),
        terms: Some(v.terms),
        envelope: eol.map(|e| e.envelope.clone()).unwrap_or_default(),
        reject,
    }
}

/// Formats the printed summary of the demo.
pub fn summary_text(summaries: &[ScenarioSummary]) -> String {
    let mut s = String::new();
    for m in summaries {
        let c = &m.comparison;
        s.push_str(&format!(
            "{}: {} parts, {} calibrated at {:?} C\n",
            m.scenario, m.parts, m.calibrated, m.cal_temps_c
        ));
        let (lo, hi) = c.calibrated_c;
        let any_outside = c
            .by_temperature
            .iter()
            .any(|row| row[0] < lo - 1e-9 || row[0] > hi + 1e-9);
        // A lot checked only inside its calibrated span has no outside figure;
        // printing 0 ppm there would read as a perfect result.
        let outside = |ppm: f64| {
            if any_outside {
                format!("{ppm:.0} ppm outside")
            } else {
                "no held-out temperature outside".to_string()
            }
        };
        s.push_str(&format!(
            "  raw drift (ref-temperature offset and gain only): {:.0} ppm of span inside, {} the calibrated span\n",
            c.raw.inside_ppm,
            outside(c.raw.outside_ppm)
        ));
        let held_out = |what: &str, coefficients: usize, w: &crate::station::compare::Worst| {
            format!(
                "  held-out worst case, {what} ({coefficients} coefficients): {:.0} ppm inside, {}\n",
                w.inside_ppm,
                outside(w.outside_ppm)
            )
        };
        s.push_str(&held_out("physics", c.physics_coefficients, &c.physics));
        s.push_str(&held_out(
            "polynomial",
            c.polynomial_coefficients,
            &c.polynomial,
        ));
        let q = &m.qualified;
        s.push_str(&held_out(
            &format!("on the design learned from a {QUALIFICATION_PARTS}-part qualification lot"),
            q.coefficients,
            &q.qualified,
        ));
        s.push_str(&held_out(
            "polynomial with nonlinearity",
            q.polynomial_coefficients,
            &q.polynomial,
        ));
        s.push_str(&format!(
            "  design {}: model error of the production plan {:.0} ppm (budgeted); {} of {} parts accepted on it\n",
            &m.design_hash[..16],
            m.model_error_ppm,
            m.qualified_ok,
            m.parts
        ));
        s.push_str(&format!(
            "  flashed images at held-out temperatures in range: worst {:.0} ppm (budget {} ppm)\n",
            m.image_check_max_ppm, m.budget_ppm
        ));
        s.push_str(&format!(
            "  tables {}..{} bytes; verification {}/{} pass, worst table error {:.1} ppm\n",
            m.table_bytes.0, m.table_bytes.1, m.verified_pass, m.calibrated, m.verify_max_ppm
        ));
    }
    // Every demo scenario is simulated (built-in, invented data).
    s.push_str(&format!(
        "simulated: true\n{}\n",
        crate::station::output::caution_for(true)
    ));
    s
}
