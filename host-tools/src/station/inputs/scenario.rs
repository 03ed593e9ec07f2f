//! What the station needs to know about an element and its lot: the nominal
//! die, how the output scales with the stimulus, the ADCs, the process spread
//! and the chamber plan. The two demo scenarios of the README are built in.
//!
//! All numbers here are invented for the demo scenarios (simulated data,
//! never a measurement); the physics they feed is the full model's.

use crate::physics::{Dopant, Material, Sample, Species};
use crate::station::bow::Bow;
use crate::station::truth::TruthModels;

/// The kind of sense element.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum ElementKind {
    /// Four-arm piezoresistive Wheatstone bridge, constant-voltage excitation;
    /// output in V, temperature signal = bridge resistance in ohm.
    Bridge,
    /// Current-biased Hall plate; output in V, temperature signal = plate
    /// input resistance in ohm.
    HallPlate,
}

/// An analog-to-digital converter: bipolar input range, resolution and noise.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Adc {
    /// Resolution in bits.
    pub bits: u32,
    /// Input range is +/- this value (in the quantity's units).
    pub range: f64,
    /// Input-referred rms noise (in the quantity's units).
    pub noise_rms: f64,
}

impl Adc {
    /// Size of one code.
    pub fn lsb(&self) -> f64 {
        2.0 * self.range / 2f64.powi(self.bits as i32)
    }

    /// Whether a reading sits on the converter's first or last code (the
    /// input may lie beyond it: the reading says nothing about the input).
    pub fn at_rail(&self, value: f64) -> bool {
        let lsb = self.lsb();
        value >= self.range - 1.5 * lsb || value <= -self.range + 0.5 * lsb
    }
}

/// One-sigma process spread of a lot (relative values are fractions).
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Spread {
    /// Part-to-part doping, relative.
    pub doping_rel: f64,
    /// Arm-to-arm doping mismatch inside one bridge, relative.
    pub arm_doping_rel: f64,
    /// Bridge: arm-to-arm geometric (resistance) mismatch, relative.
    /// Hall plate: contact misalignment, offset as a fraction of the bias
    /// current times the plate resistance.
    pub arm_geometry_rel: f64,
    /// Diaphragm or plate thickness, relative.
    pub thickness_rel: f64,
    /// Hall geometry factor, relative (unused for a bridge).
    pub geometry_rel: f64,
    /// Packaging-stress drift of the span, 1/K (one sigma of the linear term).
    pub package_span_per_k: f64,
    /// Packaging-stress drift of the offset, fraction of span per K.
    pub package_offset_per_k: f64,
    /// Amplitude of the small random smooth term per part, fraction of span.
    pub smooth_rel: f64,
    /// Chamber: rms difference between set point and die temperature, K.
    pub chamber_k: f64,
    /// Design mean of the truth's nonlinearity in the stimulus: deviation
    /// from the terminal line at mid-scale at T_ref, fraction of span
    /// (positive: output above the line).
    #[serde(default)]
    pub nonlinearity_rel: f64,
    /// Part-to-part one-sigma of that mid-scale deviation, fraction of span.
    #[serde(default)]
    pub nonlinearity_sd_rel: f64,
    /// Mean relative change of the mid-scale deviation per kelvin (1/K); each
    /// part draws its own around it (one-sigma 20 % of this mean, see
    /// `truth::NONLINEARITY_PER_K_SD_REL`).
    #[serde(default)]
    pub nonlinearity_per_k: f64,
}

