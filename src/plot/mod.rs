//! SVG plots of corrected scans and correction tables (plotters, SVG backend only, so
//! no system font library is needed).
//!
//! The functions take plain numbers; what they show is decided by the caller.

use plotters::prelude::*;
use thiserror::Error;

#[derive(Debug, Error, Clone, PartialEq)]
#[non_exhaustive]
pub enum PlotError {
    #[error("plot '{title}': {message}")]
    Data { title: String, message: String },
    #[error("plot '{title}': drawing failed: {message}")]
    Draw { title: String, message: String },
}

/// One data series: points with optional symmetric vertical errors.
#[derive(Debug, Clone, PartialEq)]
pub struct Series {
    pub label: String,
    pub x: Vec<f64>,
    pub y: Vec<f64>,
    /// Same length as `y`, or empty for no error bars.
    pub y_err: Vec<f64>,
    /// Draw as a line (true) or as markers (false).
    pub line: bool,
}

/// Axis labels (with units) and the title of a plot.
#[derive(Debug, Clone, PartialEq)]
pub struct Axes {
    pub title: String,
    pub x_label: String,
    pub y_label: String,
}

const SIZE: (u32, u32) = (900, 600);
const COLOURS: [RGBColor; 5] = [
    RGBColor(31, 119, 180),
    RGBColor(214, 39, 40),
    RGBColor(44, 160, 44),
    RGBColor(148, 103, 189),
    RGBColor(255, 127, 14),
];

fn range(values: impl Iterator<Item = f64>, pad: f64) -> (f64, f64) {
    let (lo, hi) = values.fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), v| {
        (a.min(v), b.max(v))
    });
    let span = (hi - lo).abs().max(1e-12 * hi.abs().max(1.0));
    (lo - pad * span, hi + pad * span)
}

/// Series against x on linear axes, with error bars where given.
///
/// # Errors
/// Empty or non-finite data, mismatched lengths, a drawing failure.
pub fn series_svg(axes: &Axes, series: &[Series]) -> Result<String, PlotError> {
    let bad = |message: String| PlotError::Data {
        title: axes.title.clone(),
        message,
    };
    for s in series {
        if s.x.is_empty()
            || s.x.len() != s.y.len()
            || !(s.y_err.is_empty() || s.y_err.len() == s.y.len())
        {
            return Err(bad(format!(
                "series '{}' has mismatched or no points",
                s.label
            )));
        }
        if s.x
            .iter()
            .chain(&s.y)
            .chain(&s.y_err)
            .any(|v| !v.is_finite())
        {
            return Err(bad(format!("series '{}' has a non-finite value", s.label)));
        }
    }
    if series.is_empty() {
        return Err(bad("no series".into()));
    }
    let (x0, x1) = range(series.iter().flat_map(|s| s.x.iter().copied()), 0.03);
    let (y0, y1) = range(
        series.iter().flat_map(|s| {
            let e = |i: usize| s.y_err.get(i).copied().unwrap_or(0.0);
            (0..s.y.len()).flat_map(move |i| [s.y[i] - e(i), s.y[i] + e(i)])
        }),
        0.08,
    );
    let mut out = String::new();
    let draw = |e: String| PlotError::Draw {
        title: axes.title.clone(),
        message: e,
    };
    {
        let root = SVGBackend::with_string(&mut out, SIZE).into_drawing_area();
        root.fill(&WHITE).map_err(|e| draw(e.to_string()))?;
        let mut chart = ChartBuilder::on(&root)
            .caption(&axes.title, ("sans-serif", 22))
            .margin(15)
            .x_label_area_size(50)
            .y_label_area_size(80)
            .build_cartesian_2d(x0..x1, y0..y1)
            .map_err(|e| draw(e.to_string()))?;
        chart
            .configure_mesh()
            .x_desc(&axes.x_label)
            .y_desc(&axes.y_label)
            .draw()
            .map_err(|e| draw(e.to_string()))?;
        for (k, s) in series.iter().enumerate() {
            let colour = COLOURS[k % COLOURS.len()];
            let pts = s.x.iter().copied().zip(s.y.iter().copied());
            let anno = if s.line {
                chart
                    .draw_series(LineSeries::new(pts, colour.stroke_width(2)))
                    .map_err(|e| draw(e.to_string()))?
            } else {
                chart
                    .draw_series(pts.map(|(x, y)| Circle::new((x, y), 3, colour.filled())))
                    .map_err(|e| draw(e.to_string()))?
            };
            anno.label(s.label.clone()).legend(move |(x, y)| {
                PathElement::new(vec![(x, y), (x + 20, y)], colour.stroke_width(2))
            });
            if !s.y_err.is_empty() {
                chart
                    .draw_series((0..s.y.len()).map(|i| {
                        ErrorBar::new_vertical(
                            s.x[i],
                            s.y[i] - s.y_err[i],
                            s.y[i],
                            s.y[i] + s.y_err[i],
                            colour.stroke_width(1),
                            6,
                        )
                    }))
                    .map_err(|e| draw(e.to_string()))?;
            }
        }
        chart
            .configure_series_labels()
            .background_style(WHITE.mix(0.8))
            .border_style(BLACK)
            .draw()
            .map_err(|e| draw(e.to_string()))?;
        root.present().map_err(|e| draw(e.to_string()))?;
    }
    Ok(out)
}

