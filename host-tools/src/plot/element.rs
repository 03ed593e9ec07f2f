//! The element drift plot: relative span, offset and input resistance over
//! temperature, under constant-voltage and constant-current drive.

use super::style::{
    BLUE, CAPTION_PX, FONT_FAMILY, Figure, GREEN, LABEL_PX, PlotError, RED, TICK_PX, figure_svg,
    legend, linear_range, register_font, write_figure,
};
use crate::element::{DriftCurve, ElementKind};
use plotters::prelude::*;

/// Width and height of the element plot in pixels.
pub const SIZE_PX: (u32, u32) = (1000, 1100);

/// A named curve: label, colour, (t_c, y) points.
type Curve = (&'static str, RGBColor, Vec<(f64, f64)>);

/// The drift plot of one element as a [`Figure`].
struct ElementFigure<'a> {
    curve: &'a DriftCurve,
    title: &'a str,
}

impl Figure for ElementFigure<'_> {
    fn size_px(&self) -> (u32, u32) {
        SIZE_PX
    }
    fn draw<DB: DrawingBackend>(
        &self,
        root: &DrawingArea<DB, plotters::coord::Shift>,
    ) -> Result<(), PlotError> {
        draw(root, self.curve, self.title)
    }
}

/// Draws the three-panel drift plot of `curve` (title names the part) and
/// returns the SVG text.
pub fn element_svg(curve: &DriftCurve, title: &str) -> Result<String, PlotError> {
    check_rows(curve)?;
    figure_svg(&ElementFigure { curve, title })
}

/// Writes the drift plot to `path` atomically: PNG when the name ends in
/// `.png`, SVG otherwise.
pub fn write_element_plot(
    path: &std::path::Path,
    curve: &DriftCurve,
    title: &str,
) -> Result<(), PlotError> {
    check_rows(curve)?;
    write_figure(path, &ElementFigure { curve, title })
}

fn check_rows(curve: &DriftCurve) -> Result<(), PlotError> {
    if curve.rows.len() < 2 {
        return Err(PlotError::NoData(
            "the element plot needs at least two temperatures".into(),
        ));
    }
    Ok(())
}

/// Draws the three panels on any backend.
fn draw<DB: DrawingBackend>(
    root: &DrawingArea<DB, plotters::coord::Shift>,
    curve: &DriftCurve,
    title: &str,
) -> Result<(), PlotError> {
    register_font()?;
    let rows = &curve.rows;
    let s = &curve.summary;
    let t_range = linear_range(rows.iter().map(|r| r.t_c))?;
    let series = |f: fn(&crate::element::DriftRow) -> f64| {
        rows.iter().map(|r| (r.t_c, f(r))).collect::<Vec<_>>()
    };
    let what = match curve.kind {
        ElementKind::Bridge => "bridge",
        ElementKind::Hall => "Hall plate",
    };
    root.fill(&WHITE).map_err(PlotError::draw)?;
    let root = root
        .titled(&format!("{what}: {title}"), (FONT_FAMILY, CAPTION_PX))
        .map_err(PlotError::draw)?;
    let panels = root.split_evenly((3, 1));
    let span = [
        (
            "constant voltage",
            BLUE,
            series(|r| 100.0 * (r.span_rel_cv - 1.0)),
        ),
        (
            "constant current",
            RED,
            series(|r| 100.0 * (r.span_rel_cc - 1.0)),
        ),
    ];
    panel(
        &panels[0],
        &format!(
            "Span drift from {} C (TCS {:.0} ppm/K const. V, {:.0} ppm/K const. I)",
            s.reference_c, s.tcs_cv_ppm_per_k, s.tcs_cc_ppm_per_k
        ),
        "span change (%)",
        t_range.clone(),
        &span,
    )?;
    let offset = [
        ("constant voltage", BLUE, series(|r| r.offset_ppm_fs_cv)),
        ("constant current", RED, series(|r| r.offset_ppm_fs_cc)),
    ];
    panel(
        &panels[1],
        &format!(
            "Offset (TCO {:.1} ppm FS/K const. V, {:.1} ppm FS/K const. I)",
            s.tco_cv_ppm_fs_per_k, s.tco_cc_ppm_fs_per_k
        ),
        "offset (ppm of span)",
        t_range.clone(),
        &offset,
    )?;
    let resistance = [(
        "input resistance",
        GREEN,
        series(|r| 100.0 * (r.resistance_rel - 1.0)),
    )];
    // Same panel call as the span panel above, with one series.
    panel(
        &panels[2],
        &format!(
            "Input resistance (TCR {:.0} ppm/K, {:.1} ohm at {} C)",
            s.tcr_ppm_per_k, s.resistance_ref_ohm, s.reference_c
        ),
        "resistance change (%)",
        t_range,
        &resistance,
    )
}

