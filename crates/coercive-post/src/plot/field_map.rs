//! |B| colour map with flux lines, region outlines, colour bar and scale bar.

use std::collections::HashMap;
use std::fmt::Write;

use coercive_mesh::Mesh;

use super::colour::ColourMap;
use super::svg::{escape, header, text, PathData};
use super::ticks::nice_ticks;
use super::PlotError;

/// Options of [`field_map_svg`]. `Default` gives a 900 px wide map with 64 colour levels and 24
/// flux lines.
#[derive(Clone, Debug, PartialEq)]
pub struct FieldMapOptions {
    /// Title printed above the map.
    pub title: String,
    /// Largest picture width (px); the map keeps the true aspect ratio inside it.
    pub width: f64,
    /// Largest picture height (px).
    pub max_height: f64,
    /// Number of colour levels the cell values are quantised to (2 to 1024). Equal colours are
    /// merged into one path per level, which keeps files small on large meshes.
    pub colour_levels: usize,
    /// Number of flux lines: contours of the potential at evenly spaced levels over the
    /// potential range of the drawn triangles (equal flux between neighbouring lines). 0 draws
    /// none.
    pub flux_lines: usize,
    /// Colour scale (in the cell values' unit); `None` takes 0 to the largest drawn value.
    pub value_range: Option<(f64, f64)>,
    /// Window to draw, `[x0, y0, x1, y1]` (m); `None` draws the whole mesh.
    pub window: Option<[f64; 4]>,
    /// Draw region outlines (edges where the region changes, the mesh boundary) and curves.
    pub outlines: bool,
    /// Name of the mapped quantity, for the colour bar (e.g. `|B|`).
    pub quantity: String,
    /// Unit of the cell values (e.g. `T`).
    pub unit: String,
}

impl Default for FieldMapOptions {
    fn default() -> Self {
        FieldMapOptions {
            title: String::new(),
            width: 900.0,
            max_height: 900.0,
            colour_levels: 64,
            flux_lines: 24,
            value_range: None,
            window: None,
            outlines: true,
            quantity: "|B|".into(),
            unit: "T".into(),
        }
    }
}

/// The flux function of an axisymmetric solution, r A_phi (Wb/rad), from the azimuthal
/// potential A_phi (T m) at each mesh vertex (x is the radius r). Its contours are exactly flux
/// lines: the flux through the circle of radius r at height z is 2 pi r A_phi.
///
/// # Errors
/// [`PlotError::LengthMismatch`] if `a_phi` has not one value per vertex.
pub fn axisymmetric_flux_function(mesh: &Mesh, a_phi: &[f64]) -> Result<Vec<f64>, PlotError> {
    if a_phi.len() != mesh.vertices().len() {
        return Err(PlotError::LengthMismatch {
            what: "azimuthal potential (one value per vertex)",
            expected: mesh.vertices().len(),
            got: a_phi.len(),
        });
    }
    Ok(mesh
        .vertices()
        .iter()
        .zip(a_phi)
        .map(|(p, a)| p.x * a)
        .collect())
}

const NONE: u32 = u32::MAX;

fn edge_key(a: u32, b: u32) -> u64 {
    let (lo, hi) = if a < b { (a, b) } else { (b, a) };
    ((lo as u64) << 32) | hi as u64
}

/// Chains undirected segments between integer node keys into polylines (deterministic:
/// walks start at odd-degree nodes, then at the remaining nodes, in key order).
fn chain(segments: &[(u64, u64)]) -> Vec<Vec<u64>> {
    let mut adjacency: HashMap<u64, Vec<usize>> = HashMap::new();
    for (i, &(a, b)) in segments.iter().enumerate() {
        adjacency.entry(a).or_default().push(i);
        adjacency.entry(b).or_default().push(i);
    }
    let mut starts: Vec<(bool, u64)> = adjacency
        .iter()
        .map(|(&k, v)| (v.len() % 2 == 0, k))
        .collect();
    starts.sort_unstable();
    let mut used = vec![false; segments.len()];
    let mut lines = Vec::new();
    for (_, start) in starts {
        loop {
            let next =
                |node: u64, used: &[bool]| adjacency[&node].iter().copied().find(|&s| !used[s]);
            let Some(mut seg) = next(start, &used) else {
                break;
            };
            let mut line = vec![start];
            let mut node = start;
            loop {
                used[seg] = true;
                let (a, b) = segments[seg];
                node = if a == node { b } else { a };
                line.push(node);
                match next(node, &used) {
                    Some(s) => seg = s,
                    None => break,
                }
            }
            lines.push(line);
        }
    }
    lines
}

