//! The HTML lot report: one self-contained file (no network, no scripts,
//! no fonts fetched; every plot an inline SVG drawn with `plotters`), made
//! for a quality engineer's browser and for paper. The figures come from
//! [`LotFigures`], gathered from the station database or the demo.

use super::style::{
    BLUE, CAPTION_PX, FONT_FAMILY, Figure, GREY, LABEL_PX, PlotError, RED, TICK_PX, figure_svg,
    legend,
};
use crate::stationdb::figures::LotFigures;
use plotters::coord::Shift;
use plotters::prelude::*;
use std::fmt::Write as _;

/// Width and height of each report plot, pixels.
pub const PLOT_PX: (u32, u32) = (760, 380);

/// Bins of the worst-error histogram.
pub const HISTOGRAM_BINS: usize = 12;

/// Bars with a name each and an optional horizontal line.
#[derive(Debug, Clone, PartialEq)]
pub struct BarFigure<'a> {
    /// Caption.
    pub title: &'a str,
    /// Axis description of the values.
    pub y_desc: &'a str,
    /// (name, value) per bar.
    pub bars: &'a [(String, f64)],
    /// A horizontal line (value, legend label).
    pub line: Option<(f64, &'a str)>,
}

impl Figure for BarFigure<'_> {
    fn size_px(&self) -> (u32, u32) {
        PLOT_PX
    }

    fn draw<DB: DrawingBackend>(&self, root: &DrawingArea<DB, Shift>) -> Result<(), PlotError> {
        root.fill(&WHITE).map_err(PlotError::draw)?;
        let n = self.bars.len().max(1);
        let top = self
            .bars
            .iter()
            .map(|b| b.1)
            .chain(self.line.map(|l| l.0))
            .filter(|v| v.is_finite())
            .fold(0.0f64, f64::max);
        let top = if top > 0.0 { top * 1.15 } else { 1.0 };
        let mut chart = ChartBuilder::on(root)
            .caption(self.title, (FONT_FAMILY, CAPTION_PX))
            .margin(15)
            .x_label_area_size(40)
            .y_label_area_size(65)
            .build_cartesian_2d((0..n.saturating_sub(1).max(1)).into_segmented(), 0.0..top)
            .map_err(PlotError::draw)?;
        let names: Vec<&str> = self.bars.iter().map(|b| b.0.as_str()).collect();
        chart
            .configure_mesh()
            .disable_x_mesh()
            .x_labels(n)
            .x_label_formatter(&|k| match k {
                SegmentValue::CenterOf(k) => names.get(*k).map_or(String::new(), |s| s.to_string()),
                _ => String::new(),
            })
            .y_desc(self.y_desc)
            .label_style((FONT_FAMILY, TICK_PX))
            .axis_desc_style((FONT_FAMILY, LABEL_PX))
            .draw()
            .map_err(PlotError::draw)?;
        chart
            .draw_series(self.bars.iter().enumerate().map(|(k, b)| {
                let mut r = Rectangle::new(
                    [
                        (SegmentValue::Exact(k), 0.0),
                        (SegmentValue::Exact(k + 1), b.1.max(0.0)),
                    ],
                    BLUE.mix(0.7).filled(),
                );
                r.set_margin(0, 0, 6, 6);
                r
            }))
            .map_err(PlotError::draw)?;
        if let Some((v, label)) = self.line {
            chart
                .draw_series(LineSeries::new(
                    vec![(SegmentValue::Exact(0), v), (SegmentValue::Exact(n), v)],
                    RED.stroke_width(2),
                ))
                .map_err(PlotError::draw)?
                .label(label)
                .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 20, y)], RED.stroke_width(2)));
            legend(&mut chart, SeriesLabelPosition::UpperRight)?;
        }
        Ok(())
    }
}

