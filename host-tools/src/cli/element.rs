//! `semidrift element`: example specs and drift curves of sense elements.

use super::CliError;
use crate::element::locate::line_of;
use crate::element::{
    DriftCurve, DriftRow, ElementError, ElementKind, ElementSpec, drift_curve, example_text,
    parse_spec,
};
use crate::physics::ModelError;
use crate::physics::constants::ZERO_C_K;
use serde::Serialize;
use std::io::Write;
use std::path::{Path, PathBuf};

/// Print an example spec, or the drift of a sense element over temperature.
#[derive(Debug, clap::Args)]
pub struct ElementArgs {
    /// Element spec file (TOML; see `--example`).
    #[arg(required_unless_present = "example")]
    pub spec: Option<PathBuf>,
    /// Print a commented example spec of this kind and exit.
    #[arg(long, value_enum, conflicts_with = "spec")]
    pub example: Option<ExampleKind>,
    /// Temperatures in degrees Celsius: START:STOP:STEP or one value
    /// [default: the spec's range in 5 C steps].
    #[arg(long, allow_hyphen_values = true, value_name = "START:STOP:STEP")]
    pub celsius: Option<String>,
    /// JSON on stdout: {kind, spec, name, rows, summary}.
    #[arg(long, conflicts_with = "csv")]
    pub json: bool,
    /// CSV rows on stdout (header row first).
    #[arg(long)]
    pub csv: bool,
}

/// Kinds of example spec.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum ExampleKind {
    /// Piezoresistive bridge (well-level logger scenario).
    Bridge,
    /// Hall plate (battery-pack current sensor scenario).
    Hall,
}

impl From<ExampleKind> for ElementKind {
    fn from(k: ExampleKind) -> Self {
        match k {
            ExampleKind::Bridge => ElementKind::Bridge,
            ExampleKind::Hall => ElementKind::Hall,
        }
    }
}

/// Parses `--celsius` (`START:STOP:STEP` or one value, via the shared sweep
/// parser) and refuses temperatures below 1 K.
pub fn parse_celsius(text: &str) -> Result<Vec<f64>, CliError> {
    let temps = super::range::parse_sweep("--celsius", text)?;
    let min_c = crate::element::spec::MIN_T_K - ZERO_C_K;
    match temps.iter().find(|t| **t < min_c) {
        Some(t) => Err(CliError::option(
            "--celsius",
            text,
            format!("{t} C is below {min_c} C (1 K)"),
        )),
        None => Ok(temps),
    }
}

/// A spec file read and parsed, with its text (to locate later errors).
#[derive(Debug, Clone)]
pub struct LoadedSpec {
    /// The file as given on the command line.
    pub path: PathBuf,
    /// Its text.
    pub text: String,
    /// The parsed, checked spec.
    pub spec: ElementSpec,
}

/// Reads and parses a spec file; errors name the file, line and key.
pub fn load_spec(path: &Path) -> Result<LoadedSpec, CliError> {
    let shown = path.display().to_string();
    use crate::station::limits::{MAX_TOML_BYTES, read_text_capped};
    let text = read_text_capped(path, MAX_TOML_BYTES, "element spec")
        .map_err(|m| CliError::Input(format!("{shown}: {m}")))?;
    let spec = parse_spec(&text).map_err(|e| CliError::at(&shown, e.line, &e.field, &e.message))?;
    Ok(LoadedSpec {
        path: path.to_path_buf(),
        text,
        spec,
    })
}

