//! SVG drawing of a [`Mesh`]: regions filled, triangle edges, region outlines and curves,
//! a legend with the region names and a scale bar in millimetres.
//!
//! The drawing is written by hand as compact text so that it stays usable for meshes of a
//! million triangles:
//! - each region is filled by **one** `<path>` made of the region's boundary loops
//!   (`fill-rule="evenodd"`), never one polygon per triangle;
//! - triangle edges (optional) are one `<path>` per region with every edge drawn once, and are
//!   left out above [`SvgOptions::max_triangles_with_edges`];
//! - coordinates are rounded to 0.1 px.
//!
//! # Guarantees
//! The y axis points up (larger `y` is drawn higher), the aspect ratio of the geometry is
//! kept, and every region name appears in the legend (XML-escaped). Drawing never fails: an
//! empty mesh gives a drawing that says so.
//!
//! # Colours
//! Region fills use the colour-blind-safe qualitative palette of P. Tol ("muted" scheme,
//! Paul Tol's Notes, *Colour schemes*, SRON/EPS/TN/09-002, 2021). Regions whose name starts
//! with `air` (any case) get a pale grey so that parts stand out. Regions sharing an edge get
//! different colours while the palette's nine allow it; the legend tells regions apart by
//! name in any case.

use std::collections::HashMap;
use std::fmt::Write as _;

use crate::{Mesh, Point2, VertexId};

/// Options of [`mesh_to_svg`].
#[derive(Clone, Debug, PartialEq)]
pub struct SvgOptions {
    /// Total width of the picture (px), legend included. Values below 200 px are raised to
    /// 200 px.
    pub width_px: u32,
    /// Draw the triangle edges (thin lines).
    pub show_edges: bool,
    /// Triangle edges are drawn only for meshes with at most this many triangles (a 1M
    /// triangle mesh with edges gives an SVG of tens of megabytes that browsers struggle with).
    pub max_triangles_with_edges: usize,
    /// Draw the mesh's input curves (thicker dark lines) on top of the region outlines.
    pub show_curves: bool,
    /// Draw the legend (one swatch and name per region) right of the drawing.
    pub show_legend: bool,
    /// Draw a scale bar (in mm) under the drawing.
    pub show_scale_bar: bool,
    /// An optional title written above the drawing.
    pub title: Option<String>,
}

impl Default for SvgOptions {
    fn default() -> Self {
        Self {
            width_px: 900,
            show_edges: true,
            max_triangles_with_edges: 200_000,
            show_curves: true,
            show_legend: true,
            show_scale_bar: true,
            title: None,
        }
    }
}

/// Paul Tol's "muted" qualitative palette (colour-blind safe; see the module docs).
const PALETTE: [&str; 9] = [
    "#CC6677", "#88CCEE", "#DDCC77", "#117733", "#332288", "#AA4499", "#44AA99", "#999933",
    "#882255",
];
/// Fill of regions named `air...`.
const AIR_FILL: &str = "#EEEEEE";

/// The base fill colour of region `index` named `name` (as `#RRGGBB`). [`mesh_to_svg`]
/// moves a region to the next palette colour when a neighbouring region already has it.
pub fn region_colour(index: usize, name: &str) -> &'static str {
    if name.to_ascii_lowercase().starts_with("air") {
        AIR_FILL
    } else {
        PALETTE[index % PALETTE.len()]
    }
}

/// Fill colours of all regions: the base colour of [`region_colour`], moved along the palette
/// until it differs from the regions already coloured that share an edge with it (when the
/// palette has a free colour).
fn region_colours(mesh: &Mesh, owner: &HashMap<(VertexId, VertexId), usize>) -> Vec<&'static str> {
    let regions = mesh.regions();
    let mut neighbours = vec![std::collections::BTreeSet::new(); regions.len()];
    for (&(a, b), &r) in owner {
        if let Some(&s) = owner.get(&(b, a)) {
            if s != r {
                neighbours[r].insert(s);
            }
        }
    }
    let mut colours: Vec<&'static str> = Vec::with_capacity(regions.len());
    for (r, region) in regions.iter().enumerate() {
        let base = region_colour(r, &region.name);
        let colour = if base == AIR_FILL {
            base
        } else {
            let used: Vec<&str> = neighbours[r]
                .iter()
                .filter(|&&s| s < r)
                .map(|&s| colours[s])
                .collect();
            (0..PALETTE.len())
                .map(|k| PALETTE[(r + k) % PALETTE.len()])
                .find(|c| !used.contains(c))
                .unwrap_or(base)
        };
        colours.push(colour);
    }
    colours
}

