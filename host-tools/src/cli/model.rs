//! `semidrift model`: the full physics model of one sample over temperature,
//! as an aligned table, JSON or CSV.

use super::CliError;
use super::range::{TemperatureArgs, ZERO_CELSIUS_K};
use super::sample_args::{SampleArgs, species_symbol};
use crate::physics::{Dopant, HallFactorSource, ModelPoint, Sample, evaluate};
use clap::Args;
use serde::ser::{SerializeMap, Serializer};
use std::io::Write;

/// Options of `semidrift model`.
#[derive(Debug, Args)]
pub struct ModelArgs {
    /// The sample.
    #[command(flatten)]
    pub sample: SampleArgs,
    /// The temperature(s).
    #[command(flatten)]
    pub temperature: TemperatureArgs,
    /// Print JSON (an object with the sample and one row per temperature) to stdout.
    #[arg(long, conflicts_with = "csv")]
    pub json: bool,
    /// Print CSV with a header row.
    #[arg(long)]
    pub csv: bool,
}

/// How a column prints in the human-readable table.
#[derive(Debug, Clone, Copy)]
enum Shape {
    /// Fixed point with this many decimals.
    Fixed(usize),
    /// Scientific with this many decimals in the mantissa.
    Sci(usize),
}

/// One output column: its contract name, table shape and value.
struct Column {
    name: &'static str,
    shape: Shape,
    value: fn(&ModelPoint) -> Option<f64>,
}

/// The row fields, in output order. JSON keys and CSV header use these names
/// (the output contract of `semidrift model`, checked by `tests/cli_model.rs`).
const COLUMNS: &[Column] = &[
    Column {
        name: "t_k",
        shape: Shape::Fixed(2),
        value: |p| Some(p.t_k),
    },
    Column {
        name: "t_c",
        shape: Shape::Fixed(2),
        value: |p| Some(t_c(p.t_k)),
    },
    Column {
        name: "eg_ev",
        shape: Shape::Fixed(4),
        value: |p| Some(p.eg_ev),
    },
    Column {
        name: "ni_cm3",
        shape: Shape::Sci(3),
        value: |p| Some(p.ni_cm3),
    },
    Column {
        name: "n_cm3",
        shape: Shape::Sci(3),
        value: |p| Some(p.n_cm3),
    },
    Column {
        name: "p_cm3",
        shape: Shape::Sci(3),
        value: |p| Some(p.p_cm3),
    },
    Column {
        name: "mu_n_cm2_vs",
        shape: Shape::Fixed(1),
        value: |p| Some(p.mu_n_cm2_vs),
    },
    Column {
        name: "mu_p_cm2_vs",
        shape: Shape::Fixed(1),
        value: |p| Some(p.mu_p_cm2_vs),
    },
    Column {
        name: "rho_ohm_cm",
        shape: Shape::Sci(4),
        value: |p| Some(p.rho_ohm_cm),
    },
    Column {
        name: "hall_coefficient_cm3_c",
        shape: Shape::Sci(4),
        value: |p| Some(p.hall_coefficient_cm3_c),
    },
    Column {
        name: "piezo_factor",
        shape: Shape::Fixed(4),
        value: |p| p.piezo_factor,
    },
    Column {
        name: "donors_ionized_cm3",
        shape: Shape::Sci(3),
        value: |p| Some(p.donors_ionized_cm3),
    },
    Column {
        name: "acceptors_ionized_cm3",
        shape: Shape::Sci(3),
        value: |p| Some(p.acceptors_ionized_cm3),
    },
    Column {
        name: "fermi_from_ev_ev",
        shape: Shape::Fixed(4),
        value: |p| Some(p.fermi_from_ev_ev),
    },
    Column {
        name: "hall_factor_n",
        shape: Shape::Fixed(4),
        value: |p| Some(p.hall_factor_n),
    },
    Column {
        name: "hall_factor_p",
        shape: Shape::Fixed(4),
        value: |p| Some(p.hall_factor_p),
    },
    Column {
        name: "hall_mobility_cm2_vs",
        shape: Shape::Fixed(1),
        value: |p| Some(p.hall_mobility_cm2_vs),
    },
    Column {
        name: "mu_n_per_free_carrier_cm2_vs",
        shape: Shape::Fixed(1),
        value: |p| Some(p.mu_n_per_free_carrier_cm2_vs),
    },
    Column {
        name: "mu_p_per_free_carrier_cm2_vs",
        shape: Shape::Fixed(1),
        value: |p| Some(p.mu_p_per_free_carrier_cm2_vs),
    },
];

