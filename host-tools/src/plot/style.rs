//! What every semidrift plot shares: the embedded font, palette, text sizes,
//! log-axis ranges, the legend box, and writing a finished figure as SVG or
//! PNG atomically.

use plotters::coord::Shift;
use plotters::prelude::{
    BLACK, BitMapBackend, Cartesian2d, ChartContext, Color, DrawingArea, DrawingBackend,
    IntoDrawingArea, SVGBackend, SeriesLabelPosition, WHITE,
};
use plotters::style::{FontStyle, RGBColor};
use std::path::Path;
use std::sync::Once;

/// DejaVu Sans (Bitstream Vera licence, see `assets/DejaVuSans-LICENSE.txt`),
/// used only to measure text; the SVG names the generic family below.
const FONT_BYTES: &[u8] = include_bytes!("../../assets/DejaVuSans.ttf");

/// Font family the plots ask for; the embedded font is registered under it.
pub const FONT_FAMILY: &str = "sans-serif";

/// Caption (panel title) size in pixels.
pub const CAPTION_PX: u32 = 20;
/// Axis-description size in pixels.
pub const LABEL_PX: u32 = 15;
/// Tick-label and legend size in pixels.
pub const TICK_PX: u32 = 12;

/// Electron / n-type curves.
pub const BLUE: RGBColor = RGBColor(0x1f, 0x5f, 0xb4);
/// Hole / p-type curves.
pub const RED: RGBColor = RGBColor(0xc0, 0x39, 0x2b);
/// Reference curves (intrinsic density, fits).
pub const GREY: RGBColor = RGBColor(0x70, 0x70, 0x70);
/// Further curves (resistivity, totals).
pub const GREEN: RGBColor = RGBColor(0x2e, 0x8b, 0x57);
/// A fifth curve where four are not enough (comparisons of methods).
pub const PURPLE: RGBColor = RGBColor(0x7d, 0x3c, 0x98);

/// Why a plot could not be drawn or written.
#[derive(Debug, thiserror::Error)]
#[non_exhaustive]
pub enum PlotError {
    /// Nothing to draw (no finite positive values for a log axis, too few points).
    #[error("nothing to plot: {0}")]
    NoData(String),
    /// plotters refused to draw.
    #[error("drawing failed: {0}")]
    Draw(String),
    /// The file could not be written.
    #[error("cannot write {path}: {source}")]
    Write {
        /// Destination file.
        path: String,
        /// Underlying I/O error.
        source: std::io::Error,
    },
    /// The station's atomic writer refused or failed.
    #[error(transparent)]
    Output(#[from] crate::station::output::OutputError),
}

impl PlotError {
    /// An atomic-write failure (the writer's message names the path).
    pub fn output(e: crate::station::output::OutputError) -> PlotError {
        PlotError::Output(e)
    }

    /// A write error on `path`, keeping only the kind of the I/O error: the
    /// temporary file's random name must not reach the (deterministic) message.
    pub fn write(path: &Path, source: std::io::Error) -> PlotError {
        PlotError::Write {
            path: path.display().to_string(),
            source: std::io::Error::from(source.kind()),
        }
    }