/// An element and its lot, as the station sees them.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Scenario {
    /// Short name used in serial numbers and file names.
    pub name: String,
    /// Whether the scenario describes simulated (invented) data, never a
    /// measurement: set for the built-in demo scenarios and by
    /// `simulate --write-spec`, and carried into every part file fitted
    /// with the scenario, the JSON reports made from those parts and the
    /// Rust/C exports of their images. Files written without the field, and
    /// scenarios made from an element spec (which describes the user's
    /// element), read as not simulated.
    #[serde(default)]
    pub simulated: bool,
    /// Caution carried with simulated data ([`crate::station::output::SIMULATED_CAUTION`];
    /// empty, and not written, when not simulated).
    #[serde(default, skip_serializing_if = "String::is_empty")]
    pub caution: String,
    /// Element kind.
    pub kind: ElementKind,
    /// Nominal die material and doping.
    pub sample: Sample,
    /// Reference temperature of the fitted model, C.
    pub t_ref_c: f64,
    /// Operating range (data sheet), C.
    pub range_c: (f64, f64),
    /// Chamber temperatures used for calibration, C.
    pub cal_temps_c: Vec<f64>,
    /// Held-out check temperatures, C (never used by the fit).
    pub check_temps_c: Vec<f64>,
    /// Stimuli applied at each chamber temperature (spec units).
    pub stimuli: Vec<f64>,
    /// Full-scale stimulus range (min, max); errors are in ppm of max - min.
    pub stimulus_fs: (f64, f64),
    /// Stimulus unit (`bar`, `A`).
    pub stimulus_unit: String,
    /// Bridge: excitation in V. Hall plate: bias current in A.
    pub excitation: f64,
    /// Nominal element resistance at T_ref in ohm (bridge arm or plate).
    pub resistance_ohm: f64,
    /// Bridge: relative arm change at full-scale stimulus at T_ref.
    /// Hall plate: Hall output at full-scale stimulus at T_ref in V.
    pub fs_effect: f64,
    /// ADC of the element output (V).
    pub output_adc: Adc,
    /// ADC of the temperature signal (ohm).
    pub signal_adc: Adc,
    /// Process spread.
    pub spread: Spread,
    /// Total error budget of the compensated part, ppm of span.
    pub budget_ppm: f64,
    /// Nonlinearity of the output in the stimulus from the element's
    /// characterisation (none: the output is linear in the stimulus).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub bow: Option<Bow>,
    /// Model error between calibration temperatures, ppm of span: the worst
    /// held-out error inside the calibrated span of a qualification lot
    /// (parts other than the ones being calibrated), calibrated at the same
    /// temperatures. Budgeted in the fit residual term where the part's own
    /// cross-validation is not (fewer than 4 calibration temperatures).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub model_error_ppm: Option<f64>,
    /// Qualification chamber temperatures, C (none: see
    /// [`Scenario::qualification_plan_temps_c`]).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub qual_temps_c: Option<Vec<f64>>,
    /// Qualification stimuli (none: see [`Scenario::qualification_stimuli`]).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub qual_stimuli: Option<Vec<f64>>,
    /// Published models of the simulated truth (`station::truth`); never the
    /// fitted model's. Scenarios written without it get the default.
    #[serde(default)]
    pub truth: TruthModels,
}

/// `n` values evenly spaced from `lo` to `hi` inclusive (`lo` alone for n = 1).
fn evenly(lo: f64, hi: f64, n: usize) -> Vec<f64> {
    if n < 2 {
        return vec![lo; n];
    }
    (0..n)
        .map(|k| lo + (hi - lo) * k as f64 / (n - 1) as f64)
        .collect()
}

/// Default qualification chamber span, C: -40..125 C.
pub const QUAL_SPAN_C: (f64, f64) = (-40.0, 125.0);
/// Default number of qualification temperatures (every 15 K over [`QUAL_SPAN_C`]).
pub const QUAL_TEMPS_N: usize = 12;
/// Number of stimuli of the qualification and held-out check plans.
pub const PLAN_STIMULI_N: usize = 5;

