//! Temperature options shared by the subcommands: one value or an inclusive
//! `START:STOP:STEP` sweep, in kelvin or degrees Celsius.

use super::CliError;
use clap::Args;

/// 0 degC in kelvin (ITS-90 definition of the Celsius scale).
pub const ZERO_CELSIUS_K: f64 = 273.15;

/// Most points one sweep may have; a typo such as `20:1000:0.0001` is refused
/// rather than silently producing millions of rows.
pub const MAX_POINTS: usize = 100_000;

/// Round temperatures to this many decimal places so that index stepping
/// (`start + i * step`) prints as `300`, not `300.00000000000006`.
const DECIMALS: i32 = 9;

/// `--kelvin` or `--celsius`, exactly one of them.
#[derive(Debug, Clone, Args)]
#[group(required = true, multiple = false)]
pub struct TemperatureArgs {
    /// Temperature in kelvin: one value (`300`) or an inclusive sweep `START:STOP:STEP` (`200:400:10`).
    #[arg(long, value_name = "K|START:STOP:STEP", allow_hyphen_values = true)]
    pub kelvin: Option<String>,
    /// Temperature in degrees Celsius: one value (`25`) or an inclusive sweep `START:STOP:STEP` (`-40:125:5`).
    #[arg(long, value_name = "C|START:STOP:STEP", allow_hyphen_values = true)]
    pub celsius: Option<String>,
}

impl TemperatureArgs {
    /// The option actually given and its raw value, e.g. `("--kelvin", "300")`.
    pub fn given(&self) -> (&'static str, &str) {
        match (&self.kelvin, &self.celsius) {
            (Some(k), _) => ("--kelvin", k.as_str()),
            (None, Some(c)) => ("--celsius", c.as_str()),
            // clap's required group makes this unreachable; report it as usage.
            (None, None) => ("--kelvin", ""),
        }
    }

    /// The requested temperatures in kelvin, checked to be above 0 K.
    pub fn temperatures_k(&self) -> Result<Vec<f64>, CliError> {
        let (option, value) = self.given();
        let values = parse_sweep(option, value)?;
        let offset_k = if option == "--celsius" {
            ZERO_CELSIUS_K
        } else {
            0.0
        };
        values
            .into_iter()
            .map(|v| {
                let t_k = round_decimals(v + offset_k);
                if t_k > 0.0 {
                    Ok(t_k)
                } else {
                    Err(CliError::option(
                        option,
                        value,
                        format!("temperature {t_k} K is not above absolute zero"),
                    ))
                }
            })
            .collect()
    }
}

/// Parses one number or an inclusive `START:STOP:STEP` sweep into its values.
///
/// The i-th value is `start + i * step` (computed from the index, so rounding
/// errors do not accumulate); `stop` is included when it lies on the grid
/// within one part in 10^9 of a step.
pub fn parse_sweep(option: &str, value: &str) -> Result<Vec<f64>, CliError> {
    let number = |part: &str, what: &str| -> Result<f64, CliError> {
        let x: f64 = part.trim().parse().map_err(|_| {
            CliError::option(option, value, format!("{what} '{part}' is not a number"))
        })?;
        if x.is_finite() {
            Ok(x)
        } else {
            Err(CliError::option(
                option,
                value,
                format!("{what} '{part}' is not finite"),
            ))
        }
    };
    let parts: Vec<&str> = value.split(':').collect();
    match parts.as_slice() {
        [single] => Ok(vec![round_decimals(number(single, "value")?)]),
        [start, stop, step] => {
            let start = number(start, "START")?;
            let stop = number(stop, "STOP")?;
            let step = number(step, "STEP")?;
            if step <= 0.0 {
                return Err(CliError::option(
                    option,
                    value,
                    "STEP must be greater than 0",
                ));
            }
            if stop < start {
                return Err(CliError::option(option, value, "STOP is below START"));
            }
            let intervals = ((stop - start) / step + 1e-9).floor();
            // NaN cannot occur (all inputs are finite), but a huge ratio can.
            if intervals >= MAX_POINTS as f64 {
                return Err(CliError::option(
                    option,
                    value,
                    format!("sweep has more than {MAX_POINTS} points"),
                ));
            }
            // `intervals` is a non-negative whole number below MAX_POINTS.
            let count = intervals as usize + 1;
            Ok((0..count)
                .map(|i| round_decimals(start + i as f64 * step))
                .collect())
        }
        _ => Err(CliError::option(
            option,
            value,
            "expected one number or START:STOP:STEP",
        )),
    }
}

/// Rounds to [`DECIMALS`] decimal places (leaves huge values untouched).
fn round_decimals(x: f64) -> f64 {
    let scale = 10f64.powi(DECIMALS);
    let scaled = x * scale;
    if scaled.abs() < 1e15 {
        scaled.round() / scale
    } else {
        x
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sweeps_parse_by_index() {
        // (input, expected values); exact comparison: values are rounded to
        // 1e-9 and the expected ones are exactly representable after rounding.
        let cases: &[(&str, &[f64])] = &[
            ("300", &[300.0]),
            ("  77.5 ", &[77.5]),
            ("200:210:5", &[200.0, 205.0, 210.0]),
            ("200:212:5", &[200.0, 205.0, 210.0]),
            ("0:0.3:0.1", &[0.0, 0.1, 0.2, 0.3]),
            ("-40:-30:5", &[-40.0, -35.0, -30.0]),
            ("5:5:1", &[5.0]),
        ];
        for (input, expected) in cases {
            let got = parse_sweep("--kelvin", input).unwrap();
            assert_eq!(
                &got, expected,
                "input {input}: got {got:?}, expected {expected:?}"
            );
        }
    }

    #[test]
    fn bad_sweeps_are_refused_with_the_option_named() {
        for (input, fragment) in [
            ("abc", "not a number"),
            ("1:2", "START:STOP:STEP"),
            ("1:2:3:4", "START:STOP:STEP"),
            ("1:2:0", "STEP must be greater than 0"),
            ("1:2:-1", "STEP must be greater than 0"),
            ("10:1:1", "STOP is below START"),
            ("0:1e9:1", "more than"),
            ("nan", "not finite"),
            ("1:inf:1", "not finite"),
        ] {
            let err = parse_sweep("--kelvin", input).unwrap_err();
            let msg = err.to_string();
            assert!(
                msg.starts_with(&format!("--kelvin '{input}'")) && msg.contains(fragment),
                "input {input}: message {msg:?} should name the option and say {fragment:?}"
            );
            assert_eq!(err.exit_code(), 2, "input {input}");
        }
    }

    #[test]
    fn celsius_converts_and_absolute_zero_is_refused() {
        let t = TemperatureArgs {
            kelvin: None,
            celsius: Some("-40:-30:10".into()),
        };
        assert_eq!(t.temperatures_k().unwrap(), vec![233.15, 243.15]);
        let zero = TemperatureArgs {
            kelvin: Some("0".into()),
            celsius: None,
        };
        assert!(
            zero.temperatures_k()
                .unwrap_err()
                .to_string()
                .contains("absolute zero")
        );
        let cold = TemperatureArgs {
            kelvin: None,
            celsius: Some("-300".into()),
        };
        assert!(
            cold.temperatures_k()
                .unwrap_err()
                .to_string()
                .starts_with("--celsius '-300'")
        );
    }
}
