//! Resolving the SPEC argument of the station commands to a [`Scenario`]:
//! a built-in demo scenario name, a station scenario TOML file, or an
//! element spec TOML (`semidrift element --example bridge|hall`), whose die,
//! doping, range, stimulus and ADC resolution replace those of the built-in
//! scenario of the same kind (lot spread, chamber plan and the simulated
//! truth's extra effects stay the built-in ones).

use crate::element::{ElementSpec, parse_spec};
use crate::physics::{Dopant, Sample};
use crate::station::scenario::Scenario;
use std::path::Path;

/// Names of the built-in scenarios.
pub const BUILT_IN: [&str; 2] = ["well-logger", "battery-current"];

/// A built-in scenario by name.
pub fn built_in(name: &str) -> Option<Scenario> {
    match name {
        "well-logger" => Some(Scenario::well_logger()),
        "battery-current" => Some(Scenario::battery_current()),
        _ => None,
    }
}

/// Why a spec could not be loaded: `FILE:LINE: field 'FIELD': message`.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("{file}:{line}: field '{field}': {message}")]
pub struct SpecLoadError {
    /// File (or the argument as given).
    pub file: String,
    /// Line, 1-based.
    pub line: usize,
    /// Field.
    pub field: String,
    /// What is wrong.
    pub message: String,
}

/// Serializes a scenario as TOML (the file `simulate --write-spec` and `demo` write).
pub fn to_toml(scenario: &Scenario) -> String {
    let body = toml::to_string(scenario).unwrap_or_default();
    format!(
        "# semidrift station scenario: element, lot spread and chamber plan.\n\
         # Invented demo data; units are in the field names and docs of\n\
         # host_tools::station::scenario::Scenario.\n\
         # {}.\n{body}",
        crate::station::output::caution_for(scenario.simulated)
    )
}

/// Loads a scenario: a built-in name or a TOML file.
pub fn load(arg: &str) -> Result<Scenario, SpecLoadError> {
    if let Some(s) = built_in(arg) {
        return Ok(s);
    }
    let path = Path::new(arg);
    let text = crate::station::limits::read_text_capped(
        path,
        crate::station::limits::MAX_TOML_BYTES,
        "scenario or element spec",
    )
    .map_err(|message| SpecLoadError {
        file: arg.into(),
        line: 1,
        field: "-".into(),
        message: format!(
            "{message}; expected a scenario TOML file or one of {}",
            BUILT_IN.join(", ")
        ),
    })?;
    parse_text(arg, &text)
}

/// Parses a scenario or element spec TOML `text` (named `arg` in messages)
/// and checks it, as [`load`] does for a file.
pub fn parse_text(arg: &str, text: &str) -> Result<Scenario, SpecLoadError> {
    let located = |e: crate::element::SpecError| SpecLoadError {
        file: arg.into(),
        line: e.line.max(1),
        field: e.field,
        message: e.message,
    };
    // Element specs have a [stimulus] table; station scenarios do not.
    if text.lines().any(|l| l.trim() == "[stimulus]") {
        let scenario = parse_spec(text)
            .map(|spec| from_element(&spec))
            .map_err(located)?;
        // The element spec's own checks passed; what is left are the
        // station's limits on the values it carries into the scenario.
        scenario.check().map_err(|e| {
            let field = element_key(&e.field);
            SpecLoadError {
                file: arg.into(),
                line: crate::element::locate::line_of(text, field),
                field: field.to_string(),
                message: format!(
                    "{} (station limit on scenario field '{}')",
                    e.message, e.field
                ),
            }
        })?;
        return Ok(scenario);
    }
    let scenario: Scenario =
        toml::from_str(text).map_err(|e| located(crate::element::locate::from_toml(text, &e)))?;
    scenario
        .check()
        .map_err(|e| located(e.located(Some(text))))?;
    Ok(scenario)
}

