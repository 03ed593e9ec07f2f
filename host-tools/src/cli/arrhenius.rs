//! `semidrift arrhenius DATA.csv`: activation energy of conduction (or of a
//! carrier density) over a temperature window, with its interpretations.

use super::CliError;
use crate::arrhenius::{ArrheniusFit, PrefactorPower, fit};
use crate::arrhenius_check::{
    GENERIC_INTRINSIC_CONDUCTIVITY_POWER, INTRINSIC_DENSITY_POWER, POWER_IMPLAUSIBLE,
    POWER_SYSTEMATIC, RegimeCheck, SI_INTRINSIC_CONDUCTIVITY_POWER, ea_systematic_ev,
    power_implausible, regime_check,
};
use crate::arrhenius_model::{ModelFit, fit_model_any_start};
use crate::cli::range::ZERO_CELSIUS_K;
use crate::cli::sample_args::parse_species;
use crate::physics::Material;
use clap::{Args, ValueEnum};
use std::io::Write;
use std::path::PathBuf;

/// Value columns looked for, in this order, when `--column` is not given.
const DEFAULT_COLUMNS: [&str; 4] = [
    "conductivity",
    "conductivity_s_cm",
    "resistance_ohm",
    "rho_ohm_cm",
];

/// Conduction regime the user says the window lies in.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum Regime {
    /// Intrinsic range: 2 Ea is the band gap linearly extrapolated to 0 K.
    Intrinsic,
    /// Freeze-out with weak compensation: 2 Ea is the dopant ionization energy.
    FreezeOut,
    /// Freeze-out with strong compensation: Ea is the dopant ionization energy.
    FreezeOutCompensated,
}

impl Regime {
    fn name(self) -> &'static str {
        match self {
            Regime::Intrinsic => "intrinsic",
            Regime::FreezeOut => "freeze-out",
            Regime::FreezeOutCompensated => "freeze-out-compensated",
        }
    }
}

/// Options of `semidrift arrhenius`.
#[derive(Debug, Args)]
pub struct ArrheniusArgs {
    /// CSV file with a header: `t_k` or `t_c`, and `conductivity`, `resistance_ohm`
    /// or `rho_ohm_cm` (or the column named by `--column`); other columns are ignored.
    pub data: PathBuf,
    /// Value column to fit; names containing "resist" or starting with "rho" are
    /// inverted (conductivity ~ 1/R), others (e.g. `n_cm3`) are fitted directly.
    #[arg(long, value_name = "NAME")]
    pub column: Option<String>,
    /// Lowest temperature of the fit window in kelvin (inclusive).
    #[arg(long, value_name = "K", allow_hyphen_values = true)]
    pub from_k: Option<f64>,
    /// Highest temperature of the fit window in kelvin (inclusive).
    #[arg(long, value_name = "K", allow_hyphen_values = true)]
    pub to_k: Option<f64>,
    /// Fix the prefactor's temperature power m instead of fitting it, e.g. 1.5
    /// for N_c,v alone; intrinsic conductivity: 1.5 minus the lattice-mobility
    /// exponent (about 1.5 - 2.4 = -0.9 for electrons in Si).
    #[arg(long, value_name = "M", allow_hyphen_values = true)]
    pub prefactor_power: Option<f64>,
    /// Regime the window lies in, to pick the interpretation reported as `selected`.
    #[arg(long, value_enum)]
    pub regime: Option<Regime>,
    /// Material of the sample (`si`): with `--regime intrinsic` and no
    /// `--prefactor-power`, m defaults to the material's published laws
    /// (Si conductivity: 3/2 - 2.3 = -0.8; a density column: 3/2), with a
    /// systematic uncertainty of 0.2 in m added to Ea's uncertainty.
    #[arg(long, value_name = "NAME")]
    pub material: Option<String>,
    /// Also fit the full model of `--material` doped with this species (e.g.
    /// `P`) to the data: dopant density and band-gap offset free, over any
    /// window, mixed regimes included; reports both with uncertainties.
    #[arg(long, value_name = "SPECIES", requires = "material")]
    pub model_dopant: Option<String>,
    /// Print JSON to stdout.
    #[arg(long)]
    pub json: bool,
}

/// The fit with its checks.
struct Report {
    fit: ArrheniusFit,
    /// Systematic standard uncertainty of Ea from the prefactor power, eV.
    systematic_ev: f64,
    /// Whether m came from `--material`'s laws.
    material_default: bool,
    /// The mixed-regime check (None when the window is too short for it).
    check: Option<RegimeCheck>,
    /// The regime's reference power when the fitted m is implausibly far from it.
    implausible_power: Option<f64>,
    /// The model-based extraction, when asked for.
    model_fit: Option<ModelFit>,
}

