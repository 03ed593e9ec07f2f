//! Station plots: error against temperature on a logarithmic axis (one part
//! or a lot's worst-case envelope before and after compensation; a table's
//! error against its allowance), as SVG or PNG. The `demo` and the
//! `plot part|lot|table` commands draw through the same [`ErrorFigure`].

use super::style::{
    BLUE, CAPTION_PX, FONT_FAMILY, Figure, GREEN, GREY, LABEL_PX, PURPLE, PlotError, RED, TICK_PX,
    figure_svg, legend, write_figure,
};
use crate::station::compare::{Comparison, QualifiedComparison};
use crate::station::pipeline::VerifyReport;
use plotters::coord::Shift;
use plotters::prelude::*;
use std::path::Path;

/// Width and height of the station plots in pixels.
pub const SIZE_PX: (u32, u32) = (900, 560);

/// One curve: label and (t_c, |error| ppm) points.
pub type Series = (String, Vec<(f64, f64)>);

/// |error| in ppm of span against temperature, one line per series, with an
/// optional horizontal budget line.
#[derive(Debug, Clone, PartialEq)]
pub struct ErrorFigure<'a> {
    /// Caption.
    pub title: &'a str,
    /// The curves.
    pub series: &'a [Series],
    /// Budget (or allowance) line, ppm of span.
    pub budget_ppm: Option<f64>,
    /// Legend label of that line.
    pub budget_label: &'a str,
}

/// Axis limits of an error figure: (t0, t1, log-axis low, log-axis high).
fn limits(series: &[Series], budget_ppm: Option<f64>) -> Result<(f64, f64, f64, f64), PlotError> {
    let (mut t0, mut t1, mut y0, mut y1) = (
        f64::INFINITY,
        f64::NEG_INFINITY,
        f64::INFINITY,
        f64::NEG_INFINITY,
    );
    for &(t, y) in series.iter().flat_map(|s| s.1.iter()) {
        t0 = t0.min(t);
        t1 = t1.max(t);
        if y > 0.0 && y.is_finite() {
            y0 = y0.min(y);
            y1 = y1.max(y);
        }
    }
    if let Some(b) = budget_ppm {
        y0 = y0.min(b);
        y1 = y1.max(b);
    }
    if !(t1 > t0 && y1 >= y0 && y0 > 0.0) {
        return Err(PlotError::NoData(
            "error plot needs two temperatures and positive errors".into(),
        ));
    }
    Ok((
        t0,
        t1,
        10f64.powf(y0.log10().floor()),
        10f64.powf(y1.log10().ceil() + 1e-9),
    ))
}

impl Figure for ErrorFigure<'_> {
    fn size_px(&self) -> (u32, u32) {
        SIZE_PX
    }

    fn draw<DB: DrawingBackend>(&self, root: &DrawingArea<DB, Shift>) -> Result<(), PlotError> {
        let (t0, t1, lo, hi) = limits(self.series, self.budget_ppm)?;
        root.fill(&WHITE).map_err(PlotError::draw)?;
        let mut chart = ChartBuilder::on(root)
            .caption(self.title, (FONT_FAMILY, CAPTION_PX))
            .margin(20)
            .x_label_area_size(45)
            .y_label_area_size(70)
            .build_cartesian_2d(t0..t1, (lo..hi).log_scale())
            .map_err(PlotError::draw)?;
        // Same mesh style as plot/report.rs: plotters' builder has no shared style value.
        chart
            .configure_mesh()
            .x_desc("temperature (C)")
            .y_desc("worst |error| (ppm of span)")
            .label_style((FONT_FAMILY, TICK_PX))
            .axis_desc_style((FONT_FAMILY, LABEL_PX))
            .draw()
            .map_err(PlotError::draw)?;
        let colours = [GREY, RED, BLUE, GREEN, PURPLE];
        for (k, (label, points)) in self.series.iter().enumerate() {
            let c = colours[k % colours.len()];
            let p: Vec<(f64, f64)> = points.iter().map(|&(t, y)| (t, y.max(lo))).collect();
            chart
                .draw_series(LineSeries::new(p.clone(), c.stroke_width(2)))
                .map_err(PlotError::draw)?
                .label(label.as_str())
                .legend(move |(x, y)| {
                    PathElement::new(vec![(x, y), (x + 20, y)], c.stroke_width(2))
                });
            // Few points are chamber temperatures: mark them.
            if p.len() < 40 {
                chart
                    .draw_series(p.iter().map(|&q| Circle::new(q, 3, c.filled())))
                    .map_err(PlotError::draw)?;
            }
        }
        if let Some(b) = self.budget_ppm {
            chart
                .draw_series(LineSeries::new(
                    vec![(t0, b), (t1, b)],
                    BLACK.stroke_width(1),
                ))
                .map_err(PlotError::draw)?
                .label(self.budget_label)
                .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 20, y)], BLACK));
        }
        legend(&mut chart, SeriesLabelPosition::MiddleRight)
    }
}

