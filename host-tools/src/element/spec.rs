//! The element spec file: parts shared by bridges and Hall plates, the
//! [`ElementSpec`] enum and parsing with located errors.
//!
//! Specs are TOML in our own schema; every key carries its unit in its name.
//! Unknown keys are refused (`deny_unknown_fields`), and after parsing every
//! value is checked for physical sense ([`Invalid`] names the key, the parser
//! turns it into a [`SpecError`] with the key's line).

use super::bridge_spec::BridgeSpec;
use super::error::SpecError;
use super::hall_spec::HallSpec;
use super::locate;
use serde::{Deserialize, Serialize};

/// Which element a spec describes (the top-level `kind` key).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum ElementKind {
    /// Piezoresistive Wheatstone bridge.
    Bridge,
    /// Hall plate.
    Hall,
}

impl ElementKind {
    /// Lower-case name as in the spec and the JSON output.
    pub fn name(self) -> &'static str {
        match self {
            ElementKind::Bridge => "bridge",
            ElementKind::Hall => "hall",
        }
    }
}

/// A parsed, checked element spec.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(untagged)]
pub enum ElementSpec {
    /// Piezoresistive bridge.
    Bridge(BridgeSpec),
    /// Hall plate.
    Hall(HallSpec),
}

impl ElementSpec {
    /// The kind of element.
    pub fn kind(&self) -> ElementKind {
        match self {
            ElementSpec::Bridge(_) => ElementKind::Bridge,
            ElementSpec::Hall(_) => ElementKind::Hall,
        }
    }

    /// The shared parts (stimulus, temperature range, excitation, ADC, signals).
    pub fn common(&self) -> Common<'_> {
        match self {
            ElementSpec::Bridge(b) => Common {
                name: &b.name,
                stimulus: &b.stimulus,
                temperature: &b.temperature,
                excitation: &b.excitation,
                adc: &b.adc,
                signals: &b.signals,
            },
            ElementSpec::Hall(h) => Common {
                name: &h.name,
                stimulus: &h.stimulus,
                temperature: &h.temperature,
                excitation: &h.excitation,
                adc: &h.adc,
                signals: &h.signals,
            },
        }
    }

    /// Checks every value for physical sense.
    pub fn check(&self) -> Result<(), Invalid> {
        match self {
            ElementSpec::Bridge(b) => b.check(),
            ElementSpec::Hall(h) => h.check(),
        }
    }
}

/// Borrowed view of the parts every element spec has.
#[derive(Debug, Clone, Copy)]
pub struct Common<'a> {
    /// Free-text name of the part.
    pub name: &'a str,
    /// Stimulus unit and full scale.
    pub stimulus: &'a StimulusSpec,
    /// Temperature range and reference.
    pub temperature: &'a TemperatureSpec,
    /// Excitation or bias.
    pub excitation: &'a ExcitationSpec,
    /// Converter.
    pub adc: &'a AdcSpec,
    /// Units of the chamber CSV columns.
    pub signals: &'a SignalsSpec,
}

/// `[stimulus]`: what the element measures and its full scale.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct StimulusSpec {
    /// Unit of the stimulus as written in the chamber CSV (`bar`, `A`, `mT`...).
    pub unit: String,
    /// Full-scale stimulus in `unit`; the span is the output at this stimulus
    /// minus the output at zero stimulus.
    pub full_scale: f64,
}

/// `[temperature]`: operating range and the reference of the coefficients.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct TemperatureSpec {
    /// Lowest operating temperature in degrees Celsius.
    pub min_c: f64,
    /// Highest operating temperature in degrees Celsius.
    pub max_c: f64,
    /// Reference temperature of span_rel and the temperature coefficients, in degrees Celsius.
    pub reference_c: f64,
}

/// How the element is driven.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum ExcitationMode {
    /// Constant voltage across the element.
    Voltage,
    /// Constant current through the element.
    Current,
}

/// `[excitation]`: constant voltage or constant current.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ExcitationSpec {
    /// `voltage` or `current`.
    pub mode: ExcitationMode,
    /// Excitation voltage in volts (required when `mode = "voltage"`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub voltage_v: Option<f64>,
    /// Excitation current in amperes (required when `mode = "current"`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub current_a: Option<f64>,
}