/// The model-based extraction of `--model-dopant` on the window.
fn model_fit(args: &ArrheniusArgs, window: &[(f64, f64)]) -> Result<Option<ModelFit>, CliError> {
    let Some(symbol) = args.model_dopant.as_deref() else {
        return Ok(None);
    };
    let species = parse_species(symbol).ok_or_else(|| {
        CliError::option(
            "--model-dopant",
            symbol,
            "unknown species (a chemical symbol such as P or B)",
        )
    })?;
    let name = args.material.as_deref().unwrap_or("");
    let material = Material::from_name(name)
        .ok_or_else(|| CliError::option("--material", name, "unknown material"))?;
    fit_model_any_start(material, species, window)
        .map(Some)
        .map_err(|e| CliError::option("--model-dopant", symbol, e.to_string()))
}

impl Report {
    /// Ea's standard uncertainty, statistical and systematic combined.
    fn total_sigma_ev(&self) -> f64 {
        self.fit.ea_sigma_ev.hypot(self.systematic_ev)
    }

    /// The warning line for a mixed window, if any.
    fn warning(&self) -> Option<String> {
        let Some(c) = self.check.filter(|c| c.mixed) else {
            return self.implausible_power.map(|r| {
                format!(
                    "the fitted m = {:.2} is more than {POWER_IMPLAUSIBLE} from the regime's {r}: the free m is absorbing a second regime; trim the window or fix m (--material, --prefactor-power)",
                    self.fit.prefactor_power
                )
            });
        };
        Some(format!(
            "the window is not one regime: Ea is {:.4} eV over its lowest {} points and {:.4} eV over its highest; trim the {} end (--{} K) until the ends agree",
            c.ea_low_end_ev,
            c.segment_points,
            c.ea_high_end_ev,
            c.trim_end.unwrap_or("low"),
            if c.trim_end == Some("high") {
                "to-k"
            } else {
                "from-k"
            }
        ))
    }
}

/// The prefactor power `--material` implies for the selected regime.
fn material_power(args: &ArrheniusArgs, series: &Series) -> Result<Option<f64>, CliError> {
    let Some(name) = args.material.as_deref() else {
        return Ok(None);
    };
    match Material::from_name(name) {
        Some(Material::Si) => {}
        Some(_) => {
            return Err(CliError::option(
                "--material",
                name,
                "default prefactor laws are published here for si only; give --prefactor-power",
            ));
        }
        None => return Err(CliError::option("--material", name, "unknown material")),
    }
    Ok(match args.regime {
        Some(Regime::Intrinsic) if series.inverted || is_conductivity(&series.column) => {
            Some(SI_INTRINSIC_CONDUCTIVITY_POWER)
        }
        Some(Regime::Intrinsic) => Some(INTRINSIC_DENSITY_POWER),
        _ => None,
    })
}

/// The regime's reference power without a material: intrinsic conductivity
/// `3/2 - 2`, intrinsic density `3/2`; none for freeze-out (the power
/// depends on the compensation and the impurity share of the mobility).
fn generic_power(args: &ArrheniusArgs, series: &Series) -> Option<f64> {
    match args.regime {
        Some(Regime::Intrinsic) if series.inverted || is_conductivity(&series.column) => {
            Some(GENERIC_INTRINSIC_CONDUCTIVITY_POWER)
        }
        Some(Regime::Intrinsic) => Some(INTRINSIC_DENSITY_POWER),
        _ => None,
    }
}

/// Whether a column holds a conductivity (not a carrier density).
fn is_conductivity(column: &str) -> bool {
    column.contains("conduct") || column.starts_with("sigma")
}

/// Which quantity the value column holds.
struct Series {
    column: String,
    inverted: bool,
    points: Vec<(f64, f64)>,
}

