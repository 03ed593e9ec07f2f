//! Building a part's table image (the runtime crate's SDRT layout) from its
//! fitted model: thermometer map, offset and gain columns on uniform axes, in
//! f32 or Q-format numbers.
//!
//! The firmware computes `value = (raw - offset(T)) * gain(T)` with
//! `T = thermometer(signal)`; the columns hold the fitted model's offset in
//! ADC codes and `lsb / sensitivity` in stimulus units per code.

use crate::station::bow::Bow;
use crate::station::part_file::PartFile;
use crate::station::part_model::FittedModel;
use compensate::ImageBuilder;
use compensate::image::{
    AxisSpec, ChannelAxis, GridSpec, MapSpec, QFormat, RawLimits, SignalKind, Unit,
};
use compensate::interp::Interpolation;

/// Number format of an image.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum NumFormat {
    /// IEEE binary32 (FPU parts).
    F32,
    /// Q-format i32 (integer-only parts, bit-exact on the host).
    Q,
}

/// Interpolation between nodes.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum InterpKind {
    /// Piecewise linear.
    Linear,
    /// Monotone cubic (Fritsch-Carlson).
    MonotoneCubic,
    /// Piecewise-linear offset and gain columns plus a 2-D correction over
    /// temperature x raw signal, interpolated bilinearly (for an output
    /// whose nonlinearity in the stimulus changes with temperature).
    Bilinear2d,
}

impl InterpKind {
    /// The runtime crate's code for it.
    pub fn runtime(self) -> Interpolation {
        match self {
            InterpKind::Linear | InterpKind::Bilinear2d => Interpolation::Linear,
            InterpKind::MonotoneCubic => Interpolation::MonotoneCubic,
        }
    }
}

/// What the image's thermometer takes as its temperature signal.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum SignalUnit {
    /// The signal in the spec's units (ohm), as the chamber CSV records it.
    #[default]
    Ohm,
    /// Whole codes of the temperature-signal ADC (the spec's `signal_adc`),
    /// as firmware reads them: no conversion on the part, and Q images take
    /// the code itself (0 fraction bits).
    AdcCode,
}

/// What a table's correction channels are tabulated over.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum AxisKind {
    /// Over temperature, after a thermometer map of its own: two look-ups
    /// per temperature update, and the thermometer and the channels are
    /// sized apart.
    #[default]
    Temperature,
    /// Over the temperature signal itself: the station composes the
    /// thermometer into every channel, so a temperature update is one
    /// look-up; the thermometer column shares the channels' nodes and is
    /// read only when the firmware asks for the temperature.
    Signal,
}

impl AxisKind {
    /// The runtime crate's code for it.
    pub fn runtime(self) -> ChannelAxis {
        match self {
            AxisKind::Temperature => ChannelAxis::Temperature,
            AxisKind::Signal => ChannelAxis::Signal,
        }
    }
}

/// The choices that decide a table's size and error.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub struct TablePlan {
    /// Interpolation.
    pub interpolation: InterpKind,
    /// Number format.
    pub format: NumFormat,
    /// Temperature nodes of the offset and gain columns.
    pub n_t: usize,
    /// Signal nodes of the thermometer map.
    pub n_sig: usize,
    /// Raw-signal nodes of the 2-D correction (0: none; only
    /// [`InterpKind::Bilinear2d`] has one).
    #[serde(default, skip_serializing_if = "is_zero")]
    pub n_raw: usize,
    /// What the channels are tabulated over; with [`AxisKind::Signal`],
    /// `n_sig` equals `n_t` (one set of nodes).
    #[serde(default, skip_serializing_if = "is_temperature_axis")]
    pub axis: AxisKind,
}

fn is_temperature_axis(a: &AxisKind) -> bool {
    *a == AxisKind::Temperature
}

impl TablePlan {
    /// Nodes of the thermometer: its own count, or the channels' over the
    /// signal axis.
    pub fn nodes_sig(&self) -> usize {
        match self.axis {
            AxisKind::Temperature => self.n_sig.max(2),
            AxisKind::Signal => self.n_t.max(2),
        }
    }
}

fn is_zero(n: &usize) -> bool {
    *n == 0
}

