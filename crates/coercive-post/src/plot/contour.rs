//! Filled contour plots of a function sampled on a rectilinear grid, e.g. a machine's
//! flux-linkage map psi(theta, i), with a colour bar.
//!
//! Each grid cell is split into two triangles along its diagonal; on each triangle the
//! function is the linear interpolant of its three samples, so a band l_k <= z < l_(k+1) is
//! the triangle clipped by two half-planes: a convex polygon of at most five vertices. The
//! polygons of one band are written as one filled path, bands from the lowest level up, and
//! the colour bar lists the same bands in the same order, so the picture and the bar cannot
//! disagree. Band boundaries are therefore the exact contours of the piecewise-linear
//! interpolant (no smoothing, nothing invented between the samples).

use std::fmt::Write;

use super::colour::ColourMap;
use super::svg::{escape, header, text, PathData};
use super::ticks::nice_ticks;
use super::PlotError;

/// Options of [`filled_contour_svg`].
#[derive(Clone, Debug, PartialEq)]
pub struct ContourOptions {
    /// Title above the plot.
    pub title: String,
    /// x-axis label with its unit, e.g. `rotor angle (deg)`.
    pub x_label: String,
    /// y-axis label with its unit, e.g. `phase current (A)`.
    pub y_label: String,
    /// Label of the colour bar with the unit of z, e.g. `flux linkage (Wb)`.
    pub z_label: String,
    /// Picture width (px).
    pub width: f64,
    /// Picture height (px).
    pub height: f64,
    /// The contour levels (increasing, at least two); `None` chooses "nice" levels (steps
    /// of 1, 2 or 5 times a power of ten) spanning the data.
    pub levels: Option<Vec<f64>>,
}

impl Default for ContourOptions {
    fn default() -> Self {
        ContourOptions {
            title: String::new(),
            x_label: String::new(),
            y_label: String::new(),
            z_label: String::new(),
            width: 760.0,
            height: 520.0,
            levels: None,
        }
    }
}

/// The part of the triangle `p` (points with their values) where lo <= z <= hi, as a polygon
/// (empty when the band misses it).
fn clip_band(p: &[(f64, f64, f64); 3], lo: f64, hi: f64) -> Vec<(f64, f64, f64)> {
    // Clip by z >= lo, then by z <= hi (Sutherland-Hodgman on the linear interpolant).
    let clip = |poly: Vec<(f64, f64, f64)>, keep: &dyn Fn(f64) -> f64| {
        let mut out = Vec::with_capacity(poly.len() + 2);
        for k in 0..poly.len() {
            let a = poly[k];
            let b = poly[(k + 1) % poly.len()];
            let (fa, fb) = (keep(a.2), keep(b.2));
            if fa >= 0.0 {
                out.push(a);
            }
            if (fa >= 0.0) != (fb >= 0.0) {
                let t = fa / (fa - fb);
                out.push((
                    a.0 + t * (b.0 - a.0),
                    a.1 + t * (b.1 - a.1),
                    a.2 + t * (b.2 - a.2),
                ));
            }
        }
        out
    };
    let poly = clip(p.to_vec(), &|z| z - lo);
    if poly.len() < 3 {
        return Vec::new();
    }
    let poly = clip(poly, &|z| hi - z);
    if poly.len() < 3 {
        Vec::new()
    } else {
        poly
    }
}