/// Maps a model failure to a bad-input error: a temperature outside the
/// model's range names `--celsius` when given, else the spec's
/// `temperature.min_c` / `max_c` line; anything else names the spec file.
pub fn model_error(loaded: &LoadedSpec, celsius: Option<&str>, e: ElementError) -> CliError {
    let shown = loaded.path.display().to_string();
    if let ElementError::Model {
        source: ModelError::TemperatureOutOfRange { t_k, min_k, max_k },
        ..
    } = &e
    {
        let message = format!(
            "{:.2} C is outside the model range {:.2}..{:.2} C",
            t_k - ZERO_C_K,
            min_k - ZERO_C_K,
            max_k - ZERO_C_K
        );
        return match celsius {
            Some(text) => CliError::option("--celsius", text, message),
            None => {
                let field = if t_k < min_k {
                    "temperature.min_c"
                } else {
                    "temperature.max_c"
                };
                CliError::at(&shown, line_of(&loaded.text, field), field, message)
            }
        };
    }
    CliError::Input(format!("{shown}: {e}"))
}

/// The spec's range in 5 C steps, always including both ends.
fn default_temps(spec: &ElementSpec) -> Vec<f64> {
    let t = spec.common().temperature;
    let mut temps: Vec<f64> = (0..)
        .map(|i| t.min_c + 5.0 * i as f64)
        .take_while(|c| *c < t.max_c)
        .collect();
    temps.push(t.max_c);
    temps
}

/// Temperatures of the command: `--celsius` or the spec's range.
pub fn temps_for(spec: &ElementSpec, celsius: Option<&str>) -> Result<Vec<f64>, CliError> {
    match celsius {
        Some(text) => parse_celsius(text),
        None => Ok(default_temps(spec)),
    }
}

/// Computes the drift curve of a loaded spec (`celsius`: the option's text, if given).
pub fn curve_for(
    loaded: &LoadedSpec,
    temps: &[f64],
    celsius: Option<&str>,
) -> Result<DriftCurve, CliError> {
    drift_curve(&loaded.spec, temps).map_err(|e| model_error(loaded, celsius, e))
}

/// The JSON document of `semidrift element --json`.
#[derive(Serialize)]
struct JsonReport<'a> {
    kind: ElementKind,
    spec: String,
    name: &'a str,
    stimulus_unit: &'a str,
    full_scale: f64,
    rows: &'a [DriftRow],
    summary: &'a crate::element::DriftSummary,
}

/// Runs `semidrift element`.
pub fn run(args: ElementArgs, out: &mut dyn Write) -> Result<(), CliError> {
    if let Some(kind) = args.example {
        out.write_all(example_text(kind.into()).as_bytes())?;
        return Ok(());
    }
    let Some(path) = args.spec.as_deref() else {
        return Err(CliError::Input(
            "element: give a SPEC file or --example bridge|hall".to_string(),
        ));
    };
    let loaded = load_spec(path)?;
    let spec = &loaded.spec;
    let temps = temps_for(spec, args.celsius.as_deref())?;
    let curve = curve_for(&loaded, &temps, args.celsius.as_deref())?;
    let common = spec.common();
    if args.json {
        let report = JsonReport {
            kind: curve.kind,
            spec: path.display().to_string(),
            name: common.name,
            stimulus_unit: &common.stimulus.unit,
            full_scale: common.stimulus.full_scale,
            rows: &curve.rows,
            summary: &curve.summary,
        };
        let text = serde_json::to_string_pretty(&report)
            .map_err(|e| CliError::Input(format!("JSON: {e}")))?;
        writeln!(out, "{text}")?;
    } else if args.csv {
        write_csv(out, &curve)?;
    } else {
        write_text(out, path, spec, &curve)?;
    }
    Ok(())
}

/// Columns of the CSV output (kind-specific ones are empty when not applicable).
const CSV_COLUMNS: [&str; 18] = [
    "t_c",
    "t_k",
    "span_v",
    "span_rel",
    "offset_v",
    "offset_ppm_fs",
    "resistance_ohm",
    "resistance_rel",
    "excitation_v",
    "excitation_a",
    "span_rel_cv",
    "span_rel_cc",
    "offset_ppm_fs_cv",
    "offset_ppm_fs_cc",
    "piezo_factor",
    "hall_coefficient_cm3_c",
    "hall_mobility_cm2_vs",
    "hall_factor",
];