/// Why a table could not be built.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum TableError {
    /// The fitted temperature signal is not strictly monotone over the range.
    #[error(
        "the fitted temperature signal is not monotone over {lo_c}..{hi_c} C: it cannot serve as a thermometer"
    )]
    NotMonotone {
        /// Range start, C.
        lo_c: f64,
        /// Range end, C.
        hi_c: f64,
    },
    /// The runtime crate's encoder refused the image.
    #[error("image encoder: {0}")]
    Encode(String),
}

/// Everything about a part's table that does not depend on the plan.
#[derive(Debug, Clone, Copy)]
pub struct TableFrame<'a> {
    /// The fitted part model.
    pub model: FittedModel<'a>,
    /// Temperature range covered, C.
    pub t_lo_c: f64,
    /// Temperature range covered, C.
    pub t_hi_c: f64,
    /// Signal at the range ends (ascending).
    pub sig_lo: f64,
    /// Signal at the range ends (ascending).
    pub sig_hi: f64,
    /// Output ADC code size (output units per code).
    pub lsb: f64,
    /// Output ADC resolution in bits.
    pub bits: u32,
    /// Stimulus full-scale range.
    pub fs_lo: f64,
    /// Stimulus full-scale range.
    pub fs_hi: f64,
    /// Reference temperature of the part model, C.
    pub t_ref_c: f64,
    /// The element's nonlinearity stated by the scenario, if any (a part
    /// fitted on a design carries its own, see [`TableFrame::bow_mid`]).
    pub bow: Option<Bow>,
    /// Unit of the image's temperature signal.
    pub signal_unit: SignalUnit,
    /// Temperature-signal ADC code size, spec units (ohm) per code.
    pub signal_lsb: f64,
}

pub(crate) fn unit(name: &str) -> Unit {
    match name {
        "bar" => Unit::Bar,
        "Pa" => Unit::Pascal,
        "A" => Unit::Ampere,
        "T" => Unit::Tesla,
        "mT" => Unit::Millitesla,
        "N" => Unit::Newton,
        _ => Unit::None,
    }
}

fn frac_bits_for(max_abs: f64, total_bits: i32) -> u8 {
    // Largest n with max_abs * 2^n < 2^total_bits (headroom below i32::MAX).
    let n = total_bits - max_abs.max(1e-30).log2().ceil() as i32;
    n.clamp(0, 62) as u8
}

