//! The model plot of one sample: carrier densities, mobilities and
//! resistivity versus temperature, and an Arrhenius view of the majority
//! carrier density with the freeze-out, extrinsic and intrinsic regimes shaded.

use super::style::{
    BLUE, CAPTION_PX, FONT_FAMILY, Figure, GREEN, GREY, LABEL_PX, PlotError, RED, TICK_PX,
    figure_rgb, figure_svg, legend, linear_range, log_label, log_range, register_font, tick_label,
    write_figure,
};
use crate::physics::{ModelPoint, Sample};
use plotters::coord::Shift;
use plotters::prelude::*;

/// Width and height of the model plot in pixels.
pub const SIZE_PX: (u32, u32) = (1200, 900);

/// Conduction regime of a doped sample at one temperature.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Regime {
    /// Majority carriers below 90 % of the net doping: dopants not fully ionized.
    FreezeOut,
    /// Majority carriers within 10 % of the net doping (saturation range).
    Extrinsic,
    /// Thermally generated carriers add more than 10 % to the net doping.
    Intrinsic,
}

impl Regime {
    /// Lower-case label.
    pub fn name(self) -> &'static str {
        match self {
            Regime::FreezeOut => "freeze-out",
            Regime::Extrinsic => "extrinsic",
            Regime::Intrinsic => "intrinsic",
        }
    }
}

/// Net doping |sum N_D - sum N_A| in cm^-3 and whether the sample is n-type.
fn net_doping(sample: &Sample) -> (f64, bool) {
    let nd: f64 = sample.donors.iter().map(|d| d.density_cm3).sum();
    let na: f64 = sample.acceptors.iter().map(|d| d.density_cm3).sum();
    ((nd - na).abs(), nd >= na)
}

/// The regime at one model point; the 10 % bands are a plotting convention
/// (common practice), not a physical threshold.
pub fn classify_regime(sample: &Sample, point: &ModelPoint) -> Regime {
    let (net_cm3, n_type) = net_doping(sample);
    let majority = if n_type { point.n_cm3 } else { point.p_cm3 };
    if net_cm3 <= 0.0 || majority > 1.1 * net_cm3 {
        Regime::Intrinsic
    } else if majority < 0.9 * net_cm3 {
        Regime::FreezeOut
    } else {
        Regime::Extrinsic
    }
}

/// The model plot of one sample as a [`Figure`].
struct ModelFigure<'a> {
    sample: &'a Sample,
    rows: &'a [ModelPoint],
}

impl Figure for ModelFigure<'_> {
    fn size_px(&self) -> (u32, u32) {
        SIZE_PX
    }
    fn draw<DB: DrawingBackend>(&self, root: &DrawingArea<DB, Shift>) -> Result<(), PlotError> {
        draw(root, self.sample, self.rows)
    }
}

/// Draws the four-panel model plot of `sample` and returns the SVG text.
pub fn model_svg(sample: &Sample, rows: &[ModelPoint]) -> Result<String, PlotError> {
    check_rows(rows)?;
    figure_svg(&ModelFigure { sample, rows })
}

/// Draws the model plot as an RGB bitmap (`SIZE_PX`, 3 bytes per pixel,
/// row-major), for PNG output and for looking at the plot in tests.
pub fn model_rgb(sample: &Sample, rows: &[ModelPoint]) -> Result<Vec<u8>, PlotError> {
    check_rows(rows)?;
    figure_rgb(&ModelFigure { sample, rows })
}

/// Writes the model plot to `path` atomically: PNG when the name ends in
/// `.png`, SVG otherwise.
pub fn write_model_plot(
    path: &std::path::Path,
    sample: &Sample,
    rows: &[ModelPoint],
) -> Result<(), PlotError> {
    check_rows(rows)?;
    write_figure(path, &ModelFigure { sample, rows })
}

fn check_rows(rows: &[ModelPoint]) -> Result<(), PlotError> {
    if rows.len() < 2 {
        return Err(PlotError::NoData(
            "the model plot needs at least two temperatures".into(),
        ));
    }
    register_font()
}