/// Draws the map: filled triangles coloured by `cell_values` (one per triangle, e.g. |B| in T),
/// flux lines as contours of `nodal_potential` (one value per mesh vertex: A_z in planar
/// models, r A_phi in axisymmetric ones, see [`axisymmetric_flux_function`]), region outlines,
/// a colour bar with ticks and unit, the title and a scale bar in millimetres. y points up and
/// the aspect ratio is preserved.
///
/// # How it stays small on large meshes
/// Cell values are quantised to `colour_levels` colours; the triangles of one colour are
/// merged into polygons (the directed boundary edges of each same-colour patch, chained into
/// loops and filled with the non-zero rule, which also handles holes), one `<path>` per
/// colour. Contours are computed by linear interpolation on each triangle (exact for P1
/// potentials) and chained into polylines across shared edges.
///
/// # Errors
/// [`PlotError`] for lengths that do not match the mesh, non-finite values, an empty window
/// or out-of-range options.
pub fn field_map_svg(
    mesh: &Mesh,
    nodal_potential: &[f64],
    cell_values: &[f64],
    options: &FieldMapOptions,
) -> Result<String, PlotError> {
    let vertices = mesh.vertices();
    let triangles = mesh.triangles();
    let regions = mesh.triangle_regions();
    if nodal_potential.len() != vertices.len() {
        return Err(PlotError::LengthMismatch {
            what: "nodal potential (one value per vertex)",
            expected: vertices.len(),
            got: nodal_potential.len(),
        });
    }
    if cell_values.len() != triangles.len() {
        return Err(PlotError::LengthMismatch {
            what: "cell values (one value per triangle)",
            expected: triangles.len(),
            got: cell_values.len(),
        });
    }
    for (what, values) in [
        ("nodal potential", nodal_potential),
        ("cell values", cell_values),
    ] {
        if let Some((index, &value)) = values.iter().enumerate().find(|(_, v)| !v.is_finite()) {
            return Err(PlotError::NotFinite {
                what: what.into(),
                index,
                value,
            });
        }
    }
    let invalid =
        |option: &'static str, reason: String| PlotError::InvalidOption { option, reason };
    if !(2..=1024).contains(&options.colour_levels) {
        return Err(invalid(
            "colour_levels",
            format!("{} is not in 2..=1024", options.colour_levels),
        ));
    }
    if options.flux_lines > 10_000 {
        return Err(invalid(
            "flux_lines",
            format!("{} is more than 10000", options.flux_lines),
        ));
    }
    let size_ok = |v: f64| v.is_finite() && v >= 200.0;
    if !(size_ok(options.width) && size_ok(options.max_height)) {
        return Err(invalid(
            "width, max_height",
            format!(
                "{} px x {} px: both must be at least 200 px",
                options.width, options.max_height
            ),
        ));
    }
    if let Some(w) = options.window {
        if !(w.iter().all(|v| v.is_finite()) && w[2] > w[0] && w[3] > w[1]) {
            return Err(invalid(
                "window",
                format!("{w:?} m is not a finite box [x0, y0, x1, y1] with x1 > x0, y1 > y0"),
            ));
        }
    }

    // Triangles to draw.
    let visible: Vec<bool> = match options.window {
        None => vec![true; triangles.len()],
        Some([x0, y0, x1, y1]) => triangles
            .iter()
            .map(|t| {
                let p = t.map(|v| vertices[v.index()]);
                let (lx, hx) = (
                    p[0].x.min(p[1].x).min(p[2].x),
                    p[0].x.max(p[1].x).max(p[2].x),
                );
                let (ly, hy) = (
                    p[0].y.min(p[1].y).min(p[2].y),
                    p[0].y.max(p[1].y).max(p[2].y),
                );
                hx >= x0 && lx <= x1 && hy >= y0 && ly <= y1
            })
            .collect(),
    };
    if !visible.iter().any(|&v| v) {
        return Err(PlotError::Empty {
            what: match options.window {
                Some(w) => format!("no triangle inside the window {w:?} m"),
                None => "the mesh has no triangles".into(),
            },
        });
    }
    let [x0, y0, x1, y1] = match options.window {
        Some(w) => w,
        None => {
            let mut b = [
                f64::INFINITY,
                f64::INFINITY,
                f64::NEG_INFINITY,
                f64::NEG_INFINITY,
            ];
            for p in vertices {
                b = [b[0].min(p.x), b[1].min(p.y), b[2].max(p.x), b[3].max(p.y)];
            }
            b
        }
    };
    let (dx, dy) = ((x1 - x0).max(1e-300), (y1 - y0).max(1e-300));

    // Layout (px).
    let (margin, title_h, bar_w, bottom_h) = (16.0, 44.0, 120.0, 50.0);
    let scale =
        ((options.width - margin - bar_w) / dx).min((options.max_height - title_h - bottom_h) / dy);
    let (draw_w, draw_h) = (dx * scale, dy * scale);
    let (ox, oy) = (margin, title_h);
    let bar_h = draw_h.max(160.0);
    let pic_w = ox + draw_w + bar_w;
    let pic_h = oy + bar_h.max(draw_h) + bottom_h;
    let px = |x: f64| ox + (x - x0) * scale;
    let py = |y: f64| oy + (y1 - y) * scale;

    // Colour scale.
    let (vmin, vmax) = match options.value_range {
        Some((lo, hi)) => {
            if !(lo.is_finite() && hi.is_finite() && hi > lo) {
                return Err(invalid(
                    "value_range",
                    format!("({lo}, {hi}) is not a finite increasing range"),
                ));
            }
            (lo, hi)
        }
        None => {
            let top = cell_values
                .iter()
                .zip(&visible)
                .filter(|(_, &v)| v)
                .fold(0.0f64, |m, (&c, _)| m.max(c));
            let low = cell_values
                .iter()
                .zip(&visible)
                .filter(|(_, &v)| v)
                .fold(0.0f64, |m, (&c, _)| m.min(c));
            (low, if top > low { top } else { low + 1.0 })
        }
    };
    let levels = options.colour_levels;
    let level_of = |v: f64| -> u16 {
        let f = ((v - vmin) / (vmax - vmin) * levels as f64).floor();
        f.clamp(0.0, (levels - 1) as f64) as u16
    };

    // Neighbours across each triangle edge (visible triangles only).
    let mut half_edges: Vec<(u64, u32)> = Vec::with_capacity(3 * triangles.len());
    for (t, tri) in triangles.iter().enumerate() {
        if visible[t] {
            for k in 0..3 {
                let key = edge_key(tri[k].0, tri[(k + 1) % 3].0);
                half_edges.push((key, (3 * t + k) as u32));
            }
        }
    }
    half_edges.sort_unstable();
    let mut neighbour = vec![NONE; 3 * triangles.len()];
    for w in half_edges.windows(2) {
        if w[0].0 == w[1].0 {
            neighbour[w[0].1 as usize] = w[1].1 / 3;
            neighbour[w[1].1 as usize] = w[0].1 / 3;
        }
    }
    drop(half_edges);

    let mut out = String::new();
    header(&mut out, pic_w, pic_h);
    text(&mut out, ox, 28.0, 18.0, "start", &options.title);
    let _ = writeln!(
        out,
        "<clipPath id=\"map\"><rect x=\"{ox:.1}\" y=\"{oy:.1}\" width=\"{draw_w:.1}\" height=\"{draw_h:.1}\"/></clipPath>\n<g clip-path=\"url(#map)\">"
    );

    // Filled colour patches, one path per level.
    let level: Vec<u16> = cell_values.iter().map(|&v| level_of(v)).collect();
    let mut boundary: Vec<Vec<(u32, u32)>> = vec![Vec::new(); levels];
    for (t, tri) in triangles.iter().enumerate() {
        if !visible[t] {
            continue;
        }
        for k in 0..3 {
            let nb = neighbour[3 * t + k];
            if nb == NONE || level[nb as usize] != level[t] {
                boundary[level[t] as usize].push((tri[k].0, tri[(k + 1) % 3].0));
            }
        }
    }
    let map = ColourMap::sequential();
    for (lv, mut edges) in boundary.into_iter().enumerate() {
        if edges.is_empty() {
            continue;
        }
        edges.sort_unstable();
        let mut used = vec![false; edges.len()];
        let mut d = PathData::default();
        let outgoing = |v: u32, used: &[bool]| {
            let start = edges.partition_point(|e| e.0 < v);
            (start..edges.len())
                .take_while(|&i| edges[i].0 == v)
                .find(|&i| !used[i])
        };
        for first in 0..edges.len() {
            if used[first] {
                continue;
            }
            let mut e = first;
            let p = vertices[edges[e].0 as usize];
            d.move_to(px(p.x), py(p.y));
            loop {
                used[e] = true;
                let v = edges[e].1;
                match outgoing(v, &used) {
                    Some(n) => {
                        let p = vertices[v as usize];
                        d.line_to(px(p.x), py(p.y));
                        e = n;
                    }
                    None => break,
                }
            }
            d.close();
        }
        let colour = map.hex((lv as f64 + 0.5) / levels as f64);
        let _ = writeln!(
            out,
            "<path transform=\"scale(0.1)\" fill=\"{colour}\" stroke=\"{colour}\" stroke-width=\"5\" stroke-linejoin=\"round\" d=\"{}\"/>",
            d.as_str()
        );
    }

    // Flux lines.
    if options.flux_lines > 0 {
        let (mut pmin, mut pmax) = (f64::INFINITY, f64::NEG_INFINITY);
        for (t, tri) in triangles.iter().enumerate() {
            if visible[t] {
                for v in tri {
                    let a = nodal_potential[v.index()];
                    pmin = pmin.min(a);
                    pmax = pmax.max(a);
                }
            }
        }
        if pmax - pmin > 1e-300 && pmax - pmin > 1e-12 * pmax.abs().max(pmin.abs()) {
            let lines = contour_lines(
                mesh,
                nodal_potential,
                &visible,
                pmin,
                pmax,
                options.flux_lines,
            );
            let mut d = PathData::default();
            for line in &lines {
                d.move_to(px(line[0].0), py(line[0].1));
                for &(x, y) in &line[1..] {
                    d.line_to(px(x), py(y));
                }
            }
            if !d.is_empty() {
                halo(&mut out, &d, 15.0);
                let _ = writeln!(
                    out,
                    "<path transform=\"scale(0.1)\" fill=\"none\" stroke=\"#111111\" stroke-width=\"8\" stroke-linejoin=\"round\" d=\"{}\"/>",
                    d.as_str()
                );
            }
        }
    }

    // Region outlines and curves.
    if options.outlines {
        let mut segments: Vec<(u64, u64)> = Vec::new();
        let mut seen = std::collections::HashSet::new();
        for (t, tri) in triangles.iter().enumerate() {
            if !visible[t] {
                continue;
            }
            for k in 0..3 {
                let nb = neighbour[3 * t + k];
                let (a, b) = (tri[k].0, tri[(k + 1) % 3].0);
                let differs = nb != NONE && regions[nb as usize] != regions[t];
                if (nb == NONE || (differs && (t as u32) < nb)) && seen.insert(edge_key(a, b)) {
                    segments.push((a as u64, b as u64));
                }
            }
        }
        for curve in mesh.curves() {
            for w in curve.nodes.windows(2) {
                if seen.insert(edge_key(w[0].0, w[1].0)) {
                    segments.push((w[0].0 as u64, w[1].0 as u64));
                }
            }
        }
        let mut d = PathData::default();
        for line in chain(&segments) {
            let p = vertices[line[0] as usize];
            d.move_to(px(p.x), py(p.y));
            for &v in &line[1..] {
                let p = vertices[v as usize];
                d.line_to(px(p.x), py(p.y));
            }
        }
        if !d.is_empty() {
            halo(&mut out, &d, 20.0);
            let _ = writeln!(
                out,
                "<path transform=\"scale(0.1)\" fill=\"none\" stroke=\"#000000\" stroke-width=\"12\" stroke-linejoin=\"round\" d=\"{}\"/>",
                d.as_str()
            );
        }
    }
    out.push_str("</g>\n");
    let _ = writeln!(
        out,
        "<rect x=\"{ox:.1}\" y=\"{oy:.1}\" width=\"{draw_w:.1}\" height=\"{draw_h:.1}\" fill=\"none\" stroke=\"#444444\" stroke-width=\"0.8\"/>"
    );

    // Colour bar.
    let bx = ox + draw_w + 24.0;
    let bw = 18.0;
    let cell = bar_h / levels as f64;
    for lv in 0..levels {
        let y = oy + bar_h - (lv + 1) as f64 * cell;
        let colour = map.hex((lv as f64 + 0.5) / levels as f64);
        let _ = writeln!(
            out,
            "<rect x=\"{bx:.1}\" y=\"{y:.2}\" width=\"{bw:.1}\" height=\"{:.2}\" fill=\"{colour}\"/>",
            cell + 0.3
        );
    }
    let _ = writeln!(
        out,
        "<rect x=\"{bx:.1}\" y=\"{oy:.1}\" width=\"{bw:.1}\" height=\"{bar_h:.1}\" fill=\"none\" stroke=\"#444444\" stroke-width=\"0.8\"/>"
    );
    let ticks = nice_ticks(vmin, vmax)?;
    for (v, label) in ticks.values.iter().zip(&ticks.labels) {
        if *v < vmin - 1e-9 * ticks.step || *v > vmax + 1e-9 * ticks.step {
            continue;
        }
        let y = oy + bar_h - (v - vmin) / (vmax - vmin) * bar_h;
        let _ = writeln!(
            out,
            "<line x1=\"{:.1}\" y1=\"{y:.1}\" x2=\"{:.1}\" y2=\"{y:.1}\" stroke=\"#444444\" stroke-width=\"0.8\"/>",
            bx + bw,
            bx + bw + 5.0
        );
        text(&mut out, bx + bw + 8.0, y + 4.0, 12.0, "start", label);
    }
    text(
        &mut out,
        bx - 4.0,
        oy - 8.0,
        13.0,
        "start",
        &format!("{} ({})", options.quantity, options.unit),
    );

    // Scale bar in millimetres.
    let target_mm = 0.25 * dx * 1e3;
    let k = target_mm.log10().floor();
    let mut length_mm = 10f64.powf(k);
    for m in [2.0, 5.0] {
        if m * 10f64.powf(k) <= target_mm {
            length_mm = m * 10f64.powf(k);
        }
    }
    let bar_px = length_mm * 1e-3 * scale;
    let sy = oy + bar_h.max(draw_h) + 26.0;
    let _ = writeln!(
        out,
        "<path fill=\"none\" stroke=\"#000000\" stroke-width=\"1.5\" d=\"M{ox:.1} {:.1} L{ox:.1} {sy:.1} L{:.1} {sy:.1} L{:.1} {:.1}\"/>",
        sy - 5.0,
        ox + bar_px,
        ox + bar_px,
        sy - 5.0
    );
    let decimals = if k < 0.0 { (-k) as usize } else { 0 };
    text(
        &mut out,
        ox + bar_px + 8.0,
        sy + 4.0,
        12.0,
        "start",
        &format!("{length_mm:.decimals$} mm"),
    );
    let _ = writeln!(out, "<desc>{}</desc>", escape("Coercive field map"));
    out.push_str("</svg>\n");
    Ok(out)
}