/// Draws `series` (|error| in ppm of span, log axis) against temperature,
/// with an optional horizontal line `(ppm, label)`; returns the SVG text.
pub fn error_svg(
    title: &str,
    series: &[Series],
    line: Option<(f64, &str)>,
) -> Result<String, PlotError> {
    let budget_ppm = line.map(|l| l.0);
    let figure = ErrorFigure {
        title,
        series,
        budget_ppm,
        budget_label: line.map_or("", |l| l.1),
    };
    limits(series, budget_ppm)?;
    figure_svg(&figure)
}

/// Writes the error plot to `path` atomically (PNG when the name ends in
/// `.png`, SVG otherwise), with an optional horizontal line `(ppm, label)`.
pub fn write_error_plot(
    path: &Path,
    title: &str,
    series: &[Series],
    line: Option<(f64, &str)>,
) -> Result<(), PlotError> {
    let budget_ppm = line.map(|l| l.0);
    limits(series, budget_ppm)?;
    write_figure(
        path,
        &ErrorFigure {
            title,
            series,
            budget_ppm,
            budget_label: line.map_or("", |l| l.1),
        },
    )
}

/// The lot plot's curves from a comparison: worst |error| over the lot at
/// each held-out temperature, uncompensated, physics and (when the parts
/// carry one) polynomial calibration.
pub fn comparison_series(c: &Comparison, q: Option<&QualifiedComparison>) -> Vec<Series> {
    let column =
        |k: usize| -> Vec<(f64, f64)> { c.by_temperature.iter().map(|r| (r[0], r[k])).collect() };
    let mut v = vec![
        ("uncompensated (25 C offset and gain)".into(), column(1)),
        (
            format!("physics calibration ({} numbers)", c.physics_coefficients),
            column(2),
        ),
        (
            format!(
                "polynomial calibration ({} numbers)",
                c.polynomial_coefficients
            ),
            column(3),
        ),
    ];
    if let Some(q) = q.filter(|q| q.parts > 0) {
        let col = |k: usize| -> Vec<(f64, f64)> {
            q.by_temperature.iter().map(|r| (r[0], r[k])).collect()
        };
        v.push((
            format!("on the qualified design ({} numbers)", q.coefficients),
            col(1),
        ));
        v.push((
            format!(
                "polynomial with nonlinearity ({} numbers)",
                q.polynomial_coefficients
            ),
            col(2),
        ));
    }
    v
}

/// Title and curve of a table's error plot: the image's dense error per
/// temperature, labelled with its plan and size (the allowance is the
/// budget line).
pub fn table_series(report: &VerifyReport, curve: Vec<(f64, f64)>) -> (String, Vec<Series>) {
    (
        format!("{}: table error against its allowance", report.serial),
        vec![(
            format!(
                "{:?} {:?} table, {} bytes",
                report.plan.interpolation, report.plan.format, report.bytes
            ),
            curve,
        )],
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::plot::style::figure_rgb;

    fn series() -> Vec<Series> {
        vec![
            (
                "before".into(),
                vec![(-20.0, 3000.0), (25.0, 10.0), (85.0, 4000.0)],
            ),
            (
                "after".into(),
                vec![(-20.0, 30.0), (25.0, 2.0), (85.0, 40.0)],
            ),
        ]
    }

    #[test]
    fn svg_and_bitmap_are_repeatable_and_labelled() {
        let s = series();
        let a = error_svg("lot", &s, Some((500.0, "budget"))).unwrap();
        let b = error_svg("lot", &s, Some((500.0, "budget"))).unwrap();
        assert_eq!(a, b, "same input must give the same SVG");
        for text in ["lot", "before", "after", "budget", "temperature (C)"] {
            assert!(a.contains(text), "SVG lacks {text:?}");
        }
        let f = ErrorFigure {
            title: "lot",
            series: &s,
            budget_ppm: None,
            budget_label: "",
        };
        let (x, y) = (figure_rgb(&f).unwrap(), figure_rgb(&f).unwrap());
        assert_eq!(x, y, "same input must give the same bitmap");
        // Not blank: the curves and text leave non-white pixels.
        assert!(x.iter().any(|&v| v < 200), "bitmap is blank");
    }

    #[test]
    fn empty_or_non_positive_data_is_refused() {
        let one: Vec<Series> = vec![("x".into(), vec![(25.0, 1.0)])];
        assert!(error_svg("t", &one, None).is_err(), "one temperature");
        let zero: Vec<Series> = vec![("x".into(), vec![(0.0, 0.0), (1.0, 0.0)])];
        assert!(error_svg("t", &zero, None).is_err(), "no positive error");
    }
}