/// `[adc]`: the converter that digitizes the output.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct AdcSpec {
    /// Resolution in bits (1..=32); codes are signed (two's complement).
    pub bits: u32,
    /// Full input range in volts, peak to peak (the input is bipolar,
    /// `-input_span_v/2 .. +input_span_v/2`, after any front-end gain).
    pub input_span_v: f64,
}

/// What the `output` column of a chamber CSV holds.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum OutputUnit {
    /// Output voltage in volts.
    Volt,
    /// Signed ADC code.
    AdcCode,
}

/// What the `temp_signal` column of a chamber CSV holds.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum TempSignal {
    /// The element's own input resistance in ohms (element as thermometer).
    ResistanceOhm,
    /// A separate temperature sensor, in degrees Celsius.
    SensorC,
}

/// `[signals]`: units of the chamber CSV's `output` and `temp_signal` columns.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SignalsSpec {
    /// Unit of the `output` column.
    pub output: OutputUnit,
    /// Meaning of the `temp_signal` column.
    pub temp_signal: TempSignal,
}

/// A value that makes no physical sense, by dotted key.
#[derive(Debug, Clone, PartialEq)]
pub struct Invalid {
    /// Dotted key, e.g. `plate.thickness_um` or `arm[3].density_cm3`.
    pub field: String,
    /// What is wrong.
    pub message: String,
}

impl Invalid {
    /// A new invalid-value report.
    pub fn new(field: impl Into<String>, message: impl Into<String>) -> Invalid {
        Invalid {
            field: field.into(),
            message: message.into(),
        }
    }

    /// Locates the report in the spec text (line 0 when there is no text,
    /// i.e. the spec was built in code).
    pub fn located(self, text: Option<&str>) -> SpecError {
        let line = text.map_or(0, |t| locate::line_of(t, &self.field));
        SpecError {
            line,
            field: self.field,
            message: self.message,
        }
    }
}

/// Lowest and highest dopant density the element models accept, in cm^-3.
pub const DENSITY_RANGE_CM3: (f64, f64) = (1e10, 1e21);

/// Lowest temperature the element models accept, in kelvin.
pub const MIN_T_K: f64 = 1.0;

/// Requires a finite value strictly above zero.
pub(crate) fn positive(field: &str, value: f64, unit: &str) -> Result<(), Invalid> {
    if value.is_finite() && value > 0.0 {
        Ok(())
    } else {
        Err(Invalid::new(
            field,
            format!("must be a finite value above 0 {unit}, got {value}"),
        ))
    }
}

/// Requires a finite, non-zero value.
pub(crate) fn nonzero(field: &str, value: f64) -> Result<(), Invalid> {
    if value.is_finite() && value != 0.0 {
        Ok(())
    } else {
        Err(Invalid::new(
            field,
            format!("must be finite and not zero, got {value}"),
        ))
    }
}

/// Requires a dopant density inside [`DENSITY_RANGE_CM3`].
pub(crate) fn density(field: &str, value: f64) -> Result<(), Invalid> {
    let (lo, hi) = DENSITY_RANGE_CM3;
    if value.is_finite() && (lo..=hi).contains(&value) {
        Ok(())
    } else {
        Err(Invalid::new(
            field,
            format!("density {value:e} cm^-3 is outside {lo:e}..={hi:e} cm^-3"),
        ))
    }
}

impl StimulusSpec {
    pub(crate) fn check(&self) -> Result<(), Invalid> {
        nonzero("stimulus.full_scale", self.full_scale)
    }
}

impl TemperatureSpec {
    pub(crate) fn check(&self) -> Result<(), Invalid> {
        let min_c = MIN_T_K - crate::physics::constants::ZERO_C_K;
        for (field, v) in [
            ("temperature.min_c", self.min_c),
            ("temperature.max_c", self.max_c),
            ("temperature.reference_c", self.reference_c),
        ] {
            if !v.is_finite() || v < min_c {
                return Err(Invalid::new(
                    field,
                    format!("{v} C is below {min_c} C ({MIN_T_K} K) or not finite"),
                ));
            }
        }
        if self.max_c <= self.min_c {
            return Err(Invalid::new(
                "temperature.max_c",
                format!("{} C must be above min_c {} C", self.max_c, self.min_c),
            ));
        }
        if !(self.min_c..=self.max_c).contains(&self.reference_c) {
            return Err(Invalid::new(
                "temperature.reference_c",
                format!(
                    "{} C is outside min_c..max_c ({}..{} C)",
                    self.reference_c, self.min_c, self.max_c
                ),
            ));
        }
        Ok(())
    }
}