impl<'a> TableFrame<'a> {
    /// The frame of a part over its data-sheet range.
    pub fn new(
        part: &PartFile,
        model: impl Into<FittedModel<'a>>,
    ) -> Result<TableFrame<'a>, TableError> {
        let model = model.into();
        let sc = &part.scenario;
        let (t_lo_c, t_hi_c) = sc.range_c;
        // Strict monotonicity on a 0.1 K grid (the runtime axis must increase).
        let n = ((t_hi_c - t_lo_c) / 0.1).ceil() as usize;
        let sig: Vec<f64> = (0..=n)
            .map(|k| model.signal(t_lo_c + (t_hi_c - t_lo_c) * k as f64 / n as f64))
            .collect();
        let up = sig.windows(2).all(|w| w[1] > w[0]);
        let down = sig.windows(2).all(|w| w[1] < w[0]);
        if !(up || down) {
            return Err(TableError::NotMonotone {
                lo_c: t_lo_c,
                hi_c: t_hi_c,
            });
        }
        let (a, b) = (sig[0], sig[n]);
        Ok(TableFrame {
            model,
            t_lo_c,
            t_hi_c,
            sig_lo: a.min(b),
            sig_hi: a.max(b),
            lsb: sc.output_adc.lsb(),
            bits: sc.output_adc.bits,
            fs_lo: sc.stimulus_fs.0,
            fs_hi: sc.stimulus_fs.1,
            t_ref_c: sc.t_ref_c,
            bow: sc.bow,
            signal_unit: SignalUnit::Ohm,
            signal_lsb: sc.signal_adc.lsb(),
        })
    }

    /// The same frame with the image's temperature signal in `unit`.
    pub fn with_signal_unit(mut self, unit: SignalUnit) -> TableFrame<'a> {
        self.signal_unit = unit;
        self
    }

    /// The frame for an existing image: its temperature-signal unit read
    /// from the image header.
    pub fn for_view(self, view: &compensate::TableView<'_>) -> TableFrame<'a> {
        let unit = match view.signal_kind() {
            SignalKind::AdcCode => SignalUnit::AdcCode,
            _ => SignalUnit::Ohm,
        };
        self.with_signal_unit(unit)
    }

    /// Spec units (ohm) per image signal unit.
    fn signal_scale(&self) -> f64 {
        match self.signal_unit {
            SignalUnit::Ohm => 1.0,
            SignalUnit::AdcCode => self.signal_lsb,
        }
    }

    /// The temperature signal the image receives at `t_c`, in its unit
    /// (whole codes for [`SignalUnit::AdcCode`], as the ADC delivers them).
    pub fn image_signal(&self, t_c: f64) -> f64 {
        self.image_signal_of(self.model.signal(t_c))
    }

    /// A spec-unit temperature signal (ohm) in the image's unit.
    pub fn image_signal_of(&self, signal: f64) -> f64 {
        match self.signal_unit {
            SignalUnit::Ohm => signal,
            SignalUnit::AdcCode => (signal / self.signal_lsb).round(),
        }
    }

    fn signal_kind(&self) -> SignalKind {
        match self.signal_unit {
            SignalUnit::Ohm => SignalKind::Ohm,
            SignalUnit::AdcCode => SignalKind::AdcCode,
        }
    }

    /// Offset in ADC codes at `t_c`.
    pub fn offset_codes(&self, t_c: f64) -> f64 {
        self.model.offset(t_c) / self.lsb
    }

    /// Gain in stimulus units per code at `t_c`.
    pub fn gain_per_code(&self, t_c: f64) -> f64 {
        self.lsb / self.model.sensitivity(t_c)
    }

    /// Raw-code limits: rails at the ADC ends, calibrated range the codes of
    /// the full-scale stimuli over the temperature range plus 1 % margin.
    pub fn raw_limits(&self) -> RawLimits {
        let half = 1i64 << (self.bits - 1);
        let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
        for k in 0..=200 {
            let at = self.at(self.t_lo_c + (self.t_hi_c - self.t_lo_c) * k as f64 / 200.0);
            for s in [self.fs_lo, self.fs_hi] {
                let c = at.output(s) / self.lsb;
                lo = lo.min(c);
                hi = hi.max(c);
            }
        }
        let margin = 0.01 * (hi - lo);
        let clamp = |x: f64| (x as i64).clamp(-half + 1, half - 2) as i32;
        RawLimits {
            rail_lo: (-half) as i32,
            raw_lo: clamp((lo - margin).floor()),
            raw_hi: clamp((hi + margin).ceil()).max(clamp((lo - margin).floor()) + 1),
            rail_hi: (half - 1) as i32,
        }
    }

    /// Q formats with headroom for every stored quantity of this part.
    pub fn q_format(&self) -> QFormat {
        let limits = self.raw_limits();
        let max_t = self.t_lo_c.abs().max(self.t_hi_c.abs());
        let max_sig = self.sig_hi.abs().max(self.sig_lo.abs()) * 1.5;
        let max_out = self.fs_lo.abs().max(self.fs_hi.abs()) * 4.0;
        let mut max_gain: f64 = 0.0;
        for k in 0..=200 {
            let t = self.t_lo_c + (self.t_hi_c - self.t_lo_c) * k as f64 / 200.0;
            max_gain = max_gain.max(self.gain_per_code(t).abs());
        }
        let rail = f64::from(limits.rail_hi.max(-limits.rail_lo));
        // Shifted rail codes must fit i32 with one bit to spare for d.
        let offset = frac_bits_for(rail, 29);
        let output = frac_bits_for(max_out, 30);
        let mut gain = frac_bits_for(max_gain, 30);
        // offset + gain - output must lie in 0..=62.
        gain = gain.clamp(output.saturating_sub(offset), 62 - offset);
        let signal = match self.signal_unit {
            SignalUnit::Ohm => frac_bits_for(max_sig, 30),
            SignalUnit::AdcCode => 0,
        };
        QFormat {
            temperature: frac_bits_for(max_t * 2.0, 30),
            signal,
            output,
            offset,
            gain,
            quadratic: 0,
        }
    }

    /// Image units per C and per ohm of a Q image's temperature and signal.
    fn q_scales(&self, q: &QFormat) -> (f64, f64) {
        (
            2f64.powi(i32::from(q.temperature)),
            // Image signal units (fraction bits included) per ohm.
            2f64.powi(i32::from(q.signal)) / self.signal_scale(),
        )
    }

    /// Integer axes of a Q image, `[t_start, t_step, s_start, s_step]`:
    /// start rounded down, step rounded up so the last node reaches the
    /// range end.
    fn q_axes(&self, q: &QFormat, n_t: usize, n_sig: usize) -> [i32; 4] {
        let (tq, sq) = self.q_scales(q);
        let t_start = (self.t_lo_c * tq).floor() as i32;
        let t_step = (((self.t_hi_c * tq) - f64::from(t_start)) / (n_t - 1) as f64)
            .ceil()
            .max(1.0) as i32;
        let s_start = (self.sig_lo * sq).floor() as i32;
        let s_step = (((self.sig_hi * sq) - f64::from(s_start)) / (n_sig - 1) as f64)
            .ceil()
            .max(1.0) as i32;
        [t_start, t_step, s_start, s_step]
    }

    /// The node axes [`TableFrame::build`] lays out for `plan`, in C and
    /// ohm: `[t_start_c, t_step_k, sig_start, sig_step]`.
    pub fn node_axes(&self, plan: &TablePlan) -> [f64; 4] {
        let n_t = plan.n_t.max(2);
        let n_sig = plan.nodes_sig();
        match plan.format {
            NumFormat::F32 => [
                self.t_lo_c,
                (self.t_hi_c - self.t_lo_c) / (n_t - 1) as f64,
                self.sig_lo,
                (self.sig_hi - self.sig_lo) / (n_sig - 1) as f64,
            ],
            NumFormat::Q => {
                let q = self.q_format();
                let (tq, sq) = self.q_scales(&q);
                let [t0, dt, s0, ds] = self.q_axes(&q, n_t, n_sig).map(f64::from);
                [t0 / tq, dt / tq, s0 / sq, ds / sq]
            }
        }
    }

    /// Builds the image of `plan` for `serial`.
    pub fn build(
        &self,
        plan: &TablePlan,
        serial: &str,
        unit_name: &str,
        fs: f64,
    ) -> Result<Vec<u8>, TableError> {
        let n_t = plan.n_t.max(2);
        let n_sig = plan.nodes_sig();
        let over_signal = plan.axis == AxisKind::Signal;
        let mut serial_bytes = [0u8; 16];
        for (d, s) in serial_bytes.iter_mut().zip(serial.bytes()) {
            *d = s;
        }
        let limits = self.raw_limits();
        let sig_margin = 0.1 * (self.sig_hi - self.sig_lo);
        match plan.format {
            NumFormat::F32 => {
                let t_step = (self.t_hi_c - self.t_lo_c) / (n_t - 1) as f64;
                let s_step = (self.sig_hi - self.sig_lo) / (n_sig - 1) as f64;
                // Over the signal axis channel node k sits at signal node
                // k, at the temperature the fitted thermometer gives there.
                let t_nodes = |k: usize| {
                    if over_signal {
                        self.model.temperature(self.sig_lo + s_step * k as f64)
                    } else {
                        self.t_lo_c + t_step * k as f64
                    }
                };
                let offset: Vec<f32> = (0..n_t)
                    .map(|k| self.offset_codes(t_nodes(k)) as f32)
                    .collect();
                let gain: Vec<f32> = (0..n_t)
                    .map(|k| self.gain_per_code(t_nodes(k)) as f32)
                    .collect();
                let therm: Vec<f32> = (0..n_sig)
                    .map(|k| self.model.temperature(self.sig_lo + s_step * k as f64) as f32)
                    .collect();
                let (raw_start, raw_step) = self.raw_axis(plan.n_raw);
                let grid_values: Vec<f32> = self
                    .grid_values(plan, &t_nodes, raw_start, raw_step)
                    .iter()
                    .map(|&v| v as f32)
                    .collect();
                let u = self.signal_scale();
                let thermometer_axis = AxisSpec {
                    start: (self.sig_lo / u) as f32,
                    step: (s_step / u) as f32,
                };
                let builder = ImageBuilder::<f32> {
                    interpolation: plan.interpolation.runtime(),
                    q_format: QFormat::F32,
                    signal_kind: self.signal_kind(),
                    unit: unit(unit_name),
                    ratiometric: false,
                    full_scale: fs as f32,
                    raw_limits: limits,
                    signal_lo: ((self.sig_lo - sig_margin) / u) as f32,
                    signal_hi: ((self.sig_hi + sig_margin) / u) as f32,
                    serial: serial_bytes,
                    thermometer: Some(MapSpec {
                        axis: thermometer_axis,
                        values: &therm,
                    }),
                    channel_axis: plan.axis.runtime(),
                    temperature_axis: if over_signal {
                        thermometer_axis
                    } else {
                        AxisSpec {
                            start: self.t_lo_c as f32,
                            step: t_step as f32,
                        }
                    },
                    offset: &offset,
                    gain: &gain,
                    quadratic: None,
                    grid: (plan.n_raw > 0).then_some(GridSpec {
                        raw_axis: AxisSpec {
                            start: raw_start as f32,
                            step: raw_step as f32,
                        },
                        raw_len: plan.n_raw,
                        values: &grid_values,
                    }),
                };
                encode(&builder)
            }
            NumFormat::Q => {
                let q = self.q_format();
                let (tq, sq) = self.q_scales(&q);
                let [t_start, t_step, s_start, s_step] = self.q_axes(&q, n_t, n_sig);
                let s_node = |k: usize| (f64::from(s_start) + f64::from(s_step) * k as f64) / sq;
                let t_node = |k: usize| {
                    if over_signal {
                        self.model.temperature(s_node(k))
                    } else {
                        (f64::from(t_start) + f64::from(t_step) * k as f64) / tq
                    }
                };
                let scale = |x: f64, bits: u8| (x * 2f64.powi(i32::from(bits))).round() as i32;
                let offset: Vec<i32> = (0..n_t)
                    .map(|k| scale(self.offset_codes(t_node(k)), q.offset))
                    .collect();
                let gain: Vec<i32> = (0..n_t)
                    .map(|k| scale(self.gain_per_code(t_node(k)), q.gain))
                    .collect();
                let therm: Vec<i32> = (0..n_sig)
                    .map(|k| scale(self.model.temperature(s_node(k)), q.temperature))
                    .collect();
                let (raw_start, raw_step) = self.raw_axis(plan.n_raw);
                let grid_values: Vec<i32> = self
                    .grid_values(plan, &t_node, raw_start, raw_step)
                    .iter()
                    .map(|&v| scale(v, q.output))
                    .collect();
                let builder = ImageBuilder::<i32> {
                    interpolation: plan.interpolation.runtime(),
                    q_format: q,
                    signal_kind: self.signal_kind(),
                    unit: unit(unit_name),
                    ratiometric: false,
                    full_scale: fs as f32,
                    raw_limits: limits,
                    signal_lo: ((self.sig_lo - sig_margin) * sq).round() as i32,
                    signal_hi: ((self.sig_hi + sig_margin) * sq).round() as i32,
                    serial: serial_bytes,
                    thermometer: Some(MapSpec {
                        axis: AxisSpec {
                            start: s_start,
                            step: s_step,
                        },
                        values: &therm,
                    }),
                    channel_axis: plan.axis.runtime(),
                    temperature_axis: if over_signal {
                        AxisSpec {
                            start: s_start,
                            step: s_step,
                        }
                    } else {
                        AxisSpec {
                            start: t_start,
                            step: t_step,
                        }
                    },
                    offset: &offset,
                    gain: &gain,
                    quadratic: None,
                    grid: (plan.n_raw > 0).then_some(GridSpec {
                        raw_axis: AxisSpec {
                            start: raw_start,
                            step: raw_step,
                        },
                        raw_len: plan.n_raw,
                        values: &grid_values,
                    }),
                };
                encode(&builder)
            }
        }
    }
}

fn encode<V: compensate::image::Number>(
    builder: &ImageBuilder<'_, V>,
) -> Result<Vec<u8>, TableError> {
    let len = builder
        .encoded_len()
        .map_err(|e| TableError::Encode(e.to_string()))?;
    let mut buf = vec![0u8; len];
    let n = builder
        .encode(&mut buf)
        .map_err(|e| TableError::Encode(e.to_string()))?;
    buf.truncate(n);
    Ok(buf)
}
