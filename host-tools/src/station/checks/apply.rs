//! Compensating recorded raw rows the way the firmware does, and the error of
//! each row against its reference stimulus in ppm of span.

use crate::station::bow::Bow;
use crate::station::chamber::ChamberRow;
use crate::station::curves::ShapeCurves;
use crate::station::part_file::PartFile;
use crate::station::part_model::FittedModel;

/// One compensated row.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct AppliedRow {
    /// Serial number.
    pub serial: String,
    /// Chamber set point, C.
    pub chamber_c: f64,
    /// Reference stimulus.
    pub stimulus: f64,
    /// Temperature read from the temperature signal, C.
    pub t_est_c: f64,
    /// Compensated stimulus.
    pub compensated: f64,
    /// Error (compensated minus reference), ppm of span.
    pub error_ppm: f64,
    /// Uncompensated error: raw output read with the reference-temperature
    /// offset and sensitivity only, ppm of span.
    pub raw_error_ppm: f64,
    /// The output sat on the ADC's first or last code: the row says nothing
    /// about the part (its error is reported but left out of every worst case).
    pub clipped: bool,
    /// The runtime's status flags for the row when a table image ran it
    /// (`temperature clamped`, `input out of range`, ...): empty when the
    /// row lies inside the table's calibrated domain, or for the f64 model.
    #[serde(skip_serializing_if = "String::is_empty")]
    pub runtime_status: String,
}

/// A compensation method: raw (output, temperature signal) to (stimulus, temperature).
pub trait Compensation {
    /// Compensated stimulus and the temperature used, from raw readings.
    fn compensate(&self, output: f64, temp_signal: f64) -> (f64, f64);

    /// [`Compensation::compensate`] and the runtime's status flags (empty
    /// when inside the calibrated domain or not run by the runtime).
    fn compensate_with_status(&self, output: f64, temp_signal: f64) -> (f64, f64, String) {
        let (s, t) = self.compensate(output, temp_signal);
        (s, t, String::new())
    }
}

/// The fit of a part, evaluated in f64 (what the table approximates).
pub struct ModelCompensation<'a> {
    /// The fitted part model.
    pub model: FittedModel<'a>,
    /// The element's bow with the scenario's reference temperature, when
    /// the scenario states one (a design fit carries its own).
    pub bow: Option<(Bow, f64)>,
    /// Full-scale stimulus range.
    pub fs: (f64, f64),
}

impl<'a> ModelCompensation<'a> {
    /// The compensation of `part`: its fitted model and its scenario's bow.
    pub fn for_part(part: &'a PartFile, curves: &'a ShapeCurves) -> ModelCompensation<'a> {
        let sc = &part.scenario;
        ModelCompensation {
            model: part.model(curves),
            bow: sc.bow.map(|b| (b, sc.t_ref_c)),
            fs: sc.stimulus_fs,
        }
    }
}

impl Compensation for ModelCompensation<'_> {
    fn compensate(&self, output: f64, temp_signal: f64) -> (f64, f64) {
        let t = self.model.temperature(temp_signal);
        let apparent = self.model.stimulus(output, t);
        let mid = self
            .model
            .bow_mid(t)
            .or_else(|| self.bow.map(|(b, t_ref_c)| b.mid_at(t, t_ref_c)));
        let s = match mid {
            Some(m) => Bow::constant(m).true_stimulus(apparent, t, t, self.fs),
            None => apparent,
        };
        (s, t)
    }
}

/// The usual-practice polynomial stored in the part file.
pub struct PolyCompensation(pub crate::station::polynomial::PolyCal);

impl Compensation for PolyCompensation {
    fn compensate(&self, output: f64, temp_signal: f64) -> (f64, f64) {
        (
            self.0.stimulus(output, temp_signal),
            self.0.temperature(temp_signal),
        )
    }
}

/// Applies a compensation to rows of one part.
pub fn apply_rows(
    part: &PartFile,
    curves: &ShapeCurves,
    method: &dyn Compensation,
    rows: &[&ChamberRow],
) -> Vec<AppliedRow> {
    let fs = part.scenario.fs_width();
    let model = part.model(curves);
    let t_ref = part.scenario.t_ref_c;
    rows.iter()
        .map(|r| {
            let (s, t, status) = method.compensate_with_status(r.output, r.temp_signal);
            let raw = (r.output - model.offset(t_ref)) / model.sensitivity(t_ref);
            AppliedRow {
                serial: r.serial.clone(),
                chamber_c: r.chamber_c,
                stimulus: r.stimulus,
                t_est_c: t,
                compensated: s,
                error_ppm: (s - r.stimulus) / fs * 1e6,
                raw_error_ppm: (raw - r.stimulus) / fs * 1e6,
                clipped: part.scenario.output_adc.at_rail(r.output),
                runtime_status: status,
            }
        })
        .collect()
}

/// A table image run by the runtime crate (f32 or Q, as the image says).
pub struct ImageCompensation<'a> {
    view: compensate::TableView<'a>,
    /// Output ADC code size: raw outputs are divided by it to get codes.
    lsb: f64,
    /// Temperature-signal ADC code size, used when the image takes codes.
    signal_lsb: f64,
}

impl<'a> ImageCompensation<'a> {
    /// Parses `image`; `lsb` converts the CSV's output to ADC codes, and
    /// `signal_lsb` its temperature signal when the image takes ADC codes.
    pub fn new(image: &'a [u8], lsb: f64, signal_lsb: f64) -> Result<Self, compensate::ImageError> {
        Ok(ImageCompensation {
            view: compensate::TableView::parse(image)?,
            lsb,
            signal_lsb,
        })
    }
}

