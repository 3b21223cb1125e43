//! Magnet working points on their recoil lines (second quadrant of the B-H plane).

use super::chart::{xy_chart_svg, ChartOptions, LineStyle, Marker, Series, SeriesStyle};
use super::colour::series_colour;
use super::PlotError;
use crate::field::MagnetWorkingPoint;

/// The series of a working-point chart, H in kA/m and B in T (both along the easy axis): for
/// each magnet its linear recoil line from (-Br/(mu_0 mu_rec), 0) to (0, Br), the load line
/// from the origin through the mean working point (slope -mu_0 times the permeance
/// coefficient), the mean working point and the most demagnetised point. One colour per
/// magnet.
pub fn working_point_series(points: &[MagnetWorkingPoint]) -> Vec<Series> {
    let mut series = Vec::with_capacity(4 * points.len());
    for (i, p) in points.iter().enumerate() {
        let colour = Some(series_colour(i));
        let style = |marker: Marker, line: LineStyle| SeriesStyle {
            colour: colour.clone(),
            marker: Some(marker),
            line: Some(line),
        };
        let ka = 1e-3;
        series.push(Series {
            label: format!("{}: recoil line", p.region),
            points: vec![
                (-p.model_coercivity_a_per_m * ka, 0.0),
                (0.0, p.remanence_t),
            ],
            style: style(Marker::None, LineStyle::Solid),
        });
        series.push(Series {
            label: format!("{}: load line", p.region),
            points: vec![
                (0.0, 0.0),
                (p.mean_field_strength_a_per_m * ka, p.mean_flux_density_t),
            ],
            style: style(Marker::None, LineStyle::Dotted),
        });
        series.push(Series {
            label: format!("{}: mean working point", p.region),
            points: vec![(p.mean_field_strength_a_per_m * ka, p.mean_flux_density_t)],
            style: style(Marker::Circle, LineStyle::None),
        });
        series.push(Series {
            label: format!("{}: most demagnetised point", p.region),
            points: vec![(p.min_field_strength_a_per_m * ka, p.min_flux_density_t)],
            style: style(Marker::Triangle, LineStyle::None),
        });
    }
    series
}

/// A chart of [`working_point_series`] with axis labels in kA/m and T; `options` supplies the
/// title and size (its axis labels are replaced when empty). The y axis includes B = 0.
///
/// # Errors
/// [`PlotError::Empty`] if `points` is empty, and the errors of [`xy_chart_svg`].
pub fn working_point_chart_svg(
    points: &[MagnetWorkingPoint],
    options: &ChartOptions,
) -> Result<String, PlotError> {
    if points.is_empty() {
        return Err(PlotError::Empty {
            what: "no magnet working point".into(),
        });
    }
    let mut options = options.clone();
    if options.x_label.is_empty() {
        options.x_label = "H along the easy axis (kA/m)".into();
    }
    if options.y_label.is_empty() {
        options.y_label = "B along the easy axis (T)".into();
    }
    if options.title.is_empty() {
        options.title = "Magnet working points".into();
    }
    options.include_zero_y = true;
    xy_chart_svg(&working_point_series(points), &options)
}
