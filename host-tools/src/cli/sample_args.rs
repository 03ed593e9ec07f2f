//! Sample options shared by `model` and `plot model`: material and dopants.

use super::CliError;
use crate::physics::{Dopant, Material, ModelError, Sample, Species};
use clap::Args;

/// `--material` plus repeatable `--donor` / `--acceptor SPECIES=DENSITY_CM3`.
#[derive(Debug, Clone, Args)]
pub struct SampleArgs {
    /// Host material: si, ge, gaas, insb, inas or 4h-sic.
    #[arg(long, value_name = "NAME")]
    pub material: String,
    /// Donor species and density in cm^-3, e.g. `P=1e15` (repeatable; symbols as in chemistry).
    #[arg(long, value_name = "SPECIES=DENSITY_CM3")]
    pub donor: Vec<String>,
    /// Acceptor species and density in cm^-3, e.g. `B=1e14` (repeatable).
    #[arg(long, value_name = "SPECIES=DENSITY_CM3")]
    pub acceptor: Vec<String>,
}

impl SampleArgs {
    /// Builds the sample, refusing unknown materials or species and
    /// non-physical densities with a message naming the option and value.
    pub fn to_sample(&self) -> Result<Sample, CliError> {
        let material = Material::from_name(&self.material).ok_or_else(|| {
            let known: Vec<&str> = Material::ALL.iter().map(|m| m.name()).collect();
            CliError::option(
                "--material",
                &self.material,
                format!("unknown material (known: {})", known.join(", ")),
            )
        })?;
        let donors = self
            .donor
            .iter()
            .map(|v| parse_dopant("--donor", v))
            .collect::<Result<_, _>>()?;
        let acceptors = self
            .acceptor
            .iter()
            .map(|v| parse_dopant("--acceptor", v))
            .collect::<Result<_, _>>()?;
        Ok(Sample {
            material,
            donors,
            acceptors,
        })
    }

    /// Turns a model error into an input error that names the option the
    /// offending value came from (`t_option`/`t_value` for temperatures).
    pub fn model_error(&self, e: &ModelError, t_option: &str, t_value: &str) -> CliError {
        let dopant_option = |symbol: &str, prefer: Option<&str>| {
            let hits = |opt: &'static str, values: &[String]| {
                values
                    .iter()
                    .find(|v| v.split('=').next().map(str::trim) == Some(symbol))
                    .map(|v| (opt, v.clone()))
            };
            let donor = hits("--donor", &self.donor);
            let acceptor = hits("--acceptor", &self.acceptor);
            match prefer {
                Some("acceptor") => acceptor.or(donor),
                _ => donor.or(acceptor),
            }
        };
        let located = match e {
            ModelError::TemperatureOutOfRange { .. } | ModelError::NoConvergence { .. } => {
                Some((t_option, t_value.to_string()))
            }
            ModelError::DensityOutOfRange { species, .. } => dopant_option(species, None),
            ModelError::UnknownSpecies { species, kind, .. } => dopant_option(species, Some(kind)),
            // Variants the physics module may add later get the plain message.
            #[allow(unreachable_patterns)]
            _ => None,
        };
        match located {
            Some((option, value)) => CliError::option(option, &value, e),
            None => CliError::Input(e.to_string()),
        }
    }
}

/// The chemical symbol of a species (`P`, `As`, ...), as on the command line.
pub fn species_symbol(species: Species) -> &'static str {
    species.symbol()
}

/// Parses a chemical symbol, case-sensitively as in chemistry (`As`, not
/// `AS`: on the command line a wrong case is more likely a typo than intent).
pub fn parse_species(symbol: &str) -> Option<Species> {
    Species::ALL.into_iter().find(|s| s.symbol() == symbol)
}

/// Parses `SPECIES=DENSITY_CM3`; the density must be a finite number > 0.
pub fn parse_dopant(option: &str, value: &str) -> Result<Dopant, CliError> {
    let (symbol, density) = value.split_once('=').ok_or_else(|| {
        CliError::option(option, value, "expected SPECIES=DENSITY_CM3, e.g. P=1e15")
    })?;
    let symbol = symbol.trim();
    let species = parse_species(symbol).ok_or_else(|| {
        CliError::option(
            option,
            value,
            format!("unknown species '{symbol}' (symbols are case-sensitive: P, As, Sb, B, Al, Ga, In, N, ...)"),
        )
    })?;
    let density_cm3: f64 = density.trim().parse().map_err(|_| {
        CliError::option(
            option,
            value,
            format!("density '{}' is not a number", density.trim()),
        )
    })?;
    if !density_cm3.is_finite() || density_cm3 <= 0.0 {
        return Err(CliError::option(
            option,
            value,
            format!("density {density_cm3} cm^-3 must be a finite number greater than 0"),
        ));
    }
    Ok(Dopant {
        species,
        density_cm3,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn dopants_parse_with_case_sensitive_symbols() {
        let cases = [
            ("P=1e15", Species::P, 1e15),
            ("As=2.5e17", Species::As, 2.5e17),
            (" B = 1e14 ", Species::B, 1e14),
            ("Sb=3e16", Species::Sb, 3e16),
        ];
        for (input, species, density) in cases {
            let d = parse_dopant("--donor", input).unwrap();
            assert_eq!(
                (d.species, d.density_cm3),
                (species, density),
                "input {input}"
            );
            assert_eq!(
                species_symbol(d.species),
                input.split('=').next().unwrap().trim()
            );
        }
    }

    #[test]
    fn bad_dopants_are_refused() {
        for (input, fragment) in [
            ("p=1e15", "unknown species 'p'"),
            ("AS=1e15", "unknown species 'AS'"),
            ("Xx=1e15", "unknown species"),
            ("P", "expected SPECIES=DENSITY_CM3"),
            ("P=abc", "'abc' is not a number"),
            ("P=-1e15", "greater than 0"),
            ("P=0", "greater than 0"),
            ("P=inf", "finite"),
        ] {
            let msg = parse_dopant("--donor", input).unwrap_err().to_string();
            assert!(
                msg.starts_with(&format!("--donor '{input}'")) && msg.contains(fragment),
                "input {input}: got {msg:?}, expected the option and {fragment:?}"
            );
        }
    }

    #[test]
    fn unknown_material_is_refused() {
        let args = SampleArgs {
            material: "silicone".into(),
            donor: vec![],
            acceptor: vec![],
        };
        let msg = args.to_sample().unwrap_err().to_string();
        assert!(
            msg.starts_with("--material 'silicone': unknown material"),
            "{msg}"
        );
        let ok = SampleArgs {
            material: "4H-SiC".into(),
            donor: vec!["N=1e16".into()],
            acceptor: vec![],
        };
        assert_eq!(ok.to_sample().unwrap().material, Material::Sic4H);
    }
}