/// Draws the four panels on any plotters backend.
fn draw<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    sample: &Sample,
    rows: &[ModelPoint],
) -> Result<(), PlotError> {
    root.fill(&WHITE).map_err(PlotError::draw)?;
    let root = root
        .titled(&describe(sample), (FONT_FAMILY, CAPTION_PX))
        .map_err(PlotError::draw)?;
    let panels = root.split_evenly((2, 2));
    let t_range = linear_range(rows.iter().map(|r| r.t_k))?;
    let majority_is_n = net_doping(sample).1;

    let carriers = [
        (
            "n",
            BLUE,
            rows.iter().map(|r| (r.t_k, r.n_cm3)).collect::<Vec<_>>(),
        ),
        ("p", RED, rows.iter().map(|r| (r.t_k, r.p_cm3)).collect()),
        (
            "n_i",
            GREY,
            rows.iter().map(|r| (r.t_k, r.ni_cm3)).collect(),
        ),
    ];
    log_panel(
        &panels[0],
        "Carrier densities",
        "density (cm^-3)",
        t_range.clone(),
        &carriers,
        SeriesLabelPosition::LowerRight,
    )?;

    let mobility = [
        (
            "mu_n",
            BLUE,
            rows.iter()
                .map(|r| (r.t_k, r.mu_n_cm2_vs))
                .collect::<Vec<_>>(),
        ),
        (
            "mu_p",
            RED,
            rows.iter().map(|r| (r.t_k, r.mu_p_cm2_vs)).collect(),
        ),
    ];
    log_panel(
        &panels[1],
        "Drift mobilities",
        "mobility (cm^2/V s)",
        t_range.clone(),
        &mobility,
        SeriesLabelPosition::UpperRight,
    )?;

    let rho = [(
        "rho",
        GREEN,
        rows.iter()
            .map(|r| (r.t_k, r.rho_ohm_cm))
            .collect::<Vec<_>>(),
    )];
    log_panel(
        &panels[2],
        "Resistivity",
        "resistivity (ohm cm)",
        t_range,
        &rho,
        SeriesLabelPosition::UpperRight,
    )?;

    arrhenius_panel(&panels[3], sample, rows, majority_is_n)
}

/// The plot title: material and dopants.
fn describe(sample: &Sample) -> String {
    let list = |ds: &[crate::physics::Dopant]| {
        if ds.is_empty() {
            "none".to_string()
        } else {
            ds.iter()
                .map(|d| format!("{:?}={:e}", d.species, d.density_cm3))
                .collect::<Vec<_>>()
                .join(" ")
        }
    };
    format!(
        "{}: donors {}, acceptors {} (cm^-3)",
        sample.material.name(),
        list(&sample.donors),
        list(&sample.acceptors)
    )
}

/// A named curve: label, colour, (x, y) points.
type Curve<'a> = (&'a str, RGBColor, Vec<(f64, f64)>);

/// One panel with temperature on x and a logarithmic y axis spanning at
/// most [`MAX_DECADES`] below the largest value.
fn log_panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    caption: &str,
    y_desc: &str,
    t_range: std::ops::Range<f64>,
    series: &[Curve<'_>],
    legend_at: SeriesLabelPosition,
) -> Result<(), PlotError> {
    let y_range = log_range(
        series.iter().flat_map(|s| s.2.iter().map(|p| p.1)),
        MAX_DECADES,
    )?;
    let y_lo = y_range.start;
    let mut chart = ChartBuilder::on(area)
        .caption(caption, (FONT_FAMILY, CAPTION_PX))
        .margin(12)
        .x_label_area_size(42)
        .y_label_area_size(72)
        .build_cartesian_2d(t_range, y_range.log_scale())
        .map_err(PlotError::draw)?;
    chart
        .configure_mesh()
        .x_desc("T (K)")
        .y_desc(y_desc)
        .x_label_formatter(&tick_label)
        .y_label_formatter(&log_label)
        .label_style((FONT_FAMILY, TICK_PX))
        .axis_desc_style((FONT_FAMILY, LABEL_PX))
        .draw()
        .map_err(PlotError::draw)?;
    for (name, color, points) in series {
        let color = *color;
        // Values below the axis (minority carriers at low T) are left out.
        let shown = points
            .iter()
            .copied()
            .filter(|p| p.1.is_finite() && p.1 >= y_lo);
        chart
            .draw_series(LineSeries::new(shown, color.stroke_width(2)))
            .map_err(PlotError::draw)?
            .label(*name)
            .legend(move |(x, y)| {
                PathElement::new(vec![(x, y), (x + 20, y)], color.stroke_width(2))
            });
    }
    legend(&mut chart, legend_at)
}