/// Runs `semidrift model`.
pub fn run(args: ModelArgs, out: &mut dyn Write) -> Result<(), CliError> {
    let sample = args.sample.to_sample()?;
    let temperatures_k = args.temperature.temperatures_k()?;
    let rows = sweep(&args.sample, &sample, &args.temperature, &temperatures_k)?;
    let text = if args.json {
        json(&sample, &rows)?
    } else if args.csv {
        csv(&rows)
    } else {
        table(&sample, &rows)
    };
    out.write_all(text.as_bytes())?;
    Ok(())
}

/// Evaluates the model at every temperature; the first failure becomes an
/// input error naming the option responsible.
pub fn sweep(
    args: &SampleArgs,
    sample: &Sample,
    temperature: &TemperatureArgs,
    temperatures_k: &[f64],
) -> Result<Vec<ModelPoint>, CliError> {
    let (t_option, t_value) = temperature.given();
    temperatures_k
        .iter()
        .map(|&t_k| evaluate(sample, t_k).map_err(|e| args.model_error(&e, t_option, t_value)))
        .collect()
}

/// A column's value with negative zero folded into zero, so that a quantity
/// that is exactly 0 never prints as `-0`.
fn value(column: &Column, point: &ModelPoint) -> Option<f64> {
    (column.value)(point).map(|v| v + 0.0)
}

/// Celsius from kelvin, rounded like the requested temperatures.
fn t_c(t_k: f64) -> f64 {
    ((t_k - ZERO_CELSIUS_K) * 1e9).round() / 1e9
}

/// One row as a JSON object with the columns in contract order.
struct JsonRow<'a>(&'a ModelPoint);

impl serde::Serialize for JsonRow<'_> {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        let mut map = s.serialize_map(Some(COLUMNS.len()))?;
        for c in COLUMNS {
            // Non-finite values have no JSON number; they print as null.
            map.serialize_entry(c.name, &value(c, self.0).filter(|v| v.is_finite()))?;
        }
        map.end()
    }
}

/// The JSON document: sample, then rows.
#[derive(serde::Serialize)]
struct JsonDoc<'a> {
    material: &'a str,
    donors: Vec<JsonDopant>,
    acceptors: Vec<JsonDopant>,
    /// Source of `hall_factor_n` (a short key; the table prints the citation).
    hall_factor_n_source: &'static str,
    /// Source of `hall_factor_p`.
    hall_factor_p_source: &'static str,
    rows: Vec<JsonRow<'a>>,
}

/// A dopant in the JSON document.
#[derive(serde::Serialize)]
struct JsonDopant {
    species: &'static str,
    density_cm3: f64,
}

fn json_dopants(dopants: &[Dopant]) -> Vec<JsonDopant> {
    dopants
        .iter()
        .map(|d| JsonDopant {
            species: species_symbol(d.species),
            density_cm3: d.density_cm3,
        })
        .collect()
}

/// Hall-factor sources of the sample's material (they depend on the
/// material only: published data for Si, theory elsewhere).
fn sources(sample: &Sample) -> (HallFactorSource, HallFactorSource) {
    use crate::physics::hall_factor::hall_factor;
    use crate::physics::transport::Carrier;
    let of = |carrier| hall_factor(sample.material, carrier, 300.0, 1.0, 1.0, -10.0).1;
    (of(Carrier::Electron), of(Carrier::Hole))
}