/// Runs `semidrift arrhenius`.
pub fn run(args: ArrheniusArgs, out: &mut dyn Write) -> Result<(), CliError> {
    for (opt, v) in [("--from-k", args.from_k), ("--to-k", args.to_k)] {
        if let Some(v) = v.filter(|v| !(v.is_finite() && *v > 0.0)) {
            return Err(CliError::option(
                opt,
                &v.to_string(),
                "must be a temperature above 0 K",
            ));
        }
    }
    if let (Some(lo), Some(hi)) = (args.from_k, args.to_k)
        && hi <= lo
    {
        return Err(CliError::option(
            "--to-k",
            &hi.to_string(),
            format!("must be above --from-k {lo}"),
        ));
    }
    if let Some(m) = args.prefactor_power.filter(|m| !m.is_finite()) {
        return Err(CliError::option(
            "--prefactor-power",
            &m.to_string(),
            "must be finite",
        ));
    }
    let series = read_series(&args.data, args.column.as_deref())?;
    let lo = args.from_k.unwrap_or(0.0);
    let hi = args.to_k.unwrap_or(f64::INFINITY);
    let window: Vec<(f64, f64)> = series
        .points
        .iter()
        .filter(|p| p.0 >= lo && p.0 <= hi)
        .map(|&(t, v)| (t, if series.inverted { 1.0 / v } else { v }))
        .collect();
    let default_power = material_power(&args, &series)?;
    let power = match (args.prefactor_power, default_power) {
        (Some(m), _) => PrefactorPower::Fixed(m),
        (None, Some(m)) => PrefactorPower::Fixed(m),
        (None, None) => PrefactorPower::Free,
    };
    let window_error =
        |e| CliError::Input(format!("{}: window {lo}..{hi} K: {e}", args.data.display()));
    let result = fit(&window, power).map_err(window_error)?;
    // The end segments are fitted at the regime's reference power where
    // there is one (a free m would hide the change), else at the fit's m.
    let reference = default_power.or_else(|| generic_power(&args, &series));
    // Fewer than 6 points cannot be checked; the report says so.
    let check = regime_check(
        &window,
        &result,
        reference.unwrap_or(result.prefactor_power),
    )
    .ok();
    // Systematic part of Ea's uncertainty from the prefactor power: with m
    // from the material's laws, k T_mid times their uncertainty; with m
    // free, the shift between the free fit and the fit at the regime's
    // reference power (what the free m moved Ea by); with m given, none.
    let systematic_ev = match (args.prefactor_power, default_power, reference) {
        (None, Some(_), _) => ea_systematic_ev(POWER_SYSTEMATIC, result.t_min_k, result.t_max_k),
        (None, None, Some(r)) => fit(&window, PrefactorPower::Fixed(r))
            .map(|f| (f.ea_ev - result.ea_ev).abs())
            .map_err(window_error)?,
        _ => 0.0,
    };
    let implausible_power = match (reference, result.prefactor_power_sigma) {
        (Some(r), Some(sigma)) if power_implausible(result.prefactor_power, sigma, r) => Some(r),
        _ => None,
    };
    let model_fit = model_fit(&args, &window)?;
    let report = Report {
        fit: result,
        systematic_ev,
        material_default: default_power.is_some() && args.prefactor_power.is_none(),
        check,
        implausible_power,
        model_fit,
    };
    let text = if args.json {
        json(&args, &series, &report)?
    } else {
        human(&args, &series, &report)
    };
    out.write_all(text.as_bytes())?;
    Ok(())
}