/// One row as the runtime crate takes it: the temperature-signal and raw
/// words (f32 bits for an f32 image; i32 for a Q image, the signal in the
/// image's Q format), what firmware, and the end-of-line check's mailbox,
/// are given.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct RuntimeInput {
    /// Temperature-signal word.
    pub signal_word: u32,
    /// Raw-output word.
    pub raw_word: u32,
}

/// One row's result as the runtime crate gives it: the value and
/// temperature words (f32 bits, or the Q values as i32) and the status bits
/// of the temperature update and the sample together.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct RuntimeOutput {
    /// Compensated value word.
    pub value_word: u32,
    /// Temperature word.
    pub temperature_word: u32,
    /// `Status` bits.
    pub status_bits: u8,
}

impl ImageCompensation<'_> {
    /// The image's number format.
    pub fn format(&self) -> compensate::image::NumberFormat {
        self.view.format()
    }

    /// The runtime words for a CSV row (output and temperature signal in
    /// the CSV's units): output to the nearest ADC code, the signal to a
    /// code when the image takes codes, then to the image's number format.
    pub fn runtime_input(&self, output: f64, temp_signal: f64) -> RuntimeInput {
        let raw = (output / self.lsb).round();
        let temp_signal = match self.view.signal_kind() {
            compensate::image::SignalKind::AdcCode => (temp_signal / self.signal_lsb).round(),
            _ => temp_signal,
        };
        match self.view.format() {
            compensate::image::NumberFormat::Q => {
                let sq = 2f64.powi(i32::from(self.view.q_format().signal));
                RuntimeInput {
                    signal_word: ((temp_signal * sq).round() as i32) as u32,
                    raw_word: (raw as i32) as u32,
                }
            }
            _ => RuntimeInput {
                signal_word: (temp_signal as f32).to_bits(),
                raw_word: (raw as f32).to_bits(),
            },
        }
    }

    /// Runs one row on a fresh compensator, as firmware does after boot
    /// (`None`: the image's numbers do not make a compensator).
    pub fn run(&self, input: RuntimeInput) -> Option<RuntimeOutput> {
        match self.view.format() {
            compensate::image::NumberFormat::Q => {
                let mut c = compensate::FixedCompensator::new(&self.view).ok()?;
                let ts = c.update_temperature(input.signal_word as i32);
                let r = c.compensate_sample(input.raw_word as i32);
                Some(RuntimeOutput {
                    value_word: r.value as u32,
                    temperature_word: c.temperature_q() as u32,
                    status_bits: (ts | r.status).bits(),
                })
            }
            _ => {
                let mut c = compensate::Compensator::new(&self.view).ok()?;
                let ts = c.update_temperature(f32::from_bits(input.signal_word));
                let r = c.compensate_sample(f32::from_bits(input.raw_word));
                Some(RuntimeOutput {
                    value_word: r.value.to_bits(),
                    temperature_word: c.temperature_c().to_bits(),
                    status_bits: (ts | r.status).bits(),
                })
            }
        }
    }

    /// An f32 image's offset and gain after the temperature update of
    /// `input` (zeros for a Q image or an image that makes no compensator).
    pub fn coefficients(&self, input: RuntimeInput) -> (f32, f32) {
        match compensate::Compensator::new(&self.view) {
            Ok(mut c) => {
                c.update_temperature(f32::from_bits(input.signal_word));
                let (offset, gain, _) = c.coefficients();
                (offset, gain)
            }
            Err(_) => (0.0, 0.0),
        }
    }

    /// How far an f32 image's temperature read moves when the signal of
    /// `input` moves one unit in the last place up, C (0 for a Q image).
    pub fn temperature_step(&self, input: RuntimeInput) -> f32 {
        let Ok(mut c) = compensate::Compensator::new(&self.view) else {
            return 0.0;
        };
        let signal = f32::from_bits(input.signal_word);
        c.update_temperature(signal);
        let t0 = c.temperature_c();
        c.update_temperature(signal.next_up());
        (c.temperature_c() - t0).abs()
    }

    /// The compensated value and temperature, C, of a result in f64.
    pub fn decode(&self, out: RuntimeOutput) -> (f64, f64) {
        match self.view.format() {
            compensate::image::NumberFormat::Q => {
                let q = self.view.q_format();
                (
                    f64::from(out.value_word as i32) * 2f64.powi(-i32::from(q.output)),
                    f64::from(out.temperature_word as i32) * 2f64.powi(-i32::from(q.temperature)),
                )
            }
            _ => (
                f64::from(f32::from_bits(out.value_word)),
                f64::from(f32::from_bits(out.temperature_word)),
            ),
        }
    }
}

/// The runtime's status flags as text, empty when OK.
pub fn status_text(bits: u8) -> String {
    use compensate::Status;
    let s = [
        Status::TEMPERATURE_CLAMPED,
        Status::INPUT_OUT_OF_RANGE,
        Status::SENSOR_FAULT,
        Status::TABLE_INVALID,
        Status::NAN_INPUT,
        Status::SATURATED,
        Status::NO_TEMPERATURE,
    ]
    .into_iter()
    .filter(|f| bits & f.bits() != 0)
    .fold(Status::OK, |a, f| a | f);
    if s.is_ok() {
        String::new()
    } else {
        s.to_string()
    }
}

impl Compensation for ImageCompensation<'_> {
    fn compensate(&self, output: f64, temp_signal: f64) -> (f64, f64) {
        let (s, t, _) = self.compensate_with_status(output, temp_signal);
        (s, t)
    }

    fn compensate_with_status(&self, output: f64, temp_signal: f64) -> (f64, f64, String) {
        match self.run(self.runtime_input(output, temp_signal)) {
            Some(out) => {
                let (s, t) = self.decode(out);
                (s, t, status_text(out.status_bits))
            }
            None => (f64::NAN, f64::NAN, "table invalid".into()),
        }
    }
}
