//! Station plots: error against temperature on a logarithmic axis (lot
//! envelopes before and after compensation; a table's error against its
//! allowance), as SVG text.

use super::style::{
    BLUE, CAPTION_PX, FONT_FAMILY, GREEN, GREY, LABEL_PX, PlotError, RED, TICK_PX, register_font,
};
use plotters::prelude::*;

/// Width and height of the station plots in pixels.
pub const SIZE_PX: (u32, u32) = (900, 560);

/// One curve: label and (t_c, |error| ppm) points.
pub type Series = (String, Vec<(f64, f64)>);

/// Draws `series` (|error| in ppm of span, log axis) against temperature,
/// with an optional horizontal budget line; returns the SVG text.
pub fn error_svg(
    title: &str,
    series: &[Series],
    budget_ppm: Option<f64>,
) -> Result<String, PlotError> {
    register_font()?;
    let pts = series.iter().flat_map(|s| s.1.iter());
    let (mut t0, mut t1, mut y0, mut y1) = (
        f64::INFINITY,
        f64::NEG_INFINITY,
        f64::INFINITY,
        f64::NEG_INFINITY,
    );
    for &(t, y) in pts {
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
    let (lo, hi) = (
        10f64.powf(y0.log10().floor()),
        10f64.powf(y1.log10().ceil() + 1e-9),
    );
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, SIZE_PX).into_drawing_area();
        root.fill(&WHITE).map_err(PlotError::draw)?;
        let mut chart = ChartBuilder::on(&root)
            .caption(title, (FONT_FAMILY, CAPTION_PX))
            .margin(20)
            .x_label_area_size(45)
            .y_label_area_size(70)
            .build_cartesian_2d(t0..t1, (lo..hi).log_scale())
            .map_err(PlotError::draw)?;
        chart
            .configure_mesh()
            .x_desc("temperature (C)")
            .y_desc("worst |error| (ppm of span)")
            .label_style((FONT_FAMILY, TICK_PX))
            .axis_desc_style((FONT_FAMILY, LABEL_PX))
            .draw()
            .map_err(PlotError::draw)?;
        let colours = [GREY, RED, BLUE, GREEN];
        for (k, (label, points)) in series.iter().enumerate() {
            let c = colours[k % colours.len()];
            let p: Vec<(f64, f64)> = points.iter().map(|&(t, y)| (t, y.max(lo))).collect();
            chart
                .draw_series(LineSeries::new(p.clone(), c.stroke_width(2)))
                .map_err(PlotError::draw)?
                .label(label.as_str())
                .legend(move |(x, y)| {
                    PathElement::new(vec![(x, y), (x + 20, y)], c.stroke_width(2))
                });
            if p.len() < 40 {
                chart
                    .draw_series(p.iter().map(|&q| Circle::new(q, 3, c.filled())))
                    .map_err(PlotError::draw)?;
            }
        }
        if let Some(b) = budget_ppm {
            chart
                .draw_series(LineSeries::new(
                    vec![(t0, b), (t1, b)],
                    BLACK.stroke_width(1),
                ))
                .map_err(PlotError::draw)?
                .label("budget")
                .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 20, y)], BLACK));
        }
        chart
            .configure_series_labels()
            .background_style(WHITE.mix(0.85))
            .border_style(BLACK)
            .label_font((FONT_FAMILY, TICK_PX))
            .draw()
            .map_err(PlotError::draw)?;
        root.present().map_err(PlotError::draw)?;
    }
    Ok(svg)
}