/// Reads the temperature and value columns; errors name file, line and column.
fn read_series(path: &std::path::Path, column: Option<&str>) -> Result<Series, CliError> {
    use crate::station::limits::{MAX_CSV_BYTES, read_capped};
    let file = path.display().to_string();
    let bytes = read_capped(path, MAX_CSV_BYTES, "measurement CSV")
        .map_err(|m| CliError::Input(format!("{file}: {m}")))?;
    let mut reader = csv::ReaderBuilder::new()
        .trim(csv::Trim::All)
        .comment(Some(b'#'))
        .from_reader(bytes.as_slice());
    let headers = reader
        .headers()
        .map_err(|e| CliError::at(&file, 1, "header", e))?
        .clone();
    let find = |name: &str| headers.iter().position(|h| h == name);
    let (t_index, t_name) = match (find("t_k"), find("t_c")) {
        (Some(i), _) => (i, "t_k"),
        (None, Some(i)) => (i, "t_c"),
        (None, None) => {
            return Err(CliError::at(
                &file,
                1,
                "t_k",
                "no column 't_k' or 't_c' in the header",
            ));
        }
    };
    let value_name = match column {
        Some(name) => {
            find(name)
                .ok_or_else(|| CliError::at(&file, 1, name, "no such column in the header"))?;
            name.to_string()
        }
        None => DEFAULT_COLUMNS
            .iter()
            .find(|n| find(n).is_some())
            .ok_or_else(|| {
                CliError::at(
                    &file,
                    1,
                    "conductivity",
                    format!(
                        "none of the columns {} in the header",
                        DEFAULT_COLUMNS.join(", ")
                    ),
                )
            })?
            .to_string(),
    };
    let v_index = find(&value_name).unwrap_or(0);
    let inverted = value_name.contains("resist") || value_name.starts_with("rho");
    let mut points = Vec::new();
    for record in reader.records() {
        let record = record.map_err(|e| {
            let line = e.position().map_or(0, |p| p.line() as usize);
            CliError::at(&file, line, "record", e)
        })?;
        let line = record.position().map_or(0, |p| p.line() as usize);
        let number = |index: usize, name: &str| -> Result<f64, CliError> {
            let cell = record.get(index).unwrap_or("");
            let v: f64 = cell.parse().map_err(|_| {
                CliError::at(&file, line, name, format!("'{cell}' is not a number"))
            })?;
            if v.is_finite() {
                Ok(v)
            } else {
                Err(CliError::at(
                    &file,
                    line,
                    name,
                    format!("'{cell}' is not finite"),
                ))
            }
        };
        let t = number(t_index, t_name)?;
        let t_k = if t_name == "t_c" {
            t + ZERO_CELSIUS_K
        } else {
            t
        };
        if t_k <= 0.0 {
            return Err(CliError::at(
                &file,
                line,
                t_name,
                format!("{t} is not above absolute zero"),
            ));
        }
        let v = number(v_index, &value_name)?;
        if v <= 0.0 {
            return Err(CliError::at(
                &file,
                line,
                &value_name,
                format!("{v} must be greater than 0"),
            ));
        }
        points.push((t_k, v));
    }
    Ok(Series {
        column: value_name,
        inverted,
        points,
    })
}

/// The JSON report.
fn json(args: &ArrheniusArgs, series: &Series, r: &Report) -> Result<String, CliError> {
    let mut shown = r.fit;
    shown.ea_sigma_ev = r.total_sigma_ev();
    let interpretations = shown.interpretations();
    let selected = args
        .regime
        .and_then(|g| interpretations.iter().find(|i| i.regime == g.name()));
    let doc = serde_json::json!({
        "file": args.data.display().to_string(),
        "column": series.column,
        "fitted_quantity": if series.inverted { "reciprocal" } else { "value" },
        "from_k": args.from_k,
        "to_k": args.to_k,
        "prefactor_power_fixed": args.prefactor_power.is_some() || r.material_default,
        "prefactor_power_from_material": r.material_default,
        "fit": r.fit,
        "ea_systematic_ev": r.systematic_ev,
        "ea_total_sigma_ev": r.total_sigma_ev(),
        "regime_check": r.check,
        "prefactor_power_implausible": r.implausible_power.is_some(),
        "warning": r.warning(),
        "regime": args.regime.map(Regime::name),
        "interpretations": interpretations,
        "selected": selected,
        "model_fit": r.model_fit,
    });
    let mut text = serde_json::to_string_pretty(&doc)
        .map_err(|e| CliError::Input(format!("cannot encode JSON: {e}")))?;
    text.push('\n');
    Ok(text)
}

