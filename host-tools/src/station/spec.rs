//! Resolving the SPEC argument of the station commands to a [`Scenario`]:
//! a built-in demo scenario name or a scenario TOML file.

use super::scenario::Scenario;
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
         # host_tools::station::scenario::Scenario.\n{body}"
    )
}

/// Loads a scenario: a built-in name or a TOML file.
pub fn load(arg: &str) -> Result<Scenario, SpecLoadError> {
    if let Some(s) = built_in(arg) {
        return Ok(s);
    }
    let path = Path::new(arg);
    let text = std::fs::read_to_string(path).map_err(|e| SpecLoadError {
        file: arg.into(),
        line: 1,
        field: "-".into(),
        message: format!(
            "cannot read ({e}); expected a scenario TOML file or one of {}",
            BUILT_IN.join(", ")
        ),
    })?;
    toml::from_str::<Scenario>(&text).map_err(|e| {
        let line = e.span().map_or(1, |s| {
            text[..s.start.min(text.len())].lines().count().max(1)
        });
        let message = e.message().to_string();
        let field = message.split('`').nth(1).unwrap_or("-").to_string();
        SpecLoadError {
            file: arg.into(),
            line,
            field,
            message,
        }
    })
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