/// A horizontal bar chart: one bar per (label, value ≥ 0), e.g. a budget by source.
///
/// # Errors
/// No bars, a negative or non-finite value, a drawing failure.
pub fn bars_svg(axes: &Axes, bars: &[(String, f64)]) -> Result<String, PlotError> {
    let bad = |message: String| PlotError::Data {
        title: axes.title.clone(),
        message,
    };
    if bars.is_empty() {
        return Err(bad("no bars".into()));
    }
    if let Some((l, v)) = bars.iter().find(|(_, v)| !(v.is_finite() && *v >= 0.0)) {
        return Err(bad(format!("bar '{l}' = {v}; allowed: finite, ≥ 0")));
    }
    let top = bars
        .iter()
        .map(|b| b.1)
        .fold(0.0, f64::max)
        .max(f64::MIN_POSITIVE)
        * 1.1;
    let n = bars.len();
    let draw = |e: String| PlotError::Draw {
        title: axes.title.clone(),
        message: e,
    };
    let mut out = String::new();
    {
        let root = SVGBackend::with_string(&mut out, SIZE).into_drawing_area();
        root.fill(&WHITE).map_err(|e| draw(e.to_string()))?;
        let mut chart = ChartBuilder::on(&root)
            .caption(&axes.title, ("sans-serif", 22))
            .margin(15)
            .x_label_area_size(50)
            .y_label_area_size(40)
            .build_cartesian_2d(0.0..top, 0.0..n as f64)
            .map_err(|e| draw(e.to_string()))?;
        chart
            .configure_mesh()
            .disable_y_mesh()
            .y_labels(0)
            .x_desc(&axes.x_label)
            .y_desc(&axes.y_label)
            .draw()
            .map_err(|e| draw(e.to_string()))?;
        chart
            .draw_series(bars.iter().enumerate().map(|(i, (_, v))| {
                let y = i as f64;
                Rectangle::new([(0.0, y + 0.15), (*v, y + 0.85)], COLOURS[0].filled())
            }))
            .map_err(|e| draw(e.to_string()))?;
        // Each bar's name written inside the plot at its left end.
        chart
            .draw_series(bars.iter().enumerate().map(|(i, (label, _))| {
                Text::new(
                    label.clone(),
                    (0.01 * top, i as f64 + 0.5),
                    ("sans-serif", 16).into_font().color(&BLACK),
                )
            }))
            .map_err(|e| draw(e.to_string()))?;
        root.present().map_err(|e| draw(e.to_string()))?;
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn axes() -> Axes {
        Axes {
            title: "t".into(),
            x_label: "√s [GeV]".into(),
            y_label: "σ [nb]".into(),
        }
    }

    #[test]
    fn draws_series_with_labelled_axes() {
        let s = Series {
            label: "obs".into(),
            x: vec![1.0, 2.0, 3.0],
            y: vec![3.0, 2.0, 1.0],
            y_err: vec![0.1, 0.1, 0.1],
            line: false,
        };
        let svg = series_svg(&axes(), std::slice::from_ref(&s)).unwrap();
        assert!(svg.starts_with("<svg") && svg.contains("√s [GeV]") && svg.contains("σ [nb]"));
        let mut bad = s;
        bad.y[0] = f64::NAN;
        assert!(series_svg(&axes(), &[bad]).is_err());
        let bars = bars_svg(&axes(), &[("stat".into(), 1.0), ("lumi".into(), 0.5)]).unwrap();
        assert!(bars.contains("stat") && bars.contains("lumi"));
        assert!(bars_svg(&axes(), &[("x".into(), -1.0)]).is_err());
    }
}