/// The human-readable report.
fn human(args: &ArrheniusArgs, series: &Series, r: &Report) -> String {
    let f = &r.fit;
    let mut s = String::new();
    if let Some(w) = r.warning() {
        s += &format!("WARNING: {w}\n");
    }
    let quantity = if series.inverted {
        format!("1/{}", series.column)
    } else {
        series.column.clone()
    };
    s += &format!(
        "fit of ln({quantity}) = a + m ln T - Ea/(kT) over {} points, {:.2}..{:.2} K\n",
        f.points, f.t_min_k, f.t_max_k
    );
    s += &format!(
        "  Ea = {:.5} eV +- {:.5} eV (standard uncertainty)\n",
        f.ea_ev, f.ea_sigma_ev
    );
    if r.systematic_ev > 0.0 {
        let from = if r.material_default {
            format!("m +- {POWER_SYSTEMATIC}")
        } else {
            "free m against the regime's reference m".to_string()
        };
        s += &format!(
            "  Ea systematic ({from}) = {:.5} eV; combined +- {:.5} eV\n",
            r.systematic_ev,
            r.total_sigma_ev()
        );
    }
    match (f.prefactor_power_sigma, f.ea_power_correlation) {
        (Some(sm), corr) => {
            s += &format!("  m  = {:.4} +- {:.4} (fitted)", f.prefactor_power, sm);
            if let Some(c) = corr {
                s += &format!(", correlation(Ea, m) = {c:.4}");
            }
            s += "\n";
        }
        (None, _) if r.material_default => {
            s += &format!(
                "  m  = {:.4} (from --material's published laws for the regime)\n",
                f.prefactor_power
            );
        }
        (None, _) => s += &format!("  m  = {:.4} (fixed)\n", f.prefactor_power),
    }
    s += &format!("  rms residual of ln = {:.3e}\n", f.rms_residual_ln);
    match r.check {
        Some(c) => {
            s += &format!(
                "  end quarters (m = {:.2}): Ea {:.5} +- {:.5} eV (low T), {:.5} +- {:.5} eV (high T): {}\n",
                c.power,
                c.ea_low_end_ev,
                c.ea_low_end_sigma_ev,
                c.ea_high_end_ev,
                c.ea_high_end_sigma_ev,
                if c.mixed {
                    "mixed regimes"
                } else {
                    "one regime"
                }
            );
        }
        None => s += "  too few points (fewer than 6) to check the window for mixed regimes\n",
    }
    s += "interpretations (pick by the regime of the window; combined uncertainty):\n";
    let mut shown = *f;
    shown.ea_sigma_ev = r.total_sigma_ev();
    for i in shown.interpretations() {
        let mark = if args.regime.map(Regime::name) == Some(i.regime) {
            "  <- selected"
        } else {
            ""
        };
        s += &format!(
            "  {:<24} {:<42} {:.5} +- {:.5} eV{mark}\n",
            i.regime, i.name, i.value_ev, i.sigma_ev
        );
    }
    if let Some(m) = &r.model_fit {
        s += &format!(
            "full-model fit: N = {:.4e} +- {:.2e} cm^-3, gap offset {:+.5} +- {:.5} eV, rms residual of ln = {:.3e}\n",
            m.density_cm3,
            m.density_sigma_cm3,
            m.gap_offset_ev,
            m.gap_offset_sigma_ev,
            m.rms_residual_ln
        );
        s += &format!(
            "  gap at {:.1} K {:.5} eV, extrapolated linearly to 0 K {:.5} +- {:.5} eV\n",
            m.t_mid_k, m.gap_at_t_mid_ev, m.band_gap_0k_linear_ev, m.gap_offset_sigma_ev
        );
    }
    s += "  intrinsic: 2 Ea is the gap extrapolated linearly to 0 K (the gap's linear\n";
    s += "  temperature term is absorbed in the prefactor), above the true gap at 0 K.\n";
    s += "  freeze-out: 2 Ea with weak compensation (N_A << n), Ea with strong (n << N_A).\n";
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    fn write(dir: &tempfile::TempDir, text: &str) -> PathBuf {
        let p = dir.path().join("data.csv");
        std::fs::write(&p, text).unwrap();
        p
    }

    #[test]
    fn columns_are_found_and_errors_are_located() {
        let dir = tempfile::tempdir().unwrap();
        let ok = write(&dir, "note,t_c,resistance_ohm\nx,25,100\ny,30,90\n");
        let s = read_series(&ok, None).unwrap();
        assert_eq!(s.column, "resistance_ohm");
        assert!(s.inverted);
        assert_eq!(s.points, vec![(298.15, 100.0), (303.15, 90.0)]);
        // (file text, expected message fragment)
        for (text, fragment) in [
            (
                "t_k,conductivity\n300,1\n310,abc\n",
                ":3: field 'conductivity': 'abc' is not a number",
            ),
            (
                "t_k,conductivity\n300,-1\n",
                ":2: field 'conductivity': -1 must be greater than 0",
            ),
            (
                "t_k,conductivity\n0,1\n",
                ":2: field 't_k': 0 is not above absolute zero",
            ),
            ("temp,conductivity\n300,1\n", ":1: field 't_k': no column"),
            (
                "t_k,voltage\n300,1\n",
                ":1: field 'conductivity': none of the columns",
            ),
            ("t_k,conductivity\n300\n", ":2: field 'record'"),
        ] {
            let p = write(&dir, text);
            let msg = read_series(&p, None).map(|_| ()).unwrap_err().to_string();
            assert!(
                msg.contains(fragment),
                "file {text:?}: got {msg:?}, expected {fragment:?}"
            );
        }
        let p = write(&dir, "t_k,n_cm3\n300,1e15\n");
        assert!(
            read_series(&p, Some("p_cm3"))
                .map(|_| ())
                .unwrap_err()
                .to_string()
                .contains("field 'p_cm3'")
        );
        assert!(!read_series(&p, Some("n_cm3")).unwrap().inverted);
    }
}