/// Most decades a logarithmic density axis spans: minority densities far
/// below one carrier per cm^3 carry no information for a sensor.
const MAX_DECADES: f64 = 22.0;

/// Background shade of a regime in the Arrhenius panel.
fn shade(regime: Regime) -> RGBColor {
    match regime {
        Regime::FreezeOut => RGBColor(0xdd, 0xe8, 0xf7),
        Regime::Extrinsic => RGBColor(0xe6, 0xf2, 0xe6),
        Regime::Intrinsic => RGBColor(0xf8, 0xe1, 0xde),
    }
}

/// The Arrhenius panel: majority density (log) versus 1000/T with regimes
/// shaded and named in the legend.
fn arrhenius_panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    sample: &Sample,
    rows: &[ModelPoint],
    majority_is_n: bool,
) -> Result<(), PlotError> {
    let points: Vec<(f64, f64, Regime)> = rows
        .iter()
        .map(|r| {
            let majority = if majority_is_n { r.n_cm3 } else { r.p_cm3 };
            (1000.0 / r.t_k, majority, classify_regime(sample, r))
        })
        .filter(|p| p.1.is_finite() && p.1 > 0.0)
        .collect();
    let x_range = linear_range(points.iter().map(|p| p.0))?;
    let y_range = log_range(points.iter().map(|p| p.1), MAX_DECADES)?;
    let (y_lo, y_hi) = (y_range.start, y_range.end);
    let label = if majority_is_n { "n" } else { "p" };
    let mut chart = ChartBuilder::on(area)
        .caption(
            format!("Arrhenius view of {label}"),
            (FONT_FAMILY, CAPTION_PX),
        )
        .margin(12)
        .x_label_area_size(42)
        .y_label_area_size(72)
        .build_cartesian_2d(x_range, y_range.log_scale())
        .map_err(PlotError::draw)?;
    // Shade each run of equal regime, splitting halfway between neighbours;
    // name each regime once in the legend, in order of appearance.
    let mut named: Vec<Regime> = Vec::new();
    let mut start = 0;
    while start < points.len() {
        let regime = points[start].2;
        let mut end = start;
        while end + 1 < points.len() && points[end + 1].2 == regime {
            end += 1;
        }
        let edge = |i: usize, j: usize| 0.5 * (points[i].0 + points[j].0);
        let x0 = if start == 0 {
            points[0].0
        } else {
            edge(start - 1, start)
        };
        let x1 = if end + 1 == points.len() {
            points[end].0
        } else {
            edge(end, end + 1)
        };
        let color = shade(regime);
        let drawn = chart
            .draw_series(std::iter::once(Rectangle::new(
                [(x0, y_lo), (x1, y_hi)],
                color.filled(),
            )))
            .map_err(PlotError::draw)?;
        if !named.contains(&regime) {
            named.push(regime);
            drawn.label(regime.name()).legend(move |(x, y)| {
                Rectangle::new([(x, y - 5), (x + 20, y + 5)], color.filled())
            });
        }
        start = end + 1;
    }
    chart
        .configure_mesh()
        .x_desc("1000 / T (1/K)")
        .y_desc(format!("{label} (cm^-3)"))
        // Same mesh style as the plot above: plotters' builder has no shared style value.
        .x_label_formatter(&tick_label)
        .y_label_formatter(&log_label)
        .label_style((FONT_FAMILY, TICK_PX))
        .axis_desc_style((FONT_FAMILY, LABEL_PX))
        .draw()
        .map_err(PlotError::draw)?;
    let color = if majority_is_n { BLUE } else { RED };
    let shown = points.iter().filter(|p| p.1 >= y_lo).map(|p| (p.0, p.1));
    chart
        .draw_series(LineSeries::new(shown, color.stroke_width(2)))
        .map_err(PlotError::draw)?
        .label(label)
        .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 20, y)], color.stroke_width(2)));
    legend(&mut chart, SeriesLabelPosition::UpperRight)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physics::{Material, Species};

    fn sample() -> Sample {
        Sample::new(Material::Si, &[(Species::P, 1e15)], &[])
    }

    /// A synthetic row with the given electron and hole densities.
    fn row(t_k: f64, n_cm3: f64, p_cm3: f64) -> ModelPoint {
        ModelPoint {
            t_k,
            eg_ev: 1.12,
            ni_cm3: (n_cm3 * p_cm3).sqrt(),
            n_cm3,
            p_cm3,
            donors_ionized_cm3: n_cm3.min(1e15),
            acceptors_ionized_cm3: 0.0,
            fermi_from_ev_ev: 0.9,
            mu_n_cm2_vs: 1400.0 * (t_k / 300.0).powf(-2.4),
            mu_p_cm2_vs: 470.0 * (t_k / 300.0).powf(-2.2),
            mu_n_per_free_carrier_cm2_vs: 1400.0 * (t_k / 300.0).powf(-2.4),
            mu_p_per_free_carrier_cm2_vs: 470.0 * (t_k / 300.0).powf(-2.2),
            rho_ohm_cm: 1.0 / (1.602e-19 * n_cm3 * 1400.0),
            hall_coefficient_cm3_c: -1.0 / (1.602e-19 * n_cm3),
            piezo_factor: Some(1.0),
            hall_factor_n: 1.18,
            hall_factor_p: 0.75,
            hall_factor_n_source: crate::physics::HallFactorSource::OhtaSakata1978,
            hall_factor_p_source: crate::physics::HallFactorSource::LinEtAl1981,
            hall_mobility_cm2_vs: -1593.0,
        }
    }

    #[test]
    fn regimes_follow_the_ten_percent_bands() {
        // (n, expected regime) for N_D = 1e15 n-type.
        for (n, expected) in [
            (5e14, Regime::FreezeOut),
            (0.95e15, Regime::Extrinsic),
            (1.05e15, Regime::Extrinsic),
            (2e15, Regime::Intrinsic),
        ] {
            let got = classify_regime(&sample(), &row(300.0, n, 1e5));
            assert_eq!(got, expected, "n {n:e}: got {got:?}, expected {expected:?}");
        }
    }

    #[test]
    fn svg_is_complete_and_repeatable() {
        let rows = [
            row(50.0, 1e13, 1.0),
            row(300.0, 1e15, 1e5),
            row(700.0, 5e15, 4e15),
        ];
        let a = model_svg(&sample(), &rows).unwrap();
        let b = model_svg(&sample(), &rows).unwrap();
        assert_eq!(a, b, "same input must give the same SVG");
        assert!(a.starts_with("<svg") && a.trim_end().ends_with("</svg>"));
        // Same determinism check as in plot/element.rs: each plot module tests its own SVG.
        for text in [
            "freeze-out",
            "extrinsic",
            "intrinsic",
            "Arrhenius view of n",
            "Drift mobilities",
        ] {
            assert!(a.contains(text), "SVG lacks {text:?}");
        }
        assert!(
            model_svg(&sample(), &rows[..1]).is_err(),
            "one row cannot make a plot"
        );
    }
}