/// Renders the JSON document (pretty, with a final newline).
pub fn json(sample: &Sample, rows: &[ModelPoint]) -> Result<String, CliError> {
    let doc = JsonDoc {
        material: sample.material.name(),
        donors: json_dopants(&sample.donors),
        acceptors: json_dopants(&sample.acceptors),
        hall_factor_n_source: sources(sample).0.key(),
        hall_factor_p_source: sources(sample).1.key(),
        rows: rows.iter().map(JsonRow).collect(),
    };
    let mut text = serde_json::to_string_pretty(&doc)
        .map_err(|e| CliError::Input(format!("cannot encode JSON: {e}")))?;
    text.push('\n');
    Ok(text)
}

/// Renders CSV: header with the contract names; temperatures in shortest
/// exact form, other values with ten significant digits; empty when absent.
pub fn csv(rows: &[ModelPoint]) -> String {
    let header: Vec<&str> = COLUMNS.iter().map(|c| c.name).collect();
    crate::station::output::csv_text(
        &header,
        rows.iter().map(|row| {
            COLUMNS.iter().map(move |c| match value(c, row) {
                None => String::new(),
                Some(v) if c.name.starts_with("t_") => format!("{v}"),
                Some(v) => format!("{v:.9e}"),
            })
        }),
    )
}