impl Scenario {
    /// The scenario with the demo's simulated truth: the first of the
    /// truth variants (published models other than the fitted one) and a
    /// per-part nonlinearity in the stimulus (invented: well logger 0.1 % of
    /// span at mid-scale, 0.03 % part to part, -0.15 %/K relative; Hall
    /// plate 0.02 %, 0.01 %, -0.15 %/K).
    pub fn with_demo_truth(mut self) -> Scenario {
        self.truth = crate::station::truth::VARIANTS[0].1;
        let (mean, sd) = match self.kind {
            ElementKind::Bridge => (1e-3, 3e-4),
            ElementKind::HallPlate => (2e-4, 1e-4),
        };
        self.spread.nonlinearity_rel = mean;
        self.spread.nonlinearity_sd_rel = sd;
        self.spread.nonlinearity_per_k = -1.5e-3;
        self
    }

    /// The scenario marked as describing simulated data (see [`Scenario::simulated`]).
    pub fn marked_simulated(mut self) -> Scenario {
        self.simulated = true;
        self.caution = crate::station::output::SIMULATED_CAUTION.into();
        self
    }

    /// Full-scale span width of the stimulus.
    pub fn fs_width(&self) -> f64 {
        self.stimulus_fs.1 - self.stimulus_fs.0
    }

    /// Qualification chamber temperatures, C: `qual_temps_c` if given, else
    /// 12 temperatures every 15 K from -40 to 125 C and the calibration
    /// temperatures (the production plan the qualification measures).
    pub fn qualification_plan_temps_c(&self) -> Vec<f64> {
        self.qual_temps_c.clone().unwrap_or_else(|| {
            // The production temperatures belong in the qualification plan:
            // its cross-validation calibrates each part there.
            let mut t = evenly(QUAL_SPAN_C.0, QUAL_SPAN_C.1, QUAL_TEMPS_N);
            t.extend(self.cal_temps_c.iter().copied());
            t.sort_by(f64::total_cmp);
            t.dedup_by(|a, b| (*a - *b).abs() < 1.0);
            t
        })
    }

    /// Qualification stimuli: `qual_stimuli` if given, else 5 evenly over
    /// the full-scale range.
    pub fn qualification_stimuli(&self) -> Vec<f64> {
        self.qual_stimuli
            .clone()
            .unwrap_or_else(|| self.check_stimuli())
    }

    /// Stimuli of the held-out check: 5 evenly over the full-scale range.
    pub fn check_stimuli(&self) -> Vec<f64> {
        evenly(self.stimulus_fs.0, self.stimulus_fs.1, PLAN_STIMULI_N)
    }

    /// Well-level logger: 0-10 bar gauge die, p-type boron piezoresistors at
    /// 2e18 cm^-3, 3.3 V constant-voltage excitation, 24-bit ADC, bridge
    /// resistance as thermometer, -20..85 C, 0.05 % FS = 500 ppm budget.
    pub fn well_logger() -> Scenario {
        Scenario {
            name: "well".into(),
            simulated: true,
            caution: crate::station::output::SIMULATED_CAUTION.into(),
            kind: ElementKind::Bridge,
            sample: Sample {
                material: Material::Si,
                donors: vec![],
                acceptors: vec![Dopant {
                    species: Species::B,
                    density_cm3: 2e18,
                }],
            },
            t_ref_c: 25.0,
            range_c: (-20.0, 85.0),
            cal_temps_c: vec![-20.0, 25.0, 85.0],
            check_temps_c: vec![-40.0, -10.0, 0.0, 10.0, 40.0, 55.0, 70.0, 100.0, 125.0],
            stimuli: vec![0.0, 5.0, 10.0],
            stimulus_fs: (0.0, 10.0),
            stimulus_unit: "bar".into(),
            excitation: 3.3,
            resistance_ohm: 5000.0,
            // 1 % arm change at 10 bar: 33 mV full-scale output at 3.3 V.
            fs_effect: 0.01,
            // 24-bit delta-sigma behind a x32 PGA: +/-51.6 mV, 80 nV rms.
            output_adc: Adc {
                bits: 24,
                range: 0.0515625,
                noise_rms: 8e-8,
            },
            // Ratiometric resistance measurement: 24 bits over 0..10 kohm
            // (bipolar range of +/-10 kohm used from 0 up), 2 mohm rms.
            signal_adc: Adc {
                bits: 24,
                range: 10_000.0,
                noise_rms: 0.002,
            },
            spread: Spread {
                doping_rel: 0.05,
                // 0.2 % between arms a few hundred um apart on one die
                // (invented). Kept, not raised to 1 %: with d ln(rho)/d ln(N)
                // = -0.62 at 2e18 cm^-3 (the truth's Arora resistivity at
                // 25 C), 1 % per arm gives a raw offset of ~10 mV one sigma
                // (3.3 V / 4 x 0.62 % x 2), which with the 33 mV span clips
                // the +/-51.6 mV ADC on several percent of parts; 0.2 % gives
                // ~2 mV, and its doping-dependent TCR still drives the
                // offset drift the check sees.
                arm_doping_rel: 0.002,
                arm_geometry_rel: 0.001,
                thickness_rel: 0.03,
                geometry_rel: 0.0,
                package_span_per_k: 2e-5,
                package_offset_per_k: 2e-6,
                smooth_rel: 2e-5,
                chamber_k: 0.03,
                // Invented: 0.1 % of span above the terminal line at
                // mid-scale, 0.03 % part to part, shrinking by 0.15 %/K of
                // itself (0.1 % at 25 C -> 0.09 % at 85 C).
                nonlinearity_rel: 0.0,
                nonlinearity_sd_rel: 0.0,
                nonlinearity_per_k: 0.0,
            },
            budget_ppm: 500.0,
            bow: None,
            model_error_ppm: None,
            qual_temps_c: None,
            qual_stimuli: None,
            truth: TruthModels::default(),
        }
    }