fn write_csv(out: &mut dyn Write, curve: &DriftCurve) -> std::io::Result<()> {
    let opt = |v: Option<f64>| v.map(|x| x.to_string()).unwrap_or_default();
    let rows = curve.rows.iter().map(|r| {
        [
            r.t_c.to_string(),
            r.t_k.to_string(),
            r.span_v.to_string(),
            r.span_rel.to_string(),
            r.offset_v.to_string(),
            r.offset_ppm_fs.to_string(),
            r.resistance_ohm.to_string(),
            r.resistance_rel.to_string(),
            r.excitation_v.to_string(),
            r.excitation_a.to_string(),
            r.span_rel_cv.to_string(),
            r.span_rel_cc.to_string(),
            r.offset_ppm_fs_cv.to_string(),
            r.offset_ppm_fs_cc.to_string(),
            opt(r.piezo_factor),
            opt(r.hall_coefficient_cm3_c),
            opt(r.hall_mobility_cm2_vs),
            opt(r.hall_factor),
        ]
    });
    out.write_all(crate::station::output::csv_text(&CSV_COLUMNS, rows).as_bytes())
}

fn write_text(
    out: &mut dyn Write,
    path: &Path,
    spec: &ElementSpec,
    curve: &DriftCurve,
) -> std::io::Result<()> {
    let common = spec.common();
    let s = &curve.summary;
    writeln!(
        out,
        "{} '{}' ({})",
        spec.kind().name(),
        common.name,
        path.display()
    )?;
    writeln!(
        out,
        "span at {} C: {:.6e} V for {} {} ({:?} drive), resistance {:.2} ohm",
        s.reference_c,
        s.span_ref_v,
        common.stimulus.full_scale,
        common.stimulus.unit,
        s.excitation_mode,
        s.resistance_ref_ohm
    )?;
    writeln!(
        out,
        "at {} C: TCS {:.1} ppm/K (const. voltage {:.1}, const. current {:.1}), TCO {:.2} ppm FS/K (cv {:.2}, cc {:.2}), TCR {:.1} ppm/K, ADC step {:.3} ppm FS",
        s.reference_c,
        s.tcs_ppm_per_k,
        s.tcs_cv_ppm_per_k,
        s.tcs_cc_ppm_per_k,
        s.tco_ppm_fs_per_k,
        s.tco_cv_ppm_fs_per_k,
        s.tco_cc_ppm_fs_per_k,
        s.tcr_ppm_per_k,
        s.adc_lsb_ppm_fs
    )?;
    if let Some(source) = s.hall_factor_source {
        writeln!(out, "Hall factor: {}", source.citation())?;
    }
    writeln!(
        out,
        "{:>8} {:>10} {:>10} {:>13} {:>12} {:>10} {:>10}",
        "t_c", "span_rel", "span_cc", "offset_ppmfs", "resist_ohm", "off_cv", "off_cc"
    )?;
    for r in &curve.rows {
        writeln!(
            out,
            "{:>8.2} {:>10.6} {:>10.6} {:>13.1} {:>12.3} {:>10.1} {:>10.1}",
            r.t_c,
            r.span_rel,
            r.span_rel_cc,
            r.offset_ppm_fs,
            r.resistance_ohm,
            r.offset_ppm_fs_cv,
            r.offset_ppm_fs_cc
        )?;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn celsius_grids() {
        // (text, expected grid) worked by hand.
        let table: [(&str, Vec<f64>); 3] = [
            ("25", vec![25.0]),
            ("-20:85:35", vec![-20.0, 15.0, 50.0, 85.0]),
            ("0:10:4", vec![0.0, 4.0, 8.0]),
        ];
        for (text, want) in table {
            let got = parse_celsius(text);
            assert_eq!(got.as_ref().ok(), Some(&want), "{text}: got {got:?}");
        }
        for bad in ["", "a:b:c", "0:10:0", "10:0:1", "-273", "0:10"] {
            assert!(parse_celsius(bad).is_err(), "{bad:?} must be refused");
        }
    }
}