    /// Wraps any plotters error.
    pub fn draw(e: impl std::fmt::Display) -> PlotError {
        PlotError::Draw(e.to_string())
    }
}

/// Registers the embedded font with plotters once per process.
pub fn register_font() -> Result<(), PlotError> {
    static ONCE: Once = Once::new();
    let mut ok = true;
    ONCE.call_once(|| {
        ok = plotters::style::register_font(FONT_FAMILY, FontStyle::Normal, FONT_BYTES).is_ok();
    });
    if ok {
        Ok(())
    } else {
        Err(PlotError::Draw(
            "embedded font is not a valid TrueType font".into(),
        ))
    }
}

/// A logarithmic axis range covering every finite positive value, widened
/// to whole decades so tick labels stay readable, and spanning at most
/// `max_decades` below the largest value (smaller values fall off the axis).
pub fn log_range(
    values: impl IntoIterator<Item = f64>,
    max_decades: f64,
) -> Result<std::ops::Range<f64>, PlotError> {
    let (lo, hi) = values
        .into_iter()
        .filter(|v| v.is_finite() && *v > 0.0)
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), v| {
            (lo.min(v), hi.max(v))
        });
    if !lo.is_finite() {
        return Err(PlotError::NoData(
            "no finite positive value for a logarithmic axis".into(),
        ));
    }
    let mut hi_decade = hi.log10().ceil();
    let lo_decade = lo
        .log10()
        .floor()
        .max(hi_decade - max_decades.max(1.0).round());
    if hi_decade <= lo_decade {
        hi_decade = lo_decade + 1.0;
    }
    if hi_decade - lo_decade <= 2.0 && hi > lo {
        // Within two decades whole-decade limits leave one or two tick
        // labels; a 10 % margin lets plotters label values in between.
        return Ok(lo / 1.1..hi * 1.1);
    }
    Ok(10f64.powf(lo_decade)..10f64.powf(hi_decade))
}

/// A linear axis range from the finite values with 3 % margin on each side.
pub fn linear_range(
    values: impl IntoIterator<Item = f64>,
) -> Result<std::ops::Range<f64>, PlotError> {
    let (lo, hi) = values
        .into_iter()
        .filter(|v| v.is_finite())
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), v| {
            (lo.min(v), hi.max(v))
        });
    if !lo.is_finite() {
        return Err(PlotError::NoData(
            "no finite value for a linear axis".into(),
        ));
    }
    let margin = if hi > lo { 0.03 * (hi - lo) } else { 1.0 };
    Ok(lo - margin..hi + margin)
}

/// Tick label of a logarithmic axis: `1e15` at powers of ten, else `3.0e15`.
pub fn log_label(v: &f64) -> String {
    let decade = v.log10();
    if (decade - decade.round()).abs() < 1e-6 {
        format!("1e{}", decade.round())
    } else {
        format!("{v:.1e}")
    }
}

/// Tick label of a linear axis: no decimals for whole numbers, else one.
pub fn tick_label(v: &f64) -> String {
    if (v - v.round()).abs() < 1e-9 {
        format!("{v:.0}")
    } else {
        format!("{v:.1}")
    }
}

/// A plot that draws itself on any plotters backend, so one drawing routine
/// serves both the SVG and the PNG output.
pub trait Figure {
    /// Width and height in pixels.
    fn size_px(&self) -> (u32, u32);
    /// Draws the whole figure on `root` (background included).
    fn draw<DB: DrawingBackend>(&self, root: &DrawingArea<DB, Shift>) -> Result<(), PlotError>;
}

/// The figure as SVG text.
pub fn figure_svg(figure: &impl Figure) -> Result<String, PlotError> {
    register_font()?;
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, figure.size_px()).into_drawing_area();
        figure.draw(&root)?;
        root.present().map_err(PlotError::draw)?;
    }
    Ok(svg)
}

/// The figure as an RGB bitmap (3 bytes per pixel, row-major).
pub fn figure_rgb(figure: &impl Figure) -> Result<Vec<u8>, PlotError> {
    register_font()?;
    let (w, h) = figure.size_px();
    let mut buf = vec![0u8; (w as usize) * (h as usize) * 3];
    {
        let root = BitMapBackend::with_buffer(&mut buf, (w, h)).into_drawing_area();
        figure.draw(&root)?;
        root.present().map_err(PlotError::draw)?;
    }
    Ok(buf)
}

/// True when `path` names a PNG file (extension `.png`, any case).
pub fn is_png(path: &Path) -> bool {
    path.extension()
        .is_some_and(|e| e.eq_ignore_ascii_case("png"))
}

