//! x-y charts: force versus gap, torque versus angle, B along a path.

use std::fmt::Write;

use serde::{Deserialize, Serialize};

use super::colour::series_colour;
use super::svg::{escape, header, text};
use super::ticks::{log_ticks, nice_ticks, Ticks};
use super::PlotError;

/// Marker drawn at each point of a series.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Marker {
    /// No marker.
    None,
    /// Filled circle.
    Circle,
    /// Filled square.
    Square,
    /// Filled triangle pointing up.
    Triangle,
    /// Filled diamond.
    Diamond,
    /// Open circle.
    OpenCircle,
}

/// Line joining the points of a series.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum LineStyle {
    /// No line (markers only).
    None,
    /// Solid line.
    Solid,
    /// Dashed line.
    Dashed,
    /// Dotted line.
    Dotted,
}

/// How a series is drawn. `None` fields take the series' default (colour, marker and dash
/// pattern chosen by the series index, so series differ by more than colour).
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct SeriesStyle {
    /// Colour as `#rrggbb`.
    pub colour: Option<String>,
    /// Marker.
    pub marker: Option<Marker>,
    /// Line style.
    pub line: Option<LineStyle>,
}

/// One named series of (x, y) points, in the units of the chart's axis labels.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Series {
    /// Legend label.
    pub label: String,
    /// Points (x, y).
    pub points: Vec<(f64, f64)>,
    /// Drawing style.
    #[serde(default)]
    pub style: SeriesStyle,
}

impl Series {
    /// A series with the default style.
    pub fn new(label: impl Into<String>, points: Vec<(f64, f64)>) -> Series {
        Series {
            label: label.into(),
            points,
            style: SeriesStyle::default(),
        }
    }
}

/// Options of [`xy_chart_svg`].
#[derive(Clone, Debug, PartialEq)]
pub struct ChartOptions {
    /// Title above the chart.
    pub title: String,
    /// x-axis label with its unit, e.g. `gap (mm)`.
    pub x_label: String,
    /// y-axis label with its unit, e.g. `force (N)`.
    pub y_label: String,
    /// Picture width (px).
    pub width: f64,
    /// Picture height (px).
    pub height: f64,
    /// Logarithmic x axis (all x must be positive).
    pub log_x: bool,
    /// Fixed x range; `None` fits the data with nice ticks.
    pub x_range: Option<(f64, f64)>,
    /// Fixed y range; `None` fits the data with nice ticks.
    pub y_range: Option<(f64, f64)>,
    /// Include y = 0 in the automatic y range.
    pub include_zero_y: bool,
}

impl Default for ChartOptions {
    fn default() -> Self {
        ChartOptions {
            title: String::new(),
            x_label: String::new(),
            y_label: String::new(),
            width: 760.0,
            height: 480.0,
            log_x: false,
            x_range: None,
            y_range: None,
            include_zero_y: false,
        }
    }
}

const MARKERS: [Marker; 5] = [
    Marker::Circle,
    Marker::Square,
    Marker::Triangle,
    Marker::Diamond,
    Marker::OpenCircle,
];
const LINES: [LineStyle; 3] = [LineStyle::Solid, LineStyle::Dashed, LineStyle::Dotted];

fn marker_svg(out: &mut String, marker: Marker, x: f64, y: f64, colour: &str) {
    let r = 3.6;
    let _ = match marker {
        Marker::None => Ok(()),
        Marker::Circle => writeln!(
            out,
            "<circle cx=\"{x:.1}\" cy=\"{y:.1}\" r=\"{r}\" fill=\"{colour}\"/>"
        ),
        Marker::OpenCircle => writeln!(
            out,
            "<circle cx=\"{x:.1}\" cy=\"{y:.1}\" r=\"{r}\" fill=\"#ffffff\" stroke=\"{colour}\" stroke-width=\"1.5\"/>"
        ),
        Marker::Square => writeln!(
            out,
            "<rect x=\"{:.1}\" y=\"{:.1}\" width=\"{:.1}\" height=\"{:.1}\" fill=\"{colour}\"/>",
            x - r * 0.9,
            y - r * 0.9,
            1.8 * r,
            1.8 * r
        ),
        Marker::Triangle => writeln!(
            out,
            "<path fill=\"{colour}\" d=\"M{:.1} {:.1} L{:.1} {:.1} L{:.1} {:.1} Z\"/>",
            x,
            y - 1.2 * r,
            x + 1.1 * r,
            y + 0.8 * r,
            x - 1.1 * r,
            y + 0.8 * r
        ),
        Marker::Diamond => writeln!(
            out,
            "<path fill=\"{colour}\" d=\"M{:.1} {:.1} L{:.1} {:.1} L{:.1} {:.1} L{:.1} {:.1} Z\"/>",
            x,
            y - 1.3 * r,
            x + 1.1 * r,
            y,
            x,
            y + 1.3 * r,
            x - 1.1 * r,
            y
        ),
    };
}