/// The lot's least and greatest signed error against temperature, between
/// the budget lines.
#[derive(Debug, Clone, PartialEq)]
pub struct EnvelopeFigure<'a> {
    /// Caption.
    pub title: &'a str,
    /// [t_c, least, greatest] per temperature, ascending.
    pub envelope: &'a [[f64; 3]],
    /// Budget, ppm of span (drawn at plus and minus).
    pub budget_ppm: f64,
}

impl Figure for EnvelopeFigure<'_> {
    fn size_px(&self) -> (u32, u32) {
        PLOT_PX
    }

    fn draw<DB: DrawingBackend>(&self, root: &DrawingArea<DB, Shift>) -> Result<(), PlotError> {
        root.fill(&WHITE).map_err(PlotError::draw)?;
        let e = self.envelope;
        let (Some(first), Some(last)) = (e.first(), e.last()) else {
            return Err(PlotError::NoData("no end-of-line check recorded".into()));
        };
        let (mut t0, mut t1) = (first[0], last[0]);
        if t1 <= t0 {
            t0 -= 1.0;
            t1 += 1.0;
        }
        let span = e
            .iter()
            .flat_map(|r| [r[1].abs(), r[2].abs()])
            .fold(self.budget_ppm.abs(), f64::max)
            * 1.15;
        let mut chart = ChartBuilder::on(root)
            .caption(self.title, (FONT_FAMILY, CAPTION_PX))
            .margin(15)
            .x_label_area_size(40)
            .y_label_area_size(65)
            .build_cartesian_2d(t0..t1, -span..span)
            .map_err(PlotError::draw)?;
        chart
            .configure_mesh()
            .x_desc("chamber temperature (C)")
            .y_desc("error (ppm of span)")
            .label_style((FONT_FAMILY, TICK_PX))
            .axis_desc_style((FONT_FAMILY, LABEL_PX))
            .draw()
            .map_err(PlotError::draw)?;
        for (k, (label, c)) in [("greatest error", RED), ("least error", BLUE)]
            .into_iter()
            .enumerate()
        {
            let pts: Vec<(f64, f64)> = e.iter().map(|r| (r[0], r[2 - k])).collect();
            chart
                .draw_series(LineSeries::new(pts.clone(), c.stroke_width(2)))
                .map_err(PlotError::draw)?
                .label(label)
                .legend(move |(x, y)| {
                    PathElement::new(vec![(x, y), (x + 20, y)], c.stroke_width(2))
                });
            chart
                .draw_series(pts.iter().map(|&p| Circle::new(p, 3, c.filled())))
                .map_err(PlotError::draw)?;
        }
        for s in [1.0, -1.0] {
            let b = s * self.budget_ppm;
            let series = chart
                .draw_series(LineSeries::new(
                    vec![(t0, b), (t1, b)],
                    GREY.stroke_width(1),
                ))
                .map_err(PlotError::draw)?;
            if s > 0.0 {
                series
                    .label("budget")
                    .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 20, y)], GREY));
            }
        }
        legend(&mut chart, SeriesLabelPosition::LowerRight)
    }
}

/// The histogram bars of `values`: [`HISTOGRAM_BINS`] equal bins from 0 to
/// the largest value (or the budget when larger), named by their upper edge.
pub fn histogram(values: &[f64], budget_ppm: f64) -> Vec<(String, f64)> {
    let hi = values.iter().copied().fold(budget_ppm, f64::max).max(1e-9);
    let w = hi / HISTOGRAM_BINS as f64;
    let mut counts = [0usize; HISTOGRAM_BINS];
    for &v in values {
        let k = ((v / w).floor().max(0.0) as usize).min(HISTOGRAM_BINS - 1);
        counts[k] += 1;
    }
    counts
        .iter()
        .enumerate()
        .map(|(k, &c)| (format!("{:.0}", w * (k + 1) as f64), c as f64))
        .collect()
}

/// Escapes text for HTML.
fn esc(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
        .replace('\'', "&#39;")
}

fn opt(x: Option<f64>) -> String {
    x.map_or("-".to_string(), |v| format!("{v:.1}"))
}