/// Renders the aligned human-readable table, with a line describing the sample.
pub fn table(sample: &Sample, rows: &[ModelPoint]) -> String {
    let describe = |ds: &[Dopant]| {
        if ds.is_empty() {
            "none".to_string()
        } else {
            ds.iter()
                .map(|d| format!("{}={:e}", species_symbol(d.species), d.density_cm3))
                .collect::<Vec<_>>()
                .join(" ")
        }
    };
    let shown: Vec<&Column> = COLUMNS
        .iter()
        .filter(|c| c.name != "piezo_factor" || rows.iter().any(|r| r.piezo_factor.is_some()))
        .collect();
    let cells: Vec<Vec<String>> = rows
        .iter()
        .map(|r| {
            shown
                .iter()
                .map(|c| match (value(c, r), c.shape) {
                    (None, _) => "-".to_string(),
                    (Some(v), Shape::Fixed(d)) => format!("{v:.d$}"),
                    (Some(v), Shape::Sci(d)) => format!("{v:.d$e}"),
                })
                .collect()
        })
        .collect();
    let widths: Vec<usize> = shown
        .iter()
        .enumerate()
        .map(|(i, c)| {
            cells
                .iter()
                .map(|r| r[i].len())
                .chain([c.name.len()])
                .max()
                .unwrap_or(0)
        })
        .collect();
    let line = |items: Vec<&str>| {
        let padded: Vec<String> = items
            .iter()
            .zip(&widths)
            .map(|(s, w)| format!("{s:>w$}"))
            .collect();
        padded.join("  ") + "\n"
    };
    let mut text = format!(
        "# material {}; donors (cm^-3): {}; acceptors (cm^-3): {}\n",
        sample.material.name(),
        describe(&sample.donors),
        describe(&sample.acceptors)
    );
    let (source_n, source_p) = sources(sample);
    text.push_str(&format!(
        "# hall_factor_n: {}\n# hall_factor_p: {}\n",
        source_n.citation(),
        source_p.citation()
    ));
    text.push_str(&line(shown.iter().map(|c| c.name).collect()));
    for row in &cells {
        text.push_str(&line(row.iter().map(String::as_str).collect()));
    }
    text
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physics::{HallFactorSource, Material, Species};

    fn point(t_k: f64, piezo: Option<f64>) -> ModelPoint {
        ModelPoint {
            t_k,
            eg_ev: 1.1245,
            ni_cm3: 9.65e9,
            n_cm3: 1e15,
            p_cm3: 9.3e4,
            donors_ionized_cm3: 1e15,
            acceptors_ionized_cm3: 0.0,
            fermi_from_ev_ev: 0.86,
            mu_n_cm2_vs: 1350.25,
            mu_p_cm2_vs: 480.0,
            mu_n_per_free_carrier_cm2_vs: 1350.25,
            mu_p_per_free_carrier_cm2_vs: 480.0,
            rho_ohm_cm: 4.62,
            hall_coefficient_cm3_c: -7.3e3,
            piezo_factor: piezo,
            hall_factor_n: 1.18,
            hall_factor_p: 0.75,
            hall_factor_n_source: HallFactorSource::OhtaSakata1978,
            hall_factor_p_source: HallFactorSource::LinEtAl1981,
            hall_mobility_cm2_vs: -1593.0,
        }
    }

    fn sample() -> Sample {
        Sample::new(Material::Si, &[(Species::P, 1e15)], &[])
    }

    #[test]
    fn json_has_every_contract_field_in_order() {
        let text = json(&sample(), &[point(300.0, Some(1.0))]).unwrap();
        let v: serde_json::Value = serde_json::from_str(&text).unwrap();
        assert_eq!(v["material"], "si");
        assert_eq!(v["donors"][0]["species"], "P");
        assert_eq!(v["donors"][0]["density_cm3"], 1e15);
        let row = &v["rows"][0];
        for c in COLUMNS {
            assert!(row.get(c.name).is_some(), "missing {} in {row}", c.name);
        }
        assert_eq!(row["t_c"], 26.85, "t_c of 300 K");
        // Order in the text follows COLUMNS.
        let positions: Vec<usize> = COLUMNS
            .iter()
            .map(|c| text.find(&format!("\"{}\"", c.name)).unwrap())
            .collect();
        assert!(
            positions.windows(2).all(|w| w[0] < w[1]),
            "order {positions:?}"
        );
        let none = json(&sample(), &[point(300.0, None)]).unwrap();
        assert!(none.contains("\"piezo_factor\": null"), "{none}");
    }

    #[test]
    fn csv_header_matches_columns_and_formats_are_fixed() {
        let text = csv(&[point(300.0, None), point(250.5, Some(0.9))]);
        let lines: Vec<&str> = text.lines().collect();
        assert_eq!(lines[0].split(',').count(), COLUMNS.len());
        assert!(lines[0].starts_with("t_k,t_c,eg_ev,ni_cm3,n_cm3,p_cm3,mu_n_cm2_vs"));
        assert!(
            lines[1].starts_with("300,26.85,1.124500000e0,9.650000000e9,"),
            "{}",
            lines[1]
        );
        let fields: Vec<&str> = lines[1].split(',').collect();
        assert_eq!(fields[10], "", "absent piezo factor is an empty cell");
        assert!(lines[2].starts_with("250.5,-22.65,"), "{}", lines[2]);
    }

    #[test]
    fn table_is_aligned_and_hides_piezo_when_absent() {
        let text = table(&sample(), &[point(300.0, None), point(1000.0, None)]);
        let lines: Vec<&str> = text.lines().collect();
        assert!(lines[0].contains("donors (cm^-3): P=1e15"), "{}", lines[0]);
        // Lines 1 and 2 name the Hall-factor sources (published data for Si).
        assert!(
            lines[1].starts_with("# hall_factor_n: Si electrons"),
            "{}",
            lines[1]
        );
        assert!(
            lines[2].starts_with("# hall_factor_p: Si holes"),
            "{}",
            lines[2]
        );
        assert!(!lines[3].contains("piezo_factor"));
        assert_eq!(lines[3].len(), lines[4].len(), "header and rows align");
        assert_eq!(lines[4].len(), lines[5].len(), "rows align");
        let with = table(&sample(), &[point(300.0, Some(1.0))]);
        assert!(with.contains("piezo_factor"));
    }
}