/// One panel: temperature in Celsius on x, linear y.
fn panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, plotters::coord::Shift>,
    caption: &str,
    y_desc: &str,
    t_range: std::ops::Range<f64>,
    series: &[Curve],
) -> Result<(), PlotError> {
    let y_range = linear_range(series.iter().flat_map(|s| s.2.iter().map(|p| p.1)))?;
    let mut chart = ChartBuilder::on(area)
        .caption(caption, (FONT_FAMILY, LABEL_PX))
        .margin(12)
        .x_label_area_size(42)
        .y_label_area_size(80)
        .build_cartesian_2d(t_range, y_range)
        .map_err(PlotError::draw)?;
    chart
        .configure_mesh()
        .x_desc("T (C)")
        .y_desc(y_desc)
        .label_style((FONT_FAMILY, TICK_PX))
        .axis_desc_style((FONT_FAMILY, LABEL_PX))
        .draw()
        .map_err(PlotError::draw)?;
    for (name, color, points) in series {
        let color = *color;
        chart
            .draw_series(LineSeries::new(
                points.iter().copied().filter(|p| p.1.is_finite()),
                color.stroke_width(2),
            ))
            .map_err(PlotError::draw)?
            .label(*name)
            .legend(move |(x, y)| {
                PathElement::new(vec![(x, y), (x + 20, y)], color.stroke_width(2))
            });
    }
    legend(&mut chart, SeriesLabelPosition::UpperRight)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::element::{DriftRow, DriftSummary, ExcitationMode};

    /// A hand-made drift row (no physics): span falls 0.2 %/K under constant
    /// voltage, resistance rises 0.1 %/K.
    fn row(t_c: f64) -> DriftRow {
        let dt = t_c - 25.0;
        DriftRow {
            t_c,
            t_k: t_c + 273.15,
            span_v: 0.09 * (1.0 - 2e-3 * dt),
            span_rel: 1.0 - 2e-3 * dt,
            offset_v: 1e-4,
            offset_ppm_fs: 1000.0 + 2.0 * dt,
            resistance_ohm: 4000.0 * (1.0 + 1e-3 * dt),
            resistance_rel: 1.0 + 1e-3 * dt,
            excitation_v: 3.3,
            excitation_a: 3.3 / 4000.0,
            span_rel_cv: 1.0 - 2e-3 * dt,
            span_rel_cc: (1.0 - 2e-3 * dt) * (1.0 + 1e-3 * dt),
            offset_ppm_fs_cv: 1000.0 + 2.0 * dt,
            offset_ppm_fs_cc: (1000.0 + 2.0 * dt) * (1.0 + 1e-3 * dt),
            piezo_factor: Some(1.0),
            hall_coefficient_cm3_c: None,
            hall_mobility_cm2_vs: None,
            hall_factor: None,
        }
    }

    fn curve(temps: &[f64]) -> DriftCurve {
        DriftCurve {
            kind: ElementKind::Bridge,
            rows: temps.iter().map(|&t| row(t)).collect(),
            summary: DriftSummary {
                reference_c: 25.0,
                excitation_mode: ExcitationMode::Voltage,
                span_ref_v: 0.09,
                resistance_ref_ohm: 4000.0,
                tcs_ppm_per_k: -2000.0,
                tco_ppm_fs_per_k: 2.0,
                tcr_ppm_per_k: 1000.0,
                tcs_cv_ppm_per_k: -2000.0,
                tcs_cc_ppm_per_k: -1000.0,
                tco_cv_ppm_fs_per_k: 2.0,
                tco_cc_ppm_fs_per_k: 3.0,
                adc_lsb_ppm_fs: 0.1,
                hall_factor_source: None,
            },
        }
    }

    #[test]
    fn svg_is_complete_and_repeatable() {
        let c = curve(&[-20.0, 0.0, 25.0, 50.0, 85.0]);
        let a = element_svg(&c, "test part");
        let b = element_svg(&c, "test part");
        assert!(a.is_ok(), "{:?}", a.as_ref().err());
        assert_eq!(
            a.as_ref().ok(),
            b.as_ref().ok(),
            "same input must give the same SVG"
        );
        let svg = a.unwrap_or_default();
        assert!(svg.starts_with("<svg") && svg.trim_end().ends_with("</svg>"));
        for text in [
            "bridge: test part",
            "Span drift",
            "constant voltage",
            "constant current",
            "TCR 1000 ppm/K",
        ] {
            assert!(svg.contains(text), "SVG lacks {text:?}");
        }
        assert!(
            element_svg(&curve(&[25.0]), "one").is_err(),
            "one row cannot make a plot"
        );
    }
}