/// A translucent white line under a dark one, so that dark lines stay visible over the dark
/// (low-field) end of the colour map; `width` in 0.1 px units.
fn halo(out: &mut String, d: &PathData, width: f64) {
    let _ = writeln!(
        out,
        "<path transform=\"scale(0.1)\" fill=\"none\" stroke=\"#ffffff\" stroke-opacity=\"0.45\" stroke-width=\"{width}\" stroke-linejoin=\"round\" d=\"{}\"/>",
        d.as_str()
    );
}

/// Contours of a piecewise-linear nodal field at `count` evenly spaced levels
/// pmin + (k + 1/2) (pmax - pmin)/count over the visible triangles, as polylines (m).
pub(crate) fn contour_lines(
    mesh: &Mesh,
    values: &[f64],
    visible: &[bool],
    pmin: f64,
    pmax: f64,
    count: usize,
) -> Vec<Vec<(f64, f64)>> {
    let vertices = mesh.vertices();
    let step = (pmax - pmin) / count as f64;
    let mut per_level: Vec<Vec<(u64, u64)>> = vec![Vec::new(); count];
    let mut points: HashMap<(usize, u64), (f64, f64)> = HashMap::new();
    for (t, tri) in mesh.triangles().iter().enumerate() {
        if !visible[t] {
            continue;
        }
        let v = tri.map(|i| values[i.index()]);
        let (lo, hi) = (v[0].min(v[1]).min(v[2]), v[0].max(v[1]).max(v[2]));
        let k_lo = (((lo - pmin) / step - 0.5).ceil().max(0.0)) as usize;
        let k_hi = (((hi - pmin) / step - 0.5).floor()).min(count as f64 - 1.0);
        if k_hi < 0.0 {
            continue;
        }
        for (k, segments) in per_level
            .iter_mut()
            .enumerate()
            .take(k_hi as usize + 1)
            .skip(k_lo)
        {
            let c = pmin + (k as f64 + 0.5) * step;
            let above = v.map(|x| x > c);
            let mut ends = [0u64; 2];
            let mut n = 0;
            for e in 0..3 {
                let (i, j) = (e, (e + 1) % 3);
                if above[i] != above[j] {
                    let key = edge_key(tri[i].0, tri[j].0);
                    // Interpolate from the lower-numbered vertex so both triangles sharing the
                    // edge compute bit-identical points.
                    let (a, b) = if tri[i].0 < tri[j].0 { (i, j) } else { (j, i) };
                    let s = (c - v[a]) / (v[b] - v[a]);
                    let (pa, pb) = (vertices[tri[a].index()], vertices[tri[b].index()]);
                    points.insert(
                        (k, key),
                        (pa.x + s * (pb.x - pa.x), pa.y + s * (pb.y - pa.y)),
                    );
                    if n < 2 {
                        ends[n] = key;
                    }
                    n += 1;
                }
            }
            if n == 2 {
                segments.push((ends[0], ends[1]));
            }
        }
    }
    let mut lines = Vec::new();
    for (k, segments) in per_level.iter().enumerate() {
        for line in chain(segments) {
            lines.push(line.iter().map(|key| points[&(k, *key)]).collect());
        }
    }
    lines
}

