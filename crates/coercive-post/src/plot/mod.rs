//! Pictures and tables: |B| maps with flux lines, x-y charts, CSV and JSON tables.
//!
//! Everything is written as plain SVG 1.1 text by hand (no plotting dependency: the pictures
//! need filled polygons, polylines and text only, and hand-written output lets the field map
//! merge a million triangles into a few thousand polygons, which general plotting crates do
//! not do). Render to PNG with any SVG converter, e.g. `rsvg-convert -o map.png map.svg`.
//!
//! - [`field_map_svg`]: |B| colour map per triangle, flux lines (contours of the potential),
//!   region outlines, colour bar with unit, title and a scale bar in millimetres; y up, aspect
//!   preserved.
//! - [`xy_chart_svg`]: axes with "nice" 1-2-5 ticks, grid, legend, several series with
//!   markers, optional logarithmic x axis.
//! - [`filled_contour_svg`]: filled contour bands of a function on a rectilinear grid (the
//!   psi(theta, i) and T(theta, i) maps of a machine) with a colour bar.
//! - [`working_point_chart_svg`]: each magnet's recoil line, load line and working points.
//! - [`table_csv`], [`table_json`], [`Table`]: the numbers behind every chart.
//! - [`ColourMap`]: a perceptually uniform sequential colour map built in Oklab.

mod chart;
mod colour;
mod contour;
mod field_map;
mod svg;
mod table;
mod ticks;
mod working_points;

pub use chart::{xy_chart_svg, ChartOptions, LineStyle, Marker, Series, SeriesStyle};
pub use colour::{
    linear_to_srgb, oklab_to_srgb, series_colour, srgb_to_linear, srgb_to_oklab, ColourMap,
};
pub use contour::{filled_contour_svg, ContourOptions};
pub use field_map::{axisymmetric_flux_function, field_map_svg, FieldMapOptions};
pub use table::{table_csv, table_json, Table};
pub use ticks::{log_ticks, nice_ticks, Ticks};
pub use working_points::{working_point_chart_svg, working_point_series};

use thiserror::Error;

/// Invalid input to a plot or table writer.
#[derive(Clone, Debug, PartialEq, Error)]
#[non_exhaustive]
pub enum PlotError {
    /// A slice has the wrong length.
    #[error("{what}: expected {expected} values, got {got}")]
    LengthMismatch {
        /// Which input.
        what: &'static str,
        /// Expected length.
        expected: usize,
        /// Given length.
        got: usize,
    },
    /// A value is NaN or infinite.
    #[error("{what}: value {index} is not finite ({value})")]
    NotFinite {
        /// Which input (e.g. `cell values`, or a series label).
        what: String,
        /// Index of the value.
        index: usize,
        /// The value.
        value: f64,
    },
    /// Nothing to draw.
    #[error("nothing to draw: {what}")]
    Empty {
        /// What is empty.
        what: String,
    },
    /// An option is out of range.
    #[error("option {option}: {reason}")]
    InvalidOption {
        /// The option's name.
        option: &'static str,
        /// Why it is rejected.
        reason: String,
    },
    /// A logarithmic axis got a value that is not positive.
    #[error("logarithmic x axis: series {series:?} point {index} has x = {value}, not positive")]
    NonPositiveOnLogAxis {
        /// Series label.
        series: String,
        /// Point index.
        index: usize,
        /// The offending x.
        value: f64,
    },
}