    /// Battery-pack current sensor: n-type Si Hall plate, +/-200 A open loop,
    /// 1 mA bias, 16-bit ADC, -40..125 C, 0.1 % = 1000 ppm budget.
    pub fn battery_current() -> Scenario {
        Scenario {
            name: "battery".into(),
            simulated: true,
            caution: crate::station::output::SIMULATED_CAUTION.into(),
            kind: ElementKind::HallPlate,
            sample: Sample {
                material: Material::Si,
                donors: vec![Dopant {
                    species: Species::P,
                    density_cm3: 1e16,
                }],
                acceptors: vec![],
            },
            t_ref_c: 25.0,
            range_c: (-40.0, 125.0),
            cal_temps_c: vec![-40.0, 25.0, 125.0],
            check_temps_c: vec![-30.0, -10.0, 0.0, 10.0, 40.0, 60.0, 85.0, 105.0, 115.0],
            stimuli: vec![-200.0, 0.0, 200.0],
            stimulus_fs: (-200.0, 200.0),
            stimulus_unit: "A".into(),
            excitation: 1e-3,
            resistance_ohm: 2500.0,
            // 25 mV Hall output at +200 A at 25 C.
            fs_effect: 0.025,
            // 16-bit ADC over +/-60 mV: 1.8 uV LSB, 2 uV rms noise.
            output_adc: Adc {
                bits: 16,
                range: 0.06,
                noise_rms: 2e-6,
            },
            // 16-bit over +/-8 kohm: 0.24 ohm LSB, 0.1 ohm rms.
            signal_adc: Adc {
                bits: 16,
                range: 8000.0,
                noise_rms: 0.1,
            },
            spread: Spread {
                doping_rel: 0.05,
                arm_doping_rel: 0.0,
                arm_geometry_rel: 2e-4,
                thickness_rel: 0.03,
                geometry_rel: 0.01,
                package_span_per_k: 2e-5,
                // Same fields as the scenario above, with this element's own spread values.
                package_offset_per_k: 2e-6,
                smooth_rel: 2e-5,
                chamber_k: 0.03,
                // Invented: a Hall plate is far more linear in the field
                // than a membrane in pressure; 0.02 % +/- 0.01 % of span,
                // same relative temperature trend as the bridge.
                nonlinearity_rel: 0.0,
                nonlinearity_sd_rel: 0.0,
                nonlinearity_per_k: 0.0,
            },
            budget_ppm: 1000.0,
            bow: None,
            model_error_ppm: None,
            qual_temps_c: None,
            qual_stimuli: None,
            truth: TruthModels::default(),
        }
    }
}