/// Writes the figure to `path` atomically: PNG when the name ends in `.png`,
/// SVG otherwise. Both are byte-identical for identical figures (text is
/// rasterised from the embedded font; the PNG encoder has no timestamps).
pub fn write_figure(path: &Path, figure: &impl Figure) -> Result<(), PlotError> {
    if !is_png(path) {
        return write_atomically(path, figure_svg(figure)?.as_bytes());
    }
    register_font()?;
    crate::station::output::write_atomic_with(path, |tmp, _| {
        let root = BitMapBackend::new(tmp, figure.size_px()).into_drawing_area();
        figure.draw(&root).map_err(std::io::Error::other)?;
        root.present()
            .map_err(|e| std::io::Error::other(PlotError::draw(e)))
    })
    .map_err(PlotError::output)
}

/// Draws the series legend of `chart` at `position` in the common style.
pub fn legend<'a, DB: DrawingBackend + 'a, X, Y>(
    chart: &mut ChartContext<'a, DB, Cartesian2d<X, Y>>,
    position: SeriesLabelPosition,
) -> Result<(), PlotError>
where
    X: plotters::coord::ranged1d::Ranged,
    Y: plotters::coord::ranged1d::Ranged,
{
    chart
        .configure_series_labels()
        .position(position)
        .label_font((FONT_FAMILY, TICK_PX))
        .background_style(WHITE.mix(0.85))
        .border_style(BLACK)
        .draw()
        .map_err(PlotError::draw)
}

/// Writes `contents` to `path` atomically (`station::output::write_atomic`:
/// a failed run never leaves a half-written file behind).
pub fn write_atomically(path: &Path, contents: &[u8]) -> Result<(), PlotError> {
    crate::station::output::write_atomic(path, contents).map_err(PlotError::output)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn log_ranges_snap_to_decades() {
        // (values, expected lo, expected hi); exact: powers of ten from powf
        // of whole numbers are the nearest doubles and compared with 1e-12 relative.
        let cases: &[(&[f64], f64, f64)] = &[
            (&[3e14, 2e17], 1e14, 1e18),
            (&[1e15], 1e15, 1e16),
            (&[2.2e-2, 9.9e-2], 2e-2, 0.1089),
            (&[0.0, -1.0, f64::NAN, 5.0], 1.0, 10.0),
            (&[1e-37, 1e15], 1e-6, 1e15),
        ];
        for (values, lo, hi) in cases {
            let r = log_range(values.iter().copied(), 21.0).unwrap();
            assert!(
                ((r.start - lo) / lo).abs() < 1e-12 && ((r.end - hi) / hi).abs() < 1e-12,
                "values {values:?}: got {r:?}, expected {lo}..{hi}"
            );
        }
        assert!(
            log_range([0.0, -3.0], 21.0).is_err(),
            "no positive value must fail"
        );
    }

    #[test]
    fn tick_labels_are_short() {
        for (v, expected) in [
            (1e15, "1e15"),
            (1e-3, "1e-3"),
            (3e15, "3.0e15"),
            (9999999987.0, "1e10"),
        ] {
            assert_eq!(log_label(&v), expected, "log label of {v:e}");
        }
        for (v, expected) in [(100.0, "100"), (2.5, "2.5"), (-40.0, "-40")] {
            assert_eq!(tick_label(&v), expected, "tick label of {v}");
        }
    }

    #[test]
    fn font_registers_and_measures_text() {
        use plotters::style::IntoFont;
        register_font().unwrap();
        let font = (FONT_FAMILY, 20).into_font();
        let (w, h) = font.box_size("semidrift").unwrap();
        // A 9-letter word at 20 px is clearly wider than tall and not absurd.
        assert!(w > 60 && w < 200 && h > 10 && h < 40, "box {w}x{h}");
    }

    // Same test as station/files/output.rs's writer, on the plot's SVG writer.
    #[test]
    fn atomic_write_replaces_the_file() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("a.svg");
        write_atomically(&path, b"one").unwrap();
        write_atomically(&path, b"two").unwrap();
        assert_eq!(std::fs::read(&path).unwrap(), b"two");
        // Missing folders are created (as for every station output); a path
        // below a regular file cannot be.
        write_atomically(&dir.path().join("new/dir/a.svg"), b"x").unwrap();
        assert!(write_atomically(&path.join("below/a.svg"), b"x").is_err());
    }
}