/// The element spec key a scenario field comes from ([`from_element`]).
fn element_key(scenario_field: &str) -> &'static str {
    match scenario_field {
        "range_c" => "temperature.max_c",
        "t_ref_c" => "temperature.reference_c",
        "stimulus_fs" | "stimuli" => "stimulus.full_scale",
        "stimulus_unit" => "stimulus.unit",
        "output_adc.bits" => "adc.bits",
        "output_adc.range" => "adc.input_span_v",
        "excitation" => "excitation",
        f if f.starts_with("sample") => "die",
        _ => "kind",
    }
}

/// A scenario from an element spec (see the module docs for what is kept).
pub fn from_element(spec: &ElementSpec) -> Scenario {
    match spec {
        ElementSpec::Bridge(b) => {
            let mut sc = Scenario::well_logger();
            let n = b.arm.len().max(1) as f64;
            let density = b.arm.iter().map(|a| a.density_cm3).sum::<f64>() / n;
            let dopant = b
                .arm
                .first()
                .map_or(crate::physics::Species::B, |a| a.dopant);
            sc.sample = Sample {
                material: b.die.material,
                donors: vec![],
                acceptors: vec![Dopant {
                    species: dopant,
                    density_cm3: density,
                }],
            };
            if matches!(
                dopant,
                crate::physics::Species::P
                    | crate::physics::Species::As
                    | crate::physics::Species::Sb
            ) {
                std::mem::swap(&mut sc.sample.donors, &mut sc.sample.acceptors);
            }
            sc.range_c = (b.temperature.min_c, b.temperature.max_c);
            sc.t_ref_c = b.temperature.reference_c;
            sc.stimulus_unit = b.stimulus.unit.clone();
            sc.stimulus_fs = (0.0, b.stimulus.full_scale);
            sc.stimuli = vec![0.0, 0.5 * b.stimulus.full_scale, b.stimulus.full_scale];
            sc.output_adc.bits = b.adc.bits;
            sc.output_adc.range = 0.5 * b.adc.input_span_v;
            if let Some(v) = b.excitation.voltage_v {
                sc.excitation = v;
            }
            not_simulated(sc)
        }
        ElementSpec::Hall(h) => {
            let mut sc = Scenario::battery_current();
            sc.sample = Sample {
                material: h.plate.material,
                donors: vec![Dopant {
                    species: h.plate.dopant,
                    density_cm3: h.plate.density_cm3,
                }],
                acceptors: vec![],
            };
            sc.range_c = (h.temperature.min_c, h.temperature.max_c);
            sc.t_ref_c = h.temperature.reference_c;
            sc.stimulus_unit = h.stimulus.unit.clone();
            let fs = h.stimulus.full_scale;
            sc.stimulus_fs = (-fs, fs);
            sc.stimuli = vec![-fs, 0.0, fs];
            sc.output_adc.bits = h.adc.bits;
            sc.output_adc.range = 0.5 * h.adc.input_span_v;
            if let Some(i) = h.excitation.current_a {
                sc.excitation = i;
            }
            not_simulated(sc)
        }
    }
}

/// An element spec describes the user's element, whose chamber data may be
/// measured: its scenario is not marked simulated (`simulate --write-spec`
/// marks the scenario file it writes).
fn not_simulated(mut sc: Scenario) -> Scenario {
    sc.simulated = false;
    sc.caution.clear();
    sc
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn scenarios_round_trip_through_toml() {
        for name in BUILT_IN {
            let s = built_in(name).unwrap();
            let dir = tempfile::tempdir().unwrap();
            let path = dir.path().join("s.toml");
            std::fs::write(&path, to_toml(&s)).unwrap();
            let back = load(path.to_str().unwrap()).unwrap();
            assert_eq!(back, s, "{name}");
        }
    }

    #[test]
    fn bad_spec_names_line_and_field() {
        let s =
            to_toml(&Scenario::well_logger()).replace("budget_ppm = 500.0", "budget_ppm = \"x\"");
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("bad.toml");
        std::fs::write(&path, &s).unwrap();
        let err = load(path.to_str().unwrap()).unwrap_err();
        let line = s.lines().position(|l| l.starts_with("budget_ppm")).unwrap() + 1;
        assert_eq!(err.line, line, "{err}");
        assert!(load("no-such-file.toml").is_err());
    }
}
