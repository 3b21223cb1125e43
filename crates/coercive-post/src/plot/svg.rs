//! Small helpers for writing SVG text.

use std::fmt::Write;

/// Escapes text for SVG character data and attribute values.
pub(crate) fn escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&apos;"),
            c if (c as u32) < 0x20 && c != '\n' && c != '\t' => {}
            c => out.push(c),
        }
    }
    out
}

/// The SVG document header for a `width` x `height` px picture on a white background.
pub(crate) fn header(out: &mut String, width: f64, height: f64) {
    let _ = write!(
        out,
        "<svg xmlns=\"http://www.w3.org/2000/svg\" version=\"1.1\" width=\"{w:.0}\" \
         height=\"{h:.0}\" viewBox=\"0 0 {w:.0} {h:.0}\" font-family=\"DejaVu Sans, Arial, \
         Helvetica, sans-serif\">\n<rect x=\"0\" y=\"0\" width=\"{w:.0}\" height=\"{h:.0}\" \
         fill=\"#ffffff\"/>\n",
        w = width.ceil(),
        h = height.ceil()
    );
}

/// A text element; `anchor` is start, middle or end.
pub(crate) fn text(out: &mut String, x: f64, y: f64, size: f64, anchor: &str, content: &str) {
    let _ = writeln!(
        out,
        "<text x=\"{x:.1}\" y=\"{y:.1}\" font-size=\"{size:.0}\" text-anchor=\"{anchor}\">{}</text>",
        escape(content)
    );
}

/// Path data on a 0.1 px integer lattice with relative commands (`m dx dy dx dy ... z`), for
/// compact files; draw it with `transform="scale(0.1)"` and stroke widths times ten.
#[derive(Default)]
pub(crate) struct PathData {
    d: String,
    current: (i64, i64),
    start: (i64, i64),
}

impl PathData {
    fn units(x: f64, y: f64) -> (i64, i64) {
        ((x * 10.0).round() as i64, (y * 10.0).round() as i64)
    }

    /// Starts a subpath at (x, y) px.
    pub(crate) fn move_to(&mut self, x: f64, y: f64) {
        let p = Self::units(x, y);
        let _ = write!(self.d, "m{} {}", p.0 - self.current.0, p.1 - self.current.1);
        self.current = p;
        self.start = p;
    }

    /// Continues the subpath to (x, y) px (repeated points are skipped).
    pub(crate) fn line_to(&mut self, x: f64, y: f64) {
        let p = Self::units(x, y);
        if p != self.current {
            let _ = write!(self.d, " {} {}", p.0 - self.current.0, p.1 - self.current.1);
            self.current = p;
        }
    }

    /// Closes the subpath.
    pub(crate) fn close(&mut self) {
        self.d.push('z');
        self.current = self.start;
    }

    /// True when nothing was drawn.
    pub(crate) fn is_empty(&self) -> bool {
        self.d.is_empty()
    }

    /// The `d` attribute text.
    pub(crate) fn as_str(&self) -> &str {
        &self.d
    }
}