/// Draws `mesh` as an SVG document (see the module docs for what is drawn).
pub fn mesh_to_svg(mesh: &Mesh, options: &SvgOptions) -> String {
    let width = options.width_px.max(200) as f64;
    let font = 14.0;
    let margin = 16.0;
    let title_h = if options.title.is_some() {
        font * 2.0
    } else {
        0.0
    };
    let regions = mesh.regions();
    let legend_w = if options.show_legend && !regions.is_empty() {
        let longest = regions
            .iter()
            .map(|r| r.name.chars().count())
            .max()
            .unwrap_or(0);
        // Approximate text width: 0.6 em per character, plus swatch and padding.
        (longest as f64 * 0.6 * font + 2.0 * font + 2.0 * margin).min(0.45 * width)
    } else {
        0.0
    };
    let scale_h = if options.show_scale_bar {
        3.0 * font
    } else {
        0.0
    };
    let draw_w = (width - legend_w - 2.0 * margin).max(50.0);

    let bbox = bounding_box(mesh.vertices());
    let mut out = String::with_capacity(4096 + 40 * mesh.triangles().len());
    let Some((lo, hi)) = bbox.filter(|_| !mesh.triangles().is_empty()) else {
        let height = 100.0 + title_h;
        header(&mut out, width, height);
        title(&mut out, options, margin, font);
        let _ = writeln!(
            out,
            r#"<text x="{margin}" y="{}" font-size="{font}">empty mesh (no triangles)</text>"#,
            title_h + 50.0
        );
        out.push_str("</svg>\n");
        return out;
    };
    let (gw, gh) = ((hi.x - lo.x).max(1e-300), (hi.y - lo.y).max(1e-300));
    // Keep the aspect ratio; a very tall geometry is limited to 3x the drawing width.
    let mut scale = draw_w / gw;
    if gh * scale > 3.0 * draw_w {
        scale = 3.0 * draw_w / gh;
    }
    let draw_h = gh * scale;
    let legend_h = if legend_w > 0.0 {
        (regions.len() as f64 + 1.0) * 1.5 * font + margin
    } else {
        0.0
    };
    let height = title_h + margin + draw_h.max(legend_h) + scale_h + margin;
    let ox = margin;
    let oy = title_h + margin;
    let map = |p: Point2| -> (f64, f64) { (ox + (p.x - lo.x) * scale, oy + (hi.y - p.y) * scale) };

    header(&mut out, width, height);
    title(&mut out, options, margin, font);

    // Region fills: boundary loops of every region, even-odd fill.
    let loops = region_boundary_loops(mesh);
    let mut owner: HashMap<(VertexId, VertexId), usize> = HashMap::new();
    for (r, lps) in loops.iter().enumerate() {
        for lp in lps {
            for k in 0..lp.len() {
                owner.insert((lp[k], lp[(k + 1) % lp.len()]), r);
            }
        }
    }
    let colours = region_colours(mesh, &owner);
    out.push_str(r#"<g id="regions" stroke="none" fill-rule="evenodd">"#);
    out.push('\n');
    for (r, region) in regions.iter().enumerate() {
        let _ = write!(
            out,
            r#"<path class="region" data-region="{}" fill="{}" d=""#,
            escape(&region.name),
            colours[r]
        );
        for lp in &loops[r] {
            for (k, &v) in lp.iter().enumerate() {
                out.push(if k == 0 { 'M' } else { 'L' });
                push_xy(&mut out, map(mesh.vertex(v)));
            }
            out.push('Z');
        }
        out.push_str("\"/>\n");
    }
    out.push_str("</g>\n");

    // Triangle edges, each drawn once, grouped by the region of the triangle that owns it.
    if options.show_edges && mesh.triangles().len() <= options.max_triangles_with_edges {
        out.push_str(
            "<g id=\"edges\" fill=\"none\" stroke=\"#333333\" stroke-opacity=\"0.55\" stroke-width=\"0.3\">\n",
        );
        let mut per_region: Vec<String> = vec![String::new(); regions.len()];
        for (t, tri) in mesh.triangles().iter().enumerate() {
            let d = &mut per_region[mesh.triangle_regions()[t].index()];
            for k in 0..3 {
                let (a, b) = (tri[k], tri[(k + 1) % 3]);
                // An interior edge appears as (a, b) in one triangle and (b, a) in the other:
                // draw it from the side with a < b. Mesh-boundary edges left out here are
                // drawn by the outlines below.
                if a < b {
                    d.push('M');
                    push_xy(d, map(mesh.vertex(a)));
                    d.push('L');
                    push_xy(d, map(mesh.vertex(b)));
                }
            }
        }
        for d in per_region.iter().filter(|d| !d.is_empty()) {
            let _ = writeln!(out, r#"<path d="{d}"/>"#);
        }
        out.push_str("</g>\n");
    }

    // Region outlines: every boundary edge between two regions (or of the mesh) once.
    out.push_str(
        "<g id=\"outlines\" fill=\"none\" stroke=\"#000000\" stroke-width=\"1\" stroke-linejoin=\"round\">\n<path d=\"",
    );
    for (r, lps) in loops.iter().enumerate() {
        for lp in lps {
            for k in 0..lp.len() {
                let (a, b) = (lp[k], lp[(k + 1) % lp.len()]);
                // Interface edges appear in two regions' loops (opposite directions): draw
                // them from the lower region only; mesh-boundary edges always.
                if owner.get(&(b, a)).is_none_or(|&s| s > r) {
                    out.push('M');
                    push_xy(&mut out, map(mesh.vertex(a)));
                    out.push('L');
                    push_xy(&mut out, map(mesh.vertex(b)));
                }
            }
        }
    }
    out.push_str("\"/>\n</g>\n");

    // Input curves, thicker.
    if options.show_curves && !mesh.curves().is_empty() {
        out.push_str(
            "<g id=\"curves\" fill=\"none\" stroke=\"#222222\" stroke-width=\"1.6\" stroke-linejoin=\"round\" stroke-linecap=\"round\">\n",
        );
        for c in mesh.curves() {
            if c.nodes.len() < 2 {
                continue;
            }
            out.push_str("<path");
            if let Some(name) = &c.name {
                let _ = write!(out, r#" data-curve="{}""#, escape(name));
            }
            out.push_str(" d=\"");
            for (k, &v) in c.nodes.iter().enumerate() {
                out.push(if k == 0 { 'M' } else { 'L' });
                push_xy(&mut out, map(mesh.vertex(v)));
            }
            out.push_str("\"/>\n");
        }
        out.push_str("</g>\n");
    }

    if legend_w > 0.0 {
        let lx = ox + draw_w + margin;
        let mut y = oy + font;
        let _ = writeln!(
            out,
            r#"<g id="legend" font-family="sans-serif" font-size="{font}"><text x="{lx}" y="{y}" font-weight="bold">regions</text>"#
        );
        for (r, region) in regions.iter().enumerate() {
            y += 1.5 * font;
            let _ = writeln!(
                out,
                r##"<rect x="{lx}" y="{}" width="{font}" height="{font}" fill="{}" stroke="#000000" stroke-width="0.5"/><text x="{}" y="{}">{}</text>"##,
                y - 0.85 * font,
                colours[r],
                lx + 1.5 * font,
                y + 0.1 * font,
                escape(&region.name)
            );
        }
        out.push_str("</g>\n");
    }

    if options.show_scale_bar {
        let target_m = 0.25 * draw_w / scale;
        let len_m = nice_length(target_m);
        let len_px = len_m * scale;
        let y = oy + draw_h.max(legend_h) + 1.2 * font;
        let x0 = ox;
        let x1 = ox + len_px;
        let _ = writeln!(
            out,
            "<g id=\"scale-bar\" stroke=\"#000000\" stroke-width=\"1.5\" font-family=\"sans-serif\" font-size=\"{font}\"><path fill=\"none\" d=\"M{x0:.1} {:.1}L{x0:.1} {y:.1}L{x1:.1} {y:.1}L{x1:.1} {:.1}\"/><text stroke=\"none\" x=\"{:.1}\" y=\"{:.1}\">{}</text></g>",
            y - 0.4 * font,
            y - 0.4 * font,
            x1 + 0.5 * font,
            y + 0.35 * font,
            format_mm(len_m)
        );
    }
    out.push_str("</svg>\n");
    out
}

fn header(out: &mut String, width: f64, height: f64) {
    let _ = writeln!(
        out,
        r#"<svg xmlns="http://www.w3.org/2000/svg" width="{w:.0}" height="{h:.0}" viewBox="0 0 {w:.0} {h:.0}">"#,
        w = width,
        h = height.ceil()
    );
    out.push_str("<rect width=\"100%\" height=\"100%\" fill=\"#FFFFFF\"/>\n");
}

fn title(out: &mut String, options: &SvgOptions, margin: f64, font: f64) {
    if let Some(t) = &options.title {
        let _ = writeln!(
            out,
            r#"<text x="{margin}" y="{}" font-family="sans-serif" font-size="{}" font-weight="bold">{}</text>"#,
            1.4 * font,
            1.1 * font,
            escape(t)
        );
    }
}

/// Bounding box of the points, `None` when empty or non-finite.
fn bounding_box(points: &[Point2]) -> Option<(Point2, Point2)> {
    let mut lo = Point2::new(f64::INFINITY, f64::INFINITY);
    let mut hi = Point2::new(f64::NEG_INFINITY, f64::NEG_INFINITY);
    for p in points {
        lo.x = lo.x.min(p.x);
        lo.y = lo.y.min(p.y);
        hi.x = hi.x.max(p.x);
        hi.y = hi.y.max(p.y);
    }
    (lo.is_finite() && hi.is_finite()).then_some((lo, hi))
}

/// Boundary loops of every region, as counter-clockwise-oriented closed vertex chains (the
/// region lies left of each directed edge). Pinch vertices (two triangles of a region meeting
/// at one vertex only) are fine: an even-odd fill depends only on the set of edges.
fn region_boundary_loops(mesh: &Mesh) -> Vec<Vec<Vec<VertexId>>> {
    let nr = mesh.regions().len();
    let tris = mesh.triangles();
    let regions = mesh.triangle_regions();
    // Every triangle side keyed by its undirected edge, sorted so that the two sides of an
    // edge are neighbours (a sort is several times faster than hashing at 1M triangles).
    let mut sides: Vec<(u64, u32)> = Vec::with_capacity(3 * tris.len());
    for (t, tri) in tris.iter().enumerate() {
        for k in 0..3 {
            let (a, b) = (tri[k].0, tri[(k + 1) % 3].0);
            let key = (u64::from(a.min(b)) << 32) | u64::from(a.max(b));
            sides.push((key, (3 * t + k) as u32));
        }
    }
    sides.sort_unstable();
    let side = |code: u32| {
        let (t, k) = (code as usize / 3, code as usize % 3);
        let tri = tris[t];
        (tri[k], tri[(k + 1) % 3], regions[t])
    };
    // A side is on its region's boundary unless the same edge's other side is in the same
    // region.
    let mut boundary: Vec<Vec<(VertexId, VertexId)>> = vec![Vec::new(); nr];
    let mut i = 0;
    while i < sides.len() {
        let mut j = i + 1;
        while j < sides.len() && sides[j].0 == sides[i].0 {
            j += 1;
        }
        let interior = j == i + 2 && side(sides[i].1).2 == side(sides[i + 1].1).2;
        if !interior {
            for &(_, code) in &sides[i..j] {
                let (a, b, r) = side(code);
                boundary[r.index()].push((a, b));
            }
        }
        i = j;
    }
    boundary
        .into_iter()
        .map(|mut edges| {
            // Sort for a deterministic drawing.
            edges.sort_unstable();
            let mut next: HashMap<VertexId, Vec<VertexId>> = HashMap::with_capacity(edges.len());
            for &(a, b) in &edges {
                next.entry(a).or_default().push(b);
            }
            let mut loops = Vec::new();
            for &(start, _) in &edges {
                while next.get(&start).is_some_and(|v| !v.is_empty()) {
                    let mut lp = vec![start];
                    let mut cur = start;
                    while let Some(n) = next.get_mut(&cur).and_then(|v| v.pop()) {
                        if n == start {
                            break;
                        }
                        lp.push(n);
                        cur = n;
                    }
                    loops.push(lp);
                }
            }
            loops
        })
        .collect()
}

/// Appends `x y` rounded to 0.1 px, without trailing `.0`.
fn push_xy(out: &mut String, (x, y): (f64, f64)) {
    push_num(out, x);
    out.push(' ');
    push_num(out, y);
}

fn push_num(out: &mut String, v: f64) {
    let tenths = (v * 10.0).round() as i64;
    if tenths < 0 {
        out.push('-');
    }
    let a = tenths.unsigned_abs();
    let _ = write!(out, "{}", a / 10);
    if a % 10 != 0 {
        let _ = write!(out, ".{}", a % 10);
    }
}

/// The largest length 1, 2 or 5 x 10^k metres not above `target` (m).
fn nice_length(target: f64) -> f64 {
    let k = target.log10().floor();
    let base = 10f64.powf(k);
    let f = target / base;
    let m = if f >= 5.0 {
        5.0
    } else if f >= 2.0 {
        2.0
    } else {
        1.0
    };
    m * base
}

/// A length (m) written in millimetres, e.g. `20 mm`, `0.5 mm`.
fn format_mm(len_m: f64) -> String {
    let mm = len_m * 1e3;
    let s = format!("{mm:.6}");
    let s = s.trim_end_matches('0').trim_end_matches('.');
    format!("{s} mm")
}

/// Escapes text for XML content and attribute values.
fn escape(s: &str) -> String {
    let mut o = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => o.push_str("&amp;"),
            '<' => o.push_str("&lt;"),
            '>' => o.push_str("&gt;"),
            '"' => o.push_str("&quot;"),
            '\'' => o.push_str("&apos;"),
            c => o.push(c),
        }
    }
    o
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::{structured, MeshRegion, RegionId, TriangleId};

    /// A 2 x 1 rectangle of 8 x 4 cells: triangles left of x = 1 in `iron & co`, the rest in
    /// `air`.
    fn two_region_mesh(nx: usize, ny: usize) -> Mesh {
        let m = structured::rectangle(0.0, 0.0, 0.002, 0.001, nx, ny, "air").unwrap();
        let regions: Vec<RegionId> = (0..m.triangles().len())
            .map(|t| {
                let [a, b, c] = m.triangle_points(TriangleId(t as u32));
                RegionId(u32::from((a.x + b.x + c.x) / 3.0 < 0.001))
            })
            .collect();
        Mesh::from_parts(
            m.vertices().to_vec(),
            m.triangles().to_vec(),
            regions,
            vec![
                MeshRegion {
                    name: "air".into(),
                    rigid_group: None,
                },
                MeshRegion {
                    name: "iron & <co>".into(),
                    rigid_group: None,
                },
            ],
            m.curves().to_vec(),
            Vec::new(),
        )
        .unwrap()
    }

    /// Checks that every `<tag>` is closed in order (a small well-formedness check of the
    /// element structure; attribute values must not contain `<` or `>`).
    fn assert_well_formed(svg: &str) {
        let mut stack: Vec<String> = Vec::new();
        let mut rest = svg;
        while let Some(i) = rest.find('<') {
            let j = rest[i..].find('>').expect("unterminated tag") + i;
            let tag = &rest[i + 1..j];
            assert!(!tag.contains('<'), "'<' inside a tag: {tag}");
            if let Some(name) = tag.strip_prefix('/') {
                assert_eq!(
                    stack.pop().as_deref(),
                    Some(name.trim()),
                    "mismatched </{name}>"
                );
            } else if !tag.ends_with('/') {
                let name = tag.split_whitespace().next().unwrap().to_string();
                stack.push(name);
            }
            rest = &rest[j + 1..];
        }
        assert!(stack.is_empty(), "unclosed elements: {stack:?}");
        assert!(svg.trim_start().starts_with("<svg"));
        assert!(svg.trim_end().ends_with("</svg>"));
    }

    #[test]
    fn drawing_is_well_formed_and_names_every_region() {
        let m = two_region_mesh(8, 4);
        let svg = mesh_to_svg(
            &m,
            &SvgOptions {
                title: Some("test <mesh>".into()),
                ..SvgOptions::default()
            },
        );
        assert_well_formed(&svg);
        // Names are escaped, in the legend and on the fill paths.
        assert!(svg.contains(">iron &amp; &lt;co&gt;</text>"));
        assert!(svg.contains(">air</text>"));
        assert!(svg.contains(r#"data-region="iron &amp; &lt;co&gt;""#));
        assert_eq!(svg.matches(r#"class="region""#).count(), 2);
        assert!(svg.contains("test &lt;mesh&gt;"));
        // Curves of the structured rectangle are drawn with their names.
        for name in ["bottom", "right", "top", "left"] {
            assert!(svg.contains(&format!(r#"data-curve="{name}""#)), "{name}");
        }
        // The geometry is 2 mm wide: the scale bar is a 1-2-5 multiple in mm.
        assert!(svg.contains(" mm</text>"));
    }

    /// Parses the numbers of the first path `d` following `marker`.
    fn path_points(svg: &str, marker: &str) -> Vec<(f64, f64)> {
        let at = svg.find(marker).unwrap();
        let d0 = svg[at..].find(" d=\"").unwrap() + at + 4;
        let d1 = svg[d0..].find('"').unwrap() + d0;
        let nums: Vec<f64> = svg[d0..d1]
            .split(|c: char| c.is_ascii_alphabetic() || c == ' ')
            .filter(|s| !s.is_empty())
            .map(|s| s.parse().unwrap())
            .collect();
        nums.chunks(2).map(|c| (c[0], c[1])).collect()
    }

    #[test]
    fn y_axis_points_up_and_aspect_ratio_is_kept() {
        let m = two_region_mesh(8, 4);
        let svg = mesh_to_svg(&m, &SvgOptions::default());
        // The `left` curve runs from (0, 1 mm) down to (0, 0): its SVG y must increase.
        let left = path_points(&svg, r#"data-curve="left""#);
        assert!(left.first().unwrap().1 < left.last().unwrap().1);
        // The `bottom` curve spans the 2 mm width, `left` the 1 mm height: ratio 2 within
        // the 0.1 px rounding.
        let bottom = path_points(&svg, r#"data-curve="bottom""#);
        let w = bottom.last().unwrap().0 - bottom.first().unwrap().0;
        let h = left.last().unwrap().1 - left.first().unwrap().1;
        assert!((w / h - 2.0).abs() < 1e-3, "w {w} h {h}");
    }

    #[test]
    fn region_fill_is_the_region_boundary() {
        // The fill of `iron` (left half) has one loop: the boundary of [0,1]x[0,1] mm, whose
        // corners are 4 of its points; its point count equals the boundary node count.
        let m = two_region_mesh(8, 4);
        let svg = mesh_to_svg(&m, &SvgOptions::default());
        let pts = path_points(&svg, r#"data-region="iron"#);
        // 4 cells along x and 4 along y: 16 boundary nodes.
        assert_eq!(pts.len(), 16);
        assert_eq!(
            svg[svg.find(r#"data-region="iron"#).unwrap()..]
                .split("/>")
                .next()
                .unwrap()
                .matches('Z')
                .count(),
            1
        );
    }

    #[test]
    fn edges_are_skipped_above_the_threshold_and_output_stays_compact() {
        let m = two_region_mesh(60, 30);
        let with = mesh_to_svg(&m, &SvgOptions::default());
        let without = mesh_to_svg(
            &m,
            &SvgOptions {
                max_triangles_with_edges: 100,
                ..SvgOptions::default()
            },
        );
        assert!(with.contains(r#"id="edges""#));
        assert!(!without.contains(r#"id="edges""#));
        // Fills are boundary loops only: without edges the size does not grow with the
        // triangle count (3600 triangles here).
        assert!(without.len() < 12_000, "{} bytes", without.len());
        // With edges: each of the ~5500 edges once, about 25 bytes each.
        let edges = with.matches('M').count() - without.matches('M').count();
        let mut set = std::collections::HashSet::new();
        for t in m.triangles() {
            for k in 0..3 {
                let (a, b) = (t[k], t[(k + 1) % 3]);
                set.insert((a.min(b), a.max(b)));
            }
        }
        let boundary = 2 * (60 + 30);
        // Every interior edge exactly once; a mesh-boundary edge at most once (the outlines
        // draw it anyway).
        assert!(
            edges >= set.len() - boundary && edges <= set.len(),
            "{edges}"
        );
    }

    #[test]
    fn neighbouring_regions_get_different_colours() {
        // Ten vertical strips; strip 1 is region 9, whose base colour is region 0's.
        let m = structured::rectangle(0.0, 0.0, 0.01, 0.001, 10, 1, "r").unwrap();
        let order = [0u32, 9, 1, 2, 3, 4, 5, 6, 7, 8];
        let regions: Vec<RegionId> = (0..m.triangles().len())
            .map(|t| {
                let [a, b, c] = m.triangle_points(TriangleId(t as u32));
                let strip = (((a.x + b.x + c.x) / 3.0) / 0.001) as usize;
                RegionId(order[strip])
            })
            .collect();
        let names: Vec<MeshRegion> = (0..10)
            .map(|i| MeshRegion {
                name: format!("part{i}"),
                rigid_group: None,
            })
            .collect();
        let m = Mesh::from_parts(
            m.vertices().to_vec(),
            m.triangles().to_vec(),
            regions,
            names,
            Vec::new(),
            Vec::new(),
        )
        .unwrap();
        assert_eq!(region_colour(0, "part0"), region_colour(9, "part9"));
        let svg = mesh_to_svg(&m, &SvgOptions::default());
        let fill = |name: &str| {
            let at = svg.find(&format!("data-region=\"{name}\"")).unwrap();
            let f = svg[at..].find("fill=\"").unwrap() + at + 6;
            svg[f..f + 7].to_string()
        };
        assert_ne!(fill("part0"), fill("part9"));
        // The legend uses the same colour as the fill.
        assert!(svg.contains(&format!("fill=\"{}\" stroke=\"#000000\"", fill("part9"))));
    }

    #[test]
    fn empty_mesh_gives_a_drawing() {
        let m = Mesh::from_parts(vec![], vec![], vec![], vec![], vec![], vec![]).unwrap();
        let svg = mesh_to_svg(&m, &SvgOptions::default());
        assert_well_formed(&svg);
        assert!(svg.contains("empty mesh"));
    }

    #[test]
    fn scale_bar_lengths_are_one_two_five() {
        assert!((nice_length(0.037) - 0.02).abs() < 1e-15);
        assert!((nice_length(0.0061) - 0.005).abs() < 1e-15);
        assert!((nice_length(0.0013) - 0.001).abs() < 1e-15);
        assert_eq!(format_mm(0.02), "20 mm");
        assert_eq!(format_mm(0.0005), "0.5 mm");
    }
}