/// A filled contour plot of `z[i][j]` = f(`x[i]`, `y[j]`) on the rectilinear grid `x` x `y`
/// (both strictly increasing), with axes, the colour bar (its bands bottom to top in
/// increasing order, each labelled at its levels) and a title. Band k covers
/// `levels[k] <= z <= levels[k + 1]`; values outside the levels are left white.
///
/// The output is one `<g class="bands">` with a `<path data-band="k" data-low=".."
/// data-high="..">` per non-empty band, lowest first, and one `<g class="colour-bar">` with a
/// `<rect data-band="k" ...>` per band in the same order.
///
/// # Errors
/// [`PlotError::LengthMismatch`] for a z table that does not match the grid,
/// [`PlotError::NotFinite`] for a non-finite sample or coordinate, [`PlotError::Empty`] for
/// fewer than two samples in x or y, [`PlotError::InvalidOption`] for a grid that is not
/// increasing, levels that are not increasing (or fewer than two), or a picture under
/// 240 x 180 px.
pub fn filled_contour_svg(
    x: &[f64],
    y: &[f64],
    z: &[Vec<f64>],
    options: &ContourOptions,
) -> Result<String, PlotError> {
    if x.len() < 2 || y.len() < 2 {
        return Err(PlotError::Empty {
            what: "a contour plot needs at least two samples in x and in y".into(),
        });
    }
    if z.len() != x.len() {
        return Err(PlotError::LengthMismatch {
            what: "contour rows (one per x)",
            expected: x.len(),
            got: z.len(),
        });
    }
    for row in z {
        if row.len() != y.len() {
            return Err(PlotError::LengthMismatch {
                what: "contour row (one value per y)",
                expected: y.len(),
                got: row.len(),
            });
        }
    }
    for (what, v) in [("x", x), ("y", y)] {
        if let Some((index, &value)) = v.iter().enumerate().find(|(_, a)| !a.is_finite()) {
            return Err(PlotError::NotFinite {
                what: format!("contour {what}"),
                index,
                value,
            });
        }
        if v.windows(2).any(|w| w[1] <= w[0]) {
            return Err(PlotError::InvalidOption {
                option: "grid",
                reason: format!("contour {what} must increase strictly"),
            });
        }
    }
    let flat: Vec<f64> = z.iter().flatten().copied().collect();
    if let Some((index, &value)) = flat.iter().enumerate().find(|(_, a)| !a.is_finite()) {
        return Err(PlotError::NotFinite {
            what: "contour values".into(),
            index,
            value,
        });
    }
    if !(options.width >= 240.0 && options.height >= 180.0) {
        return Err(PlotError::InvalidOption {
            option: "width, height",
            reason: format!(
                "{} px x {} px: at least 240 px x 180 px",
                options.width, options.height
            ),
        });
    }
    let (levels, level_labels): (Vec<f64>, Vec<String>) = match &options.levels {
        Some(l) => {
            if l.len() < 2 || l.iter().any(|v| !v.is_finite()) || l.windows(2).any(|w| w[1] <= w[0])
            {
                return Err(PlotError::InvalidOption {
                    option: "levels",
                    reason: "at least two finite levels in increasing order".into(),
                });
            }
            (l.clone(), l.iter().map(|v| format!("{v}")).collect())
        }
        None => {
            let lo = flat.iter().copied().fold(f64::INFINITY, f64::min);
            let hi = flat.iter().copied().fold(f64::NEG_INFINITY, f64::max);
            let t = nice_ticks(lo, hi)?;
            (t.values, t.labels)
        }
    };
    let bands = levels.len() - 1;
    let xt = nice_ticks(x[0], x[x.len() - 1])?;
    let yt = nice_ticks(y[0], y[y.len() - 1])?;
    let (x0, x1) = (x[0], x[x.len() - 1]);
    let (y0, y1) = (y[0], y[y.len() - 1]);
    let bar_w = 150.0;
    let (left, right, top, bottom) = (78.0, 24.0 + bar_w, 48.0, 62.0);
    let (pw, ph) = (options.width - left - right, options.height - top - bottom);
    let px = |v: f64| left + (v - x0) / (x1 - x0) * pw;
    let py = |v: f64| top + ph - (v - y0) / (y1 - y0) * ph;
    let colour = |k: usize| {
        let t = if bands > 1 {
            k as f64 / (bands - 1) as f64
        } else {
            0.5
        };
        ColourMap::sequential().hex(t)
    };

    let mut out = String::new();
    header(&mut out, options.width, options.height);
    text(
        &mut out,
        options.width / 2.0,
        28.0,
        16.0,
        "middle",
        &options.title,
    );
    // Bands, lowest first.
    let mut paths: Vec<PathData> = (0..bands).map(|_| PathData::default()).collect();
    for i in 0..x.len() - 1 {
        for j in 0..y.len() - 1 {
            let c = |a: usize, b: usize| (x[a], y[b], z[a][b]);
            let cells = [
                [c(i, j), c(i + 1, j), c(i + 1, j + 1)],
                [c(i, j), c(i + 1, j + 1), c(i, j + 1)],
            ];
            for tri in &cells {
                let (zl, zh) = tri
                    .iter()
                    .fold((f64::INFINITY, f64::NEG_INFINITY), |(l, h), p| {
                        (l.min(p.2), h.max(p.2))
                    });
                for (k, path) in paths.iter_mut().enumerate() {
                    if levels[k + 1] < zl || levels[k] > zh {
                        continue;
                    }
                    let poly = clip_band(tri, levels[k], levels[k + 1]);
                    if let Some(first) = poly.first() {
                        path.move_to(px(first.0), py(first.1));
                        for p in &poly[1..] {
                            path.line_to(px(p.0), py(p.1));
                        }
                        path.close();
                    }
                }
            }
        }
    }
    out.push_str("<g class=\"bands\" transform=\"scale(0.1)\" stroke-width=\"4\" stroke-linejoin=\"round\">\n");
    for (k, path) in paths.iter().enumerate() {
        if path.is_empty() {
            continue;
        }
        let fill = colour(k);
        let _ = writeln!(
            out,
            "<path data-band=\"{k}\" data-low=\"{:e}\" data-high=\"{:e}\" fill=\"{fill}\" stroke=\"{fill}\" d=\"{}\"/>",
            levels[k],
            levels[k + 1],
            path.as_str()
        );
    }
    out.push_str("</g>\n");
    // Frame and axes.
    let _ = writeln!(
        out,
        "<rect x=\"{left:.1}\" y=\"{top:.1}\" width=\"{pw:.1}\" height=\"{ph:.1}\" fill=\"none\" stroke=\"#333333\" stroke-width=\"1\"/>"
    );
    for (v, label) in xt.values.iter().zip(&xt.labels) {
        if *v < x0 - 1e-9 * (x1 - x0) || *v > x1 + 1e-9 * (x1 - x0) {
            continue;
        }
        let sx = px(*v);
        let _ = writeln!(
            out,
            "<line x1=\"{sx:.1}\" y1=\"{:.1}\" x2=\"{sx:.1}\" y2=\"{:.1}\" stroke=\"#333333\"/>",
            top + ph,
            top + ph + 5.0
        );
        text(&mut out, sx, top + ph + 20.0, 12.0, "middle", label);
    }
    for (v, label) in yt.values.iter().zip(&yt.labels) {
        if *v < y0 - 1e-9 * (y1 - y0) || *v > y1 + 1e-9 * (y1 - y0) {
            continue;
        }
        let sy = py(*v);
        let _ = writeln!(
            out,
            "<line x1=\"{:.1}\" y1=\"{sy:.1}\" x2=\"{left:.1}\" y2=\"{sy:.1}\" stroke=\"#333333\"/>",
            left - 5.0
        );
        text(&mut out, left - 8.0, sy + 4.0, 12.0, "end", label);
    }
    text(
        &mut out,
        left + pw / 2.0,
        options.height - 18.0,
        13.0,
        "middle",
        &options.x_label,
    );
    let _ = writeln!(
        out,
        "<text x=\"18\" y=\"{:.1}\" font-size=\"13\" text-anchor=\"middle\" transform=\"rotate(-90 18 {:.1})\">{}</text>",
        top + ph / 2.0,
        top + ph / 2.0,
        escape(&options.y_label)
    );
    // Colour bar: band k from the bottom up, labelled at its levels.
    let bx = options.width - bar_w + 10.0;
    let bh = ph / bands as f64;
    out.push_str("<g class=\"colour-bar\">\n");
    for k in 0..bands {
        let yk = top + ph - (k + 1) as f64 * bh;
        let _ = writeln!(
            out,
            "<rect data-band=\"{k}\" data-low=\"{:e}\" data-high=\"{:e}\" x=\"{bx:.1}\" y=\"{yk:.1}\" width=\"22\" height=\"{bh:.2}\" fill=\"{}\" stroke=\"none\"/>",
            levels[k],
            levels[k + 1],
            colour(k)
        );
    }
    let _ = writeln!(
        out,
        "<rect x=\"{bx:.1}\" y=\"{top:.1}\" width=\"22\" height=\"{ph:.1}\" fill=\"none\" stroke=\"#333333\"/>"
    );
    let step = levels.len().div_ceil(16).max(1);
    for (k, label) in level_labels.iter().enumerate() {
        if k % step != 0 && k != levels.len() - 1 {
            continue;
        }
        let yk = top + ph - k as f64 * bh;
        text(&mut out, bx + 28.0, yk + 4.0, 11.0, "start", label);
    }
    out.push_str("</g>\n");
    let _ = writeln!(
        out,
        "<text x=\"{:.1}\" y=\"{:.1}\" font-size=\"12\" text-anchor=\"middle\">{}</text>",
        bx + 11.0,
        top - 10.0,
        escape(&options.z_label)
    );
    out.push_str("</svg>\n");
    Ok(out)
}