#[cfg(test)]
mod tests {
    use super::*;
    use coercive_mesh::structured::rectangle;

    #[test]
    fn contours_of_a_linear_field_are_straight_lines_at_the_right_place() {
        // A(x, y) = 3 x + 1 is linear, so P1 interpolation is exact and every contour
        // A = c is the vertical line x = (c - 1)/3, crossing the whole rectangle.
        let mesh = rectangle(0.0, 0.0, 2.0, 1.0, 7, 5, "air").unwrap();
        let a: Vec<f64> = mesh.vertices().iter().map(|p| 3.0 * p.x + 1.0).collect();
        let visible = vec![true; mesh.triangles().len()];
        let lines = contour_lines(&mesh, &a, &visible, 1.0, 7.0, 4);
        assert_eq!(lines.len(), 4, "one polyline per level");
        let mut xs: Vec<f64> = Vec::new();
        for line in &lines {
            let x = line[0].0;
            for &(px, _) in line {
                assert!((px - x).abs() < 1e-12, "not vertical: {line:?}");
            }
            let (ymin, ymax) = line
                .iter()
                .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), p| {
                    (a.min(p.1), b.max(p.1))
                });
            assert!(
                ymin.abs() < 1e-12 && (ymax - 1.0).abs() < 1e-12,
                "does not span y"
            );
            xs.push(x);
        }
        xs.sort_by(f64::total_cmp);
        // Levels 1 + (k + 1/2) 6/4 = 1.75, 3.25, 4.75, 6.25 -> x = 0.25, 0.75, 1.25, 1.75.
        for (x, expect) in xs.iter().zip([0.25, 0.75, 1.25, 1.75]) {
            assert!((x - expect).abs() < 1e-12, "{x} vs {expect}");
        }
    }

    #[test]
    fn contours_of_a_radial_field_are_closed() {
        // A = x^2 + y^2 has circular contours; those fully inside the square are closed loops.
        let mesh = rectangle(-1.0, -1.0, 1.0, 1.0, 40, 40, "air").unwrap();
        let a: Vec<f64> = mesh
            .vertices()
            .iter()
            .map(|p| p.x * p.x + p.y * p.y)
            .collect();
        let visible = vec![true; mesh.triangles().len()];
        let lines = contour_lines(&mesh, &a, &visible, 0.0, 0.8, 4);
        assert_eq!(lines.len(), 4);
        for line in lines {
            assert_eq!(line.first(), line.last(), "closed loop");
            let r = line[0].0.hypot(line[0].1);
            for p in &line {
                // Linear interpolation of r^2 lies within h^2/8-ish of the circle.
                assert!((p.0.hypot(p.1) - r).abs() < 2e-3);
            }
        }
    }

    #[test]
    fn chaining_joins_segments_into_paths() {
        let lines = chain(&[(1, 2), (3, 2), (3, 4), (10, 11)]);
        assert_eq!(lines.len(), 2);
        assert!(lines
            .iter()
            .any(|l| l == &vec![1, 2, 3, 4] || l == &vec![4, 3, 2, 1]));
    }
}
