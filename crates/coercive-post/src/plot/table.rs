//! CSV and JSON tables of the numbers behind every chart.

use serde::{Deserialize, Serialize};

use super::chart::Series;
use super::PlotError;

/// A table of numbers with named columns (each name carries its unit, e.g. `gap (mm)`).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Table {
    /// Column headers, with units.
    pub columns: Vec<String>,
    /// Rows, each with one value per column.
    pub rows: Vec<Vec<f64>>,
}

impl Table {
    /// A table with the given headers and no rows.
    pub fn new(columns: Vec<String>) -> Table {
        Table {
            columns,
            rows: Vec::new(),
        }
    }

    /// Appends a row.
    ///
    /// # Errors
    /// [`PlotError::LengthMismatch`] if the row has not one value per column.
    pub fn push(&mut self, row: Vec<f64>) -> Result<(), PlotError> {
        if row.len() != self.columns.len() {
            return Err(PlotError::LengthMismatch {
                what: "table row",
                expected: self.columns.len(),
                got: row.len(),
            });
        }
        self.rows.push(row);
        Ok(())
    }

    /// CSV text (RFC 4180: comma separated, CRLF-free `\n` line ends, quoted headers where
    /// needed); numbers are written in Rust's shortest round-trip form.
    pub fn to_csv(&self) -> String {
        let mut out = self
            .columns
            .iter()
            .map(|c| csv_field(c))
            .collect::<Vec<_>>()
            .join(",");
        out.push('\n');
        for row in &self.rows {
            out.push_str(
                &row.iter()
                    .map(|v| format!("{v}"))
                    .collect::<Vec<_>>()
                    .join(","),
            );
            out.push('\n');
        }
        out
    }

    /// Pretty-printed JSON `{ "columns": [...], "rows": [[...], ...] }`; non-finite numbers
    /// become `null`.
    pub fn to_json(&self) -> String {
        serde_json::to_string_pretty(self).unwrap_or_else(|_| "{}".into())
    }
}

fn csv_field(s: &str) -> String {
    if s.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

/// The points of every series as CSV in long form: `series,<x_label>,<y_label>`, one line per
/// point, in series order.
pub fn table_csv(series: &[Series], x_label: &str, y_label: &str) -> String {
    let mut out = format!("series,{},{}\n", csv_field(x_label), csv_field(y_label));
    for s in series {
        let label = csv_field(&s.label);
        for &(x, y) in &s.points {
            out.push_str(&format!("{label},{x},{y}\n"));
        }
    }
    out
}

#[derive(Serialize)]
struct SeriesTable<'a> {
    x_label: &'a str,
    y_label: &'a str,
    series: &'a [Series],
}

/// The series as pretty-printed JSON:
/// `{ "x_label": .., "y_label": .., "series": [{ "label", "points": [[x, y], ..], "style" }] }`.
pub fn table_json(series: &[Series], x_label: &str, y_label: &str) -> String {
    serde_json::to_string_pretty(&SeriesTable {
        x_label,
        y_label,
        series,
    })
    .unwrap_or_else(|_| "{}".into())
}