/// An inline plot, or a note saying why there is none.
fn plot_or_note(svg: Result<String, PlotError>) -> String {
    match svg {
        // The XML declaration is not allowed inside HTML. One line per
        // plot: the markup between elements carries no text.
        Ok(s) => s
            .trim_start_matches(|c| c != '<')
            .trim_start_matches("<?xml version=\"1.0\" encoding=\"UTF-8\"?>")
            .replace('\n', ""),
        Err(e) => format!("<p class=\"note\">{}</p>", esc(&e.to_string())),
    }
}

const STYLE: &str = "
body{font-family:sans-serif;margin:2em;color:#222;max-width:60em}
h1{font-size:1.6em}h2{font-size:1.2em;border-bottom:1px solid #999;margin-top:1.6em}
table{border-collapse:collapse;font-size:.85em}td,th{border:1px solid #bbb;padding:.2em .5em;text-align:right}
td.l,th.l{text-align:left}.rejected{background:#fbe3e0}.released{background:#e3f4e6}
.figs td{font-size:1.1em}.note{font-style:italic}.caution{border:2px solid #c0392b;padding:.5em 1em}
svg{max-width:100%;height:auto;display:block;margin:.5em 0}
@media print{body{margin:0;max-width:none}h2{break-after:avoid}svg,tr{break-inside:avoid}.caution{border-color:#000}}
";

/// The lot report as one HTML document (byte-identical for identical
/// figures: no time of day, no random names).
pub fn lot_report_html(f: &LotFigures) -> Result<String, PlotError> {
    let y = f.yield_counts();
    let mut h = String::new();
    let w = &mut h;
    let pct = |n: usize| {
        if y.parts == 0 {
            "-".to_string()
        } else {
            format!("{:.1} %", 100.0 * n as f64 / y.parts as f64)
        }
    };
    // Writing to a String cannot fail.
    let _ = write!(
        w,
        "<!DOCTYPE html>\n<!-- A semidrift lot report: every lot's report has these sections and markup. -->\n<html lang=\"en\"><head><meta charset=\"utf-8\">\
<meta name=\"viewport\" content=\"width=device-width,initial-scale=1\">\
<title>Lot report {lot}</title><style>{style}</style></head><body>\n\
<h1>Lot report: <span id=\"lot\">{lot}</span></h1>\n\
<p>Scenario <b>{sc}</b>, budget <span id=\"budget-ppm\">{b}</span> ppm of span, operating range {r0} to {r1} C{sim}.</p>\n",
        // The style sheet on one line, as the plots.
        style = STYLE.lines().collect::<String>(),
        lot = esc(&f.lot),
        sc = esc(&f.scenario),
        b = f.budget_ppm,
        r0 = f.range_c.0,
        r1 = f.range_c.1,
        sim = if f.simulated {
            ", <b>simulated data</b>"
        } else {
            ""
        },
    );
    let _ = write!(w, "<div class=\"caution\"><b>Cautions</b><ul>");
    for c in &f.cautions {
        let _ = write!(w, "<li>{}</li>", esc(c));
    }
    let _ = writeln!(w, "</ul></div>");

    let _ = writeln!(
        w,
        "<h2>Yield</h2>\n<table class=\"figs\"><tr><th class=\"l\">parts</th><th class=\"l\">count</th><th class=\"l\">share</th></tr>"
    );
    for (id, name, n) in [
        ("parts", "recorded", y.parts),
        ("fitted", "fitted", y.fitted),
        ("verified", "image verified", y.verified),
        ("eol-passed", "end-of-line passed", y.eol_passed),
        ("released", "released for flashing", y.released),
        ("rejected", "rejected", y.rejected),
    ] {
        let _ = writeln!(
            w,
            "<tr><td class=\"l\">{name}</td><td id=\"{id}\">{n}</td><td>{}</td></tr>",
            pct(n)
        );
    }
    let _ = writeln!(w, "</table>");
    let bars: Vec<(String, f64)> = [
        ("recorded", y.parts),
        ("fitted", y.fitted),
        ("verified", y.verified),
        ("EOL pass", y.eol_passed),
        ("released", y.released),
        ("rejected", y.rejected),
    ]
    .iter()
    .map(|(n, c)| (n.to_string(), *c as f64))
    .collect();
    let _ = writeln!(
        w,
        "{}",
        plot_or_note(figure_svg(&BarFigure {
            title: "Parts through each stage",
            y_desc: "parts",
            bars: &bars,
            line: None,
        }))
    );

    let _ = writeln!(w, "<h2>Error envelope against temperature</h2>");
    let env = f.envelope();
    let _ = writeln!(
        w,
        "<p>Least and greatest error over the lot at each held-out chamber temperature inside the operating range (end-of-line check: each part compensated by its own image).</p>\n{}",
        plot_or_note(figure_svg(&EnvelopeFigure {
            title: "End-of-line error envelope",
            envelope: &env,
            budget_ppm: f.budget_ppm,
        }))
    );

    let _ = writeln!(w, "<h2>Worst error per part</h2>");
    let worst = f.worst_errors();
    let values: Vec<f64> = worst.iter().map(|x| x.1).collect();
    let worst_max = values.iter().copied().fold(f64::NAN, f64::max);
    let _ = writeln!(
        w,
        "<p>Each part's worst |error|: at its end-of-line check when recorded, else its image's dense verification against its fit. Largest over the lot: <span id=\"worst-ppm\">{}</span> ppm of span over <span id=\"worst-count\">{}</span> parts.</p>",
        opt(worst_max.is_finite().then_some(worst_max)),
        values.len()
    );
    let hist = histogram(&values, f.budget_ppm);
    let _ = writeln!(
        w,
        "{}",
        plot_or_note(figure_svg(&BarFigure {
            title: "Histogram of the worst error per part (bin upper edge, ppm)",
            y_desc: "parts",
            bars: &hist,
            line: None,
        }))
    );

    let _ = writeln!(w, "<h2>Budget terms</h2>");
    match f.worst_terms() {
        Some(t) => {
            let terms = vec![
                ("interpolation".to_string(), t.interpolation_ppm),
                ("quantization".to_string(), t.quantization_ppm),
                ("runtime model".to_string(), t.runtime_model_ppm),
                ("fit residual".to_string(), t.fit_residual_ppm),
                ("temperature".to_string(), t.temperature_ppm),
                ("total".to_string(), t.total_ppm),
            ];
            let _ = write!(
                w,
                "<p>Worst of each term over the lot's verified images, ppm of span:</p><table><tr>"
            );
            for (n, _) in &terms {
                let _ = write!(w, "<th>{n}</th>");
            }
            let _ = write!(w, "</tr><tr>");
            for (_, v) in &terms {
                let _ = write!(w, "<td>{v:.1}</td>");
            }
            let _ = writeln!(w, "</tr></table>");
            let _ = writeln!(
                w,
                "{}",
                plot_or_note(figure_svg(&BarFigure {
                    title: "Worst budget terms over the lot",
                    y_desc: "ppm of span",
                    bars: &terms,
                    line: Some((f.budget_ppm, "budget")),
                }))
            );
        }
        None => {
            let _ = writeln!(
                w,
                "<p class=\"note\">No verified image: no budget terms.</p>"
            );
        }
    }

    let _ = writeln!(w, "<h2>Outliers and rejected parts</h2>");
    let outliers = f.outliers();
    if outliers.is_empty() {
        let _ = writeln!(
            w,
            "<p>No outlier: no part's worst error lies above the lot's upper Tukey fence (third quartile + 1.5 interquartile ranges).</p>"
        );
    } else {
        let _ = writeln!(
            w,
            "<p>Worst error above the lot's upper Tukey fence (third quartile + 1.5 interquartile ranges):</p><table><tr><th class=\"l\">serial</th><th>worst ppm</th><th>fence ppm</th></tr>"
        );
        for (s, e, fence) in &outliers {
            let _ = writeln!(
                w,
                "<tr><td class=\"l\">{}</td><td>{e:.1}</td><td>{fence:.1}</td></tr>",
                esc(s)
            );
        }
        let _ = writeln!(w, "</table>");
    }
    let rejected: Vec<_> = f.parts.iter().filter(|p| p.reject.is_some()).collect();
    if rejected.is_empty() {
        let _ = writeln!(w, "<p>No part rejected.</p>");
    } else {
        let _ = writeln!(
            w,
            "<table id=\"rejects\"><tr><th class=\"l\">serial</th><th class=\"l\">stage</th><th class=\"l\">reason</th></tr>"
        );
        for p in rejected {
            if let Some((stage, reason)) = &p.reject {
                let _ = writeln!(
                    w,
                    "<tr class=\"rejected\"><td class=\"l\">{}</td><td class=\"l\">{}</td><td class=\"l\">{}</td></tr>",
                    esc(&p.serial),
                    esc(stage),
                    esc(reason)
                );
            }
        }
        let _ = writeln!(w, "</table>");
    }

    let _ = writeln!(w, "<h2>Design</h2>");
    match &f.design {
        Some(d) => {
            let _ = writeln!(
                w,
                "<p>Fitted on design <code id=\"design\">{}</code>{}{}.</p>",
                esc(&d.hash),
                d.qualification_parts
                    .map_or(String::new(), |n| format!(", learned from a {n}-part qualification lot")),
                d.model_error_ppm.map_or(String::new(), |e| format!(
                    ", model error of the production plan {e:.1} ppm of span (budgeted in every fit residual)"
                ))
            );
        }
        None => {
            let _ = writeln!(
                w,
                "<p>Physics-only fits (<span id=\"design\">no design</span>): their error between chamber temperatures has not been measured on a qualification lot.</p>"
            );
        }
    }
    if let Some(h) = &f.calibration_sha256 {
        let _ = writeln!(
            w,
            "<p>Calibration chamber CSV sha256 <code>{}</code>.</p>",
            esc(h)
        );
    }

    let _ = writeln!(
        w,
        "<h2>Parts</h2>\n<table id=\"parts-table\"><tr><th class=\"l\">serial</th><th class=\"l\">state</th><th>fit rms ppm</th><th>image bytes</th><th class=\"l\">image crc32</th><th>verify max ppm</th><th>allowance ppm</th><th>end-of-line worst ppm</th></tr>\n<!-- One row per part: the rows share their markup. -->"
    );
    for p in &f.parts {
        let _ = writeln!(
            w,
            "<tr class=\"{st}\"><td class=\"l\">{s}</td><td class=\"l\">{st}</td><td>{}</td><td>{}</td><td class=\"l\">{}</td><td>{}</td><td>{}</td><td>{}</td></tr>",
            opt(p.fit_rms_ppm),
            p.image_bytes.map_or("-".to_string(), |b| b.to_string()),
            esc(p.image_crc32.as_deref().unwrap_or("-")),
            opt(p.verify_max_ppm),
            opt(p.allowance_ppm),
            opt(p.eol_max_ppm),
            s = esc(&p.serial),
            st = esc(&p.state),
        );
    }
    let _ = writeln!(w, "</table>\n</body></html>");
    Ok(h)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn histogram_counts_every_value_once() {
        let h = histogram(&[0.0, 1.0, 50.0, 99.9, 100.0, 250.0], 120.0);
        assert_eq!(h.len(), HISTOGRAM_BINS);
        let total: f64 = h.iter().map(|b| b.1).sum();
        assert_eq!(total, 6.0);
        // Bins of 250/12 ppm: 250 lands in the last bin, 0 and 1 in the first.
        assert_eq!(h[0].1, 2.0);
        assert_eq!(h[HISTOGRAM_BINS - 1].1, 1.0);
    }

    #[test]
    fn escaping_covers_markup() {
        assert_eq!(
            esc("<a href=\"x\">&'"),
            "&lt;a href=&quot;x&quot;&gt;&amp;&#39;"
        );
    }
}