fn dash(line: LineStyle) -> &'static str {
    match line {
        LineStyle::Dashed => " stroke-dasharray=\"7 4\"",
        LineStyle::Dotted => " stroke-dasharray=\"2 3\"",
        _ => "",
    }
}

/// Axis ticks and the axis range they define.
fn axis(
    lo: f64,
    hi: f64,
    fixed: Option<(f64, f64)>,
    log: bool,
    name: &'static str,
) -> Result<(Ticks, f64, f64), PlotError> {
    if let Some((a, b)) = fixed {
        if !(a.is_finite() && b.is_finite() && b > a && (!log || a > 0.0)) {
            return Err(PlotError::InvalidOption {
                option: name,
                reason: format!(
                    "({a}, {b}) is not a finite increasing range{}",
                    if log { " of positive values" } else { "" }
                ),
            });
        }
        let t = if log {
            log_ticks(a, b)?
        } else {
            nice_ticks(a, b)?
        };
        let eps = 1e-9 * (b - a);
        let (values, labels) = t
            .values
            .iter()
            .zip(&t.labels)
            .filter(|(v, _)| **v >= a - eps && **v <= b + eps)
            .map(|(v, l)| (*v, l.clone()))
            .unzip();
        return Ok((
            Ticks {
                step: t.step,
                values,
                labels,
            },
            a,
            b,
        ));
    }
    let t = if log {
        log_ticks(lo, hi)?
    } else {
        nice_ticks(lo, hi)?
    };
    let (a, b) = t.range();
    Ok((t, a, b))
}

