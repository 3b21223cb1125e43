//! CSV and JSON output of the result tables.

use serde::Serialize;

use crate::PostError;

/// A result table that can be written as CSV (one header line with units, one line per row)
/// and as JSON (the serde form of the table's own type).
pub trait Tabular: Serialize {
    /// Column headers, each with its unit.
    fn header(&self) -> Vec<String>;

    /// The data lines of the CSV text (without line ends).
    fn csv_rows(&self) -> Vec<String>;

    /// CSV text: comma separated, `\n` line ends, text fields quoted where needed, numbers in
    /// Rust's shortest round-trip form, missing values (e.g. per-metre columns of an
    /// axisymmetric model) as empty fields.
    fn to_csv(&self) -> String {
        let mut out = self
            .header()
            .iter()
            .map(|h| csv_field(h))
            .collect::<Vec<_>>()
            .join(",");
        out.push('\n');
        for row in self.csv_rows() {
            out.push_str(&row);
            out.push('\n');
        }
        out
    }

    /// Pretty-printed JSON of the table (non-finite numbers become `null`).
    ///
    /// # Errors
    /// [`PostError::Serialise`] if serde fails.
    fn to_json(&self) -> Result<String, PostError> {
        serde_json::to_string_pretty(self).map_err(|e| PostError::Serialise {
            what: "table as JSON".into(),
            reason: e.to_string(),
        })
    }
}

/// Quotes a CSV text field if it holds a comma, a quote or a line break (RFC 4180).
pub(crate) fn csv_field(s: &str) -> String {
    if s.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

/// One CSV line: the numbers (NaN as an empty field), with the text fields inserted before
/// number `at`.
pub(crate) fn csv_line(texts: &[String], numbers: &[f64], at: usize) -> String {
    let mut fields: Vec<String> = numbers
        .iter()
        .map(|v| {
            if v.is_nan() {
                String::new()
            } else {
                format!("{v}")
            }
        })
        .collect();
    let at = at.min(fields.len());
    for (k, t) in texts.iter().enumerate() {
        fields.insert(at + k, csv_field(t));
    }
    fields.join(",")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn csv_lines_quote_text_and_leave_missing_numbers_empty() {
        let line = csv_line(
            &["a,b".into(), "say \"hi\"".into()],
            &[1.5, f64::NAN, -2.0],
            1,
        );
        assert_eq!(line, "1.5,\"a,b\",\"say \"\"hi\"\"\",,-2");
    }
}