/// Largest number of bits of a modelled ADC (a 32-bit converter is beyond
/// any sensor front end; common practice).
pub const MAX_ADC_BITS: u32 = 32;
/// Smallest number of bits of a modelled ADC.
pub const MIN_ADC_BITS: u32 = 4;

impl Scenario {
    /// Checks every value once, at load time, by dotted key (the TOML's):
    /// finite numbers, positive sizes, ordered ranges inside the station's
    /// temperature limits, non-empty plans, ADC bits in
    /// [`MIN_ADC_BITS`]..=[`MAX_ADC_BITS`], a budget in (0, 1e6] ppm.
    pub fn check(&self) -> Result<(), crate::element::spec::Invalid> {
        use crate::element::spec::Invalid;
        use crate::station::limits::{self, MAX_PLAN_POINTS};
        let bad = |field: &str, message: String| Err(Invalid::new(field, message));
        let finite = |field: &str, x: f64| {
            if x.is_finite() {
                Ok(())
            } else {
                bad(field, format!("{x} is not a finite number"))
            }
        };
        let positive = |field: &str, x: f64, max: f64| {
            if x.is_finite() && x > 0.0 && x <= max {
                Ok(())
            } else {
                bad(field, format!("{x} must be above 0 and at most {max:e}"))
            }
        };
        let temperature =
            |field: &str, t: f64| limits::check_temperature_c(t).or_else(|m| bad(field, m));
        let name_ok = !self.name.is_empty()
            && self.name.len() <= 32
            && self
                .name
                .chars()
                .all(|c| c.is_ascii_alphanumeric() || c == '-' || c == '_');
        if !name_ok {
            return bad(
                "name",
                format!(
                    "'{}' must be 1 to 32 letters, digits, '-' or '_' (it names serials and files)",
                    self.name.escape_debug()
                ),
            );
        }
        temperature("t_ref_c", self.t_ref_c)?;
        temperature("range_c", self.range_c.0)?;
        temperature("range_c", self.range_c.1)?;
        if self.range_c.1 <= self.range_c.0 {
            return bad(
                "range_c",
                format!(
                    "[{}, {}] must be [low, high] with low below high",
                    self.range_c.0, self.range_c.1
                ),
            );
        }
        let plans: [(&str, &[f64], bool); 4] = [
            ("cal_temps_c", &self.cal_temps_c, true),
            ("check_temps_c", &self.check_temps_c, false),
            (
                "qual_temps_c",
                self.qual_temps_c.as_deref().unwrap_or(&[]),
                false,
            ),
            ("stimuli", &self.stimuli, true),
        ];
        for (field, values, required) in plans {
            if required && values.is_empty() {
                return bad(field, "must list at least one value".into());
            }
            if values.len() > MAX_PLAN_POINTS {
                return bad(
                    field,
                    format!("{} values; at most {MAX_PLAN_POINTS}", values.len()),
                );
            }
            for &v in values {
                if field == "stimuli" {
                    finite(field, v)?;
                } else {
                    temperature(field, v)?;
                }
            }
        }
        if let Some(q) = &self.qual_stimuli {
            if q.len() > MAX_PLAN_POINTS {
                return bad(
                    "qual_stimuli",
                    format!("{} values; at most {MAX_PLAN_POINTS}", q.len()),
                );
            }
            for &v in q {
                finite("qual_stimuli", v)?;
            }
        }
        finite("stimulus_fs", self.stimulus_fs.0)?;
        finite("stimulus_fs", self.stimulus_fs.1)?;
        if self.stimulus_fs.1 <= self.stimulus_fs.0 {
            return bad(
                "stimulus_fs",
                format!(
                    "[{}, {}] must be [min, max] with min below max (errors are in ppm of max - min)",
                    self.stimulus_fs.0, self.stimulus_fs.1
                ),
            );
        }
        if self.stimulus_unit.is_empty() || self.stimulus_unit.len() > 16 {
            return bad("stimulus_unit", "must be 1 to 16 characters".into());
        }
        positive("excitation", self.excitation, 1e3)?;
        positive("resistance_ohm", self.resistance_ohm, 1e9)?;
        finite("fs_effect", self.fs_effect)?;
        if self.fs_effect == 0.0 || self.fs_effect.abs() > 1e3 {
            return bad(
                "fs_effect",
                format!(
                    "{} must be non-zero and at most 1e3 in magnitude",
                    self.fs_effect
                ),
            );
        }
        for (table, adc) in [
            ("output_adc", &self.output_adc),
            ("signal_adc", &self.signal_adc),
        ] {
            if !(MIN_ADC_BITS..=MAX_ADC_BITS).contains(&adc.bits) {
                return bad(
                    &format!("{table}.bits"),
                    format!(
                        "{} bits; a modelled ADC has {MIN_ADC_BITS}..={MAX_ADC_BITS}",
                        adc.bits
                    ),
                );
            }
            positive(&format!("{table}.range"), adc.range, 1e9)?;
            let noise = adc.noise_rms;
            if !(noise.is_finite() && noise >= 0.0 && noise < adc.range) {
                return bad(
                    &format!("{table}.noise_rms"),
                    format!(
                        "{noise} must be at least 0 and below the range {}",
                        adc.range
                    ),
                );
            }
        }
        let sp = &self.spread;
        // Named values in a list, as plot/report.rs lists its yield bars: each list is its own.
        for (key, x) in [
            ("doping_rel", sp.doping_rel),
            ("arm_doping_rel", sp.arm_doping_rel),
            ("arm_geometry_rel", sp.arm_geometry_rel),
            ("thickness_rel", sp.thickness_rel),
            ("geometry_rel", sp.geometry_rel),
            ("nonlinearity_sd_rel", sp.nonlinearity_sd_rel),
        ] {
            if !(x.is_finite() && (0.0..0.5).contains(&x)) {
                return bad(
                    &format!("spread.{key}"),
                    format!("{x} must be a fraction in 0..0.5"),
                );
            }
        }
        for (key, x) in [
            ("package_span_per_k", sp.package_span_per_k),
            ("package_offset_per_k", sp.package_offset_per_k),
            ("smooth_rel", sp.smooth_rel),
            ("chamber_k", sp.chamber_k),
        ] {
            if !(x.is_finite() && (0.0..=10.0).contains(&x)) {
                return bad(
                    &format!("spread.{key}"),
                    format!("{x} must be in 0..=10 (one sigma)"),
                );
            }
        }
        for (key, x) in [
            ("nonlinearity_rel", sp.nonlinearity_rel),
            ("nonlinearity_per_k", sp.nonlinearity_per_k),
        ] {
            if !(x.is_finite() && x.abs() < 0.5) {
                return bad(
                    &format!("spread.{key}"),
                    format!("{x} must be finite and below 0.5 in magnitude"),
                );
            }
        }
        limits::check_budget_ppm(self.budget_ppm)
            .or_else(|m| bad("budget_ppm", format!("{}: {m}", self.budget_ppm)))?;
        if let Some(m) = self.model_error_ppm
            && !(m.is_finite() && (0.0..=limits::MAX_BUDGET_PPM).contains(&m))
        {
            return bad("model_error_ppm", format!("{m} must be in 0..=1e6 ppm"));
        }
        if let Some(b) = &self.bow {
            for (key, x) in [
                ("bow.mid_rel", b.mid_rel),
                ("bow.mid_rel_per_k", b.mid_rel_per_k),
            ] {
                if !(x.is_finite() && x.abs() < 0.5) {
                    return bad(
                        key,
                        format!("{x} must be finite and below 0.5 in magnitude"),
                    );
                }
            }
        }
        if self.sample.donors.is_empty() && self.sample.acceptors.is_empty() {
            return bad("sample", "needs at least one donor or acceptor".into());
        }
        let (lo, hi) = crate::element::spec::DENSITY_RANGE_CM3;
        for (list, dopants) in [
            ("donors", &self.sample.donors),
            ("acceptors", &self.sample.acceptors),
        ] {
            for (k, d) in dopants.iter().enumerate() {
                if !(d.density_cm3.is_finite() && (lo..=hi).contains(&d.density_cm3)) {
                    return bad(
                        &format!("sample.{list}[{}].density_cm3", k + 1),
                        format!("{:e} cm^-3 is outside {lo:e}..={hi:e} cm^-3", d.density_cm3),
                    );
                }
            }
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn scenario_without_the_new_fields_loads_with_defaults() {
        let sc = Scenario::well_logger();
        let text = toml::to_string(&sc).unwrap();
        // A file written before the truth variants, nonlinearity and
        // qualification plan existed: drop those lines and the [truth] table.
        let mut old = String::new();
        let mut in_truth = false;
        for line in text.lines() {
            if line.starts_with('[') {
                in_truth = line.trim() == "[truth]";
            }
            if in_truth
                || line.starts_with("nonlinearity_")
                || line.starts_with("qual_")
                || line.starts_with("simulated")
                || line.starts_with("caution")
            {
                continue;
            }
            old.push_str(line);
            old.push('\n');
        }
        assert!(
            !old.contains("nonlinearity") && !old.contains("truth"),
            "{old}"
        );
        let back: Scenario = toml::from_str(&old).unwrap();
        assert_eq!(back.truth, TruthModels::default());
        assert_eq!(back.spread.nonlinearity_rel, 0.0);
        assert_eq!(back.spread.nonlinearity_sd_rel, 0.0);
        assert_eq!(back.spread.nonlinearity_per_k, 0.0);
        assert_eq!(back.qual_temps_c, None);
        // Not marked simulated: an old file says nothing about its data.
        assert!(!back.simulated && back.caution.is_empty());
        // Everything else as written.
        let expected = Scenario {
            simulated: false,
            caution: String::new(),
            spread: Spread {
                nonlinearity_rel: 0.0,
                nonlinearity_sd_rel: 0.0,
                nonlinearity_per_k: 0.0,
                ..sc.spread
            },
            ..sc.clone()
        };
        assert_eq!(back, expected);
        // The written file records the truth models.
        assert!(text.contains("[truth]") && text.contains("resistivity = \"arora_complete\""));
    }

    #[test]
    fn plans_default_and_override() {
        let mut sc = Scenario::battery_current();
        // Exact decimal grid: every 15 K from -40 C (1e-9 K is rounding),
        // plus the calibration temperatures (-40 and 125 are on it, 25 is not).
        let temps = sc.qualification_plan_temps_c();
        assert_eq!(temps.len(), 13);
        let grid: Vec<f64> = temps.iter().copied().filter(|&t| t != 25.0).collect();
        for (k, t) in grid.iter().enumerate() {
            assert!((t - (-40.0 + 15.0 * k as f64)).abs() < 1e-9, "{k}: {t}");
        }
        assert!(temps.contains(&25.0));
        assert_eq!(sc.check_stimuli(), vec![-200.0, -100.0, 0.0, 100.0, 200.0]);
        assert_eq!(sc.qualification_stimuli(), sc.check_stimuli());
        assert_eq!(
            Scenario::well_logger().check_stimuli(),
            vec![0.0, 2.5, 5.0, 7.5, 10.0]
        );
        sc.qual_temps_c = Some(vec![0.0, 50.0]);
        sc.qual_stimuli = Some(vec![1.0]);
        assert_eq!(sc.qualification_plan_temps_c(), vec![0.0, 50.0]);
        assert_eq!(sc.qualification_stimuli(), vec![1.0]);
        let back: Scenario = toml::from_str(&toml::to_string(&sc).unwrap()).unwrap();
        assert_eq!(back, sc);
    }
}