/// Draws an x-y chart: axes with nice ticks and labels (units in the labels), a light grid,
/// one polyline and marker set per series, a legend, the title. With `log_x` the x axis is
/// logarithmic with decade ticks.
///
/// # Errors
/// [`PlotError::Empty`] if no series has a point, [`PlotError::NotFinite`] naming the series
/// and point, [`PlotError::NonPositiveOnLogAxis`], [`PlotError::InvalidOption`].
pub fn xy_chart_svg(series: &[Series], options: &ChartOptions) -> Result<String, PlotError> {
    if series.iter().all(|s| s.points.is_empty()) {
        return Err(PlotError::Empty {
            what: "no series has a point".into(),
        });
    }
    if !(options.width >= 200.0 && options.height >= 150.0) {
        return Err(PlotError::InvalidOption {
            option: "width, height",
            reason: format!(
                "{} px x {} px: at least 200 px x 150 px",
                options.width, options.height
            ),
        });
    }
    let (mut xl, mut xh, mut yl, mut yh) = (
        f64::INFINITY,
        f64::NEG_INFINITY,
        f64::INFINITY,
        f64::NEG_INFINITY,
    );
    for s in series {
        for (index, &(x, y)) in s.points.iter().enumerate() {
            for value in [x, y] {
                if !value.is_finite() {
                    return Err(PlotError::NotFinite {
                        what: format!("series {:?}", s.label),
                        index,
                        value,
                    });
                }
            }
            if options.log_x && x <= 0.0 {
                return Err(PlotError::NonPositiveOnLogAxis {
                    series: s.label.clone(),
                    index,
                    value: x,
                });
            }
            xl = xl.min(x);
            xh = xh.max(x);
            yl = yl.min(y);
            yh = yh.max(y);
        }
    }
    if options.include_zero_y {
        yl = yl.min(0.0);
        yh = yh.max(0.0);
    }
    let (xt, x0, x1) = axis(xl, xh, options.x_range, options.log_x, "x_range")?;
    let (yt, y0, y1) = axis(yl, yh, options.y_range, false, "y_range")?;

    let legend = series.iter().any(|s| !s.label.is_empty());
    let longest = series
        .iter()
        .map(|s| s.label.chars().count())
        .max()
        .unwrap_or(0);
    let legend_w = if legend {
        (48.0 + 7.0 * longest as f64).min(0.4 * options.width)
    } else {
        0.0
    };
    let (left, right, top, bottom) = (78.0, 24.0 + legend_w, 48.0, 62.0);
    let (w, h) = (options.width, options.height);
    let (pw, ph) = (w - left - right, h - top - bottom);
    let tx = |x: f64| -> f64 {
        if options.log_x {
            left + (x.log10() - x0.log10()) / (x1.log10() - x0.log10()) * pw
        } else {
            left + (x - x0) / (x1 - x0) * pw
        }
    };
    let ty = |y: f64| top + ph - (y - y0) / (y1 - y0) * ph;

    let mut out = String::new();
    header(&mut out, w, h);
    text(&mut out, left, 28.0, 17.0, "start", &options.title);
    // Grid and ticks.
    for (v, label) in xt.values.iter().zip(&xt.labels) {
        let x = tx(*v);
        let _ = writeln!(
            out,
            "<line x1=\"{x:.1}\" y1=\"{top:.1}\" x2=\"{x:.1}\" y2=\"{:.1}\" stroke=\"#dddddd\" stroke-width=\"1\"/>",
            top + ph
        );
        let _ = writeln!(
            out,
            "<line x1=\"{x:.1}\" y1=\"{:.1}\" x2=\"{x:.1}\" y2=\"{:.1}\" stroke=\"#333333\" stroke-width=\"1\"/>",
            top + ph,
            top + ph + 5.0
        );
        text(&mut out, x, top + ph + 19.0, 12.0, "middle", label);
    }
    for (v, label) in yt.values.iter().zip(&yt.labels) {
        let y = ty(*v);
        let _ = writeln!(
            out,
            "<line x1=\"{left:.1}\" y1=\"{y:.1}\" x2=\"{:.1}\" y2=\"{y:.1}\" stroke=\"#dddddd\" stroke-width=\"1\"/>",
            left + pw
        );
        let _ = writeln!(
            out,
            "<line x1=\"{:.1}\" y1=\"{y:.1}\" x2=\"{left:.1}\" y2=\"{y:.1}\" stroke=\"#333333\" stroke-width=\"1\"/>",
            left - 5.0
        );
        text(&mut out, left - 8.0, y + 4.0, 12.0, "end", label);
    }
    // Zero line when the y range crosses zero.
    if y0 < 0.0 && y1 > 0.0 {
        let y = ty(0.0);
        let _ = writeln!(
            out,
            "<line x1=\"{left:.1}\" y1=\"{y:.1}\" x2=\"{:.1}\" y2=\"{y:.1}\" stroke=\"#888888\" stroke-width=\"1\"/>",
            left + pw
        );
    }
    let _ = writeln!(
        out,
        "<rect x=\"{left:.1}\" y=\"{top:.1}\" width=\"{pw:.1}\" height=\"{ph:.1}\" fill=\"none\" stroke=\"#333333\" stroke-width=\"1\"/>"
    );
    text(
        &mut out,
        left + pw / 2.0,
        h - 16.0,
        14.0,
        "middle",
        &options.x_label,
    );
    let _ = writeln!(
        out,
        "<text x=\"0\" y=\"0\" font-size=\"14\" text-anchor=\"middle\" transform=\"translate(20 {:.1}) rotate(-90)\">{}</text>",
        top + ph / 2.0,
        escape(&options.y_label)
    );
    // Series.
    let _ = writeln!(
        out,
        "<clipPath id=\"plot\"><rect x=\"{:.1}\" y=\"{:.1}\" width=\"{:.1}\" height=\"{:.1}\"/></clipPath>\n<g clip-path=\"url(#plot)\">",
        left - 6.0,
        top - 6.0,
        pw + 12.0,
        ph + 12.0
    );
    let styles: Vec<(String, Marker, LineStyle)> = series
        .iter()
        .enumerate()
        .map(|(i, s)| {
            (
                s.style.colour.clone().unwrap_or_else(|| series_colour(i)),
                s.style.marker.unwrap_or(MARKERS[i % MARKERS.len()]),
                s.style
                    .line
                    .unwrap_or(LINES[(i / MARKERS.len()) % LINES.len()]),
            )
        })
        .collect();
    for (s, (colour, marker, line)) in series.iter().zip(&styles) {
        let colour = escape(colour);
        if *line != LineStyle::None && s.points.len() > 1 {
            let mut d = String::from("M");
            for &(x, y) in &s.points {
                let _ = write!(d, "{:.1} {:.1} ", tx(x), ty(y));
            }
            let _ = writeln!(
                out,
                "<path fill=\"none\" stroke=\"{colour}\" stroke-width=\"1.8\" stroke-linejoin=\"round\"{} d=\"{}\"/>",
                dash(*line),
                d.trim_end()
            );
        }
        for &(x, y) in &s.points {
            marker_svg(&mut out, *marker, tx(x), ty(y), &colour);
        }
    }
    out.push_str("</g>\n");
    // Legend.
    if legend {
        let lx = left + pw + 16.0;
        let mut ly = top + 10.0;
        for (s, (colour, marker, line)) in series.iter().zip(&styles) {
            let colour = escape(colour);
            if *line != LineStyle::None {
                let _ = writeln!(
                    out,
                    "<line x1=\"{lx:.1}\" y1=\"{ly:.1}\" x2=\"{:.1}\" y2=\"{ly:.1}\" stroke=\"{colour}\" stroke-width=\"1.8\"{}/>",
                    lx + 28.0,
                    dash(*line)
                );
            }
            marker_svg(&mut out, *marker, lx + 14.0, ly, &colour);
            text(&mut out, lx + 36.0, ly + 4.0, 12.0, "start", &s.label);
            ly += 20.0;
        }
    }
    out.push_str("</svg>\n");
    Ok(out)
}