impl ExcitationSpec {
    pub(crate) fn check(&self) -> Result<(), Invalid> {
        match self.mode {
            ExcitationMode::Voltage => match self.voltage_v {
                Some(v) => positive("excitation.voltage_v", v, "V"),
                None => Err(Invalid::new(
                    "excitation.voltage_v",
                    "required when mode = \"voltage\"",
                )),
            },
            ExcitationMode::Current => match self.current_a {
                Some(a) => positive("excitation.current_a", a, "A"),
                None => Err(Invalid::new(
                    "excitation.current_a",
                    "required when mode = \"current\"",
                )),
            },
        }
    }
}

impl AdcSpec {
    pub(crate) fn check(&self) -> Result<(), Invalid> {
        if !(1..=32).contains(&self.bits) {
            return Err(Invalid::new(
                "adc.bits",
                format!("must be 1..=32, got {}", self.bits),
            ));
        }
        positive("adc.input_span_v", self.input_span_v, "V")
    }

    /// Size of one code step in volts.
    pub fn lsb_v(&self) -> f64 {
        self.input_span_v / 2f64.powi(self.bits as i32)
    }

    /// The signed code of a voltage, clamped to the converter's range.
    pub fn code(&self, v: f64) -> i64 {
        let half = 1i64 << (self.bits - 1);
        let code = (v / self.lsb_v()).round();
        if code.is_nan() {
            return 0;
        }
        (code.clamp(-(half as f64), (half - 1) as f64)) as i64
    }
}

/// The top-level `kind` key alone (other keys are checked by the kind's own struct).
#[derive(Deserialize)]
struct KindOnly {
    kind: ElementKind,
}

/// Parses and checks a spec; errors carry the line and dotted key.
pub fn parse_spec(text: &str) -> Result<ElementSpec, SpecError> {
    let kind = toml::from_str::<KindOnly>(text)
        .map_err(|e| locate::from_toml(text, &e))?
        .kind;
    let spec = match kind {
        ElementKind::Bridge => {
            ElementSpec::Bridge(toml::from_str(text).map_err(|e| locate::from_toml(text, &e))?)
        }
        ElementKind::Hall => {
            ElementSpec::Hall(toml::from_str(text).map_err(|e| locate::from_toml(text, &e))?)
        }
    };
    spec.check().map_err(|e| e.located(Some(text)))?;
    Ok(spec)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn adc_codes_round_and_clamp() {
        // 16 bits over 0.02 V: one step is 0.02 / 65536 V; codes by hand:
        // 1 mV / step = 3276.8 -> 3277; +/-10 mV is the range end, where the
        // positive side clamps to 32767 (two's complement).
        let adc = AdcSpec {
            bits: 16,
            input_span_v: 0.02,
        };
        let table = [
            (0.0, 0),
            (1e-3, 3277),
            (-1e-3, -3277),
            (0.01, 32767),
            (-0.01, -32768),
            (1.0, 32767),
            (f64::NAN, 0),
        ];
        for (v, want) in table {
            let got = adc.code(v);
            assert_eq!(got, want, "{v} V: got code {got}, expected {want}");
        }
        assert_eq!(adc.lsb_v(), 0.02 / 65536.0);
    }

    #[test]
    fn checks_name_the_key() {
        // (spec part, expected failing key)
        let t = TemperatureSpec {
            min_c: -20.0,
            max_c: 85.0,
            reference_c: 90.0,
        };
        assert_eq!(
            t.check().map_err(|e| e.field),
            Err("temperature.reference_c".to_string())
        );
        // Same check as above with another bad field.
        let t = TemperatureSpec {
            min_c: -273.0,
            max_c: 85.0,
            reference_c: 25.0,
        };
        assert_eq!(
            t.check().map_err(|e| e.field),
            Err("temperature.min_c".to_string())
        );
        let x = ExcitationSpec {
            mode: ExcitationMode::Current,
            voltage_v: Some(3.3),
            current_a: None,
        };
        assert_eq!(
            x.check().map_err(|e| e.field),
            Err("excitation.current_a".to_string())
        );
        let a = AdcSpec {
            bits: 33,
            input_span_v: 1.0,
        };
        assert_eq!(a.check().map_err(|e| e.field), Err("adc.bits".to_string()));
    }
}
