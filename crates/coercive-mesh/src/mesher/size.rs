//! The size field: the target edge length h(x) (m) everywhere in the drawing.
//!
//! h(x) = min(global maximum, min over sources s of (h_s + g |x - s|)) where the sources are
//! sized points, sized curves, the outlines of regions with a size, and the automatic local
//! feature size (gaps between curves). It is stored on a uniform background grid of nodes
//! filled by stamping every source on its nearby nodes and then spreading the growth limit
//! with a forward and a backward chamfer sweep (8 neighbours: the spread distance overestimates the Euclidean one
//! by at most 8 %, so sizes grow slightly slower than `g`, never faster).
//!
//! A query at `x` returns min over the four nodes c of its cell of (H_c + g |x - c|): an upper
//! bound that is exact at the nodes. Next to features smaller than the grid cell the curve
//! discretisation (which uses exact sizes) and the angle condition of refinement grade the
//! mesh.

use crate::Point2;

/// A size field on a uniform grid.
#[derive(Clone, Debug)]
pub(crate) struct SizeField {
    origin: Point2,
    cell: f64,
    nx: usize,
    ny: usize,
    vals: Vec<f64>,
    growth: f64,
    cap: f64,
}

impl SizeField {
    /// An empty field (everywhere `cap`) covering the box with at most `max_nodes` nodes and
    /// cells no smaller than `min_cell`.
    pub fn new(min: Point2, max: Point2, cap: f64, growth: f64, min_cell: f64) -> Self {
        let (w, h) = ((max.x - min.x).max(1e-300), (max.y - min.y).max(1e-300));
        let max_nodes = 1usize << 18;
        let mut cell = (w * h / max_nodes as f64).sqrt().max(min_cell);
        // Keep at least a few cells per side.
        cell = cell.min(w.max(h) / 4.0);
        let nx = ((w / cell).ceil() as usize + 3).max(2);
        let ny = ((h / cell).ceil() as usize + 3).max(2);
        let origin = Point2::new(min.x - cell, min.y - cell);
        Self {
            origin,
            cell,
            nx,
            ny,
            vals: vec![cap; nx * ny],
            growth,
            cap,
        }
    }

    fn node(&self, i: usize, j: usize) -> Point2 {
        Point2::new(
            self.origin.x + i as f64 * self.cell,
            self.origin.y + j as f64 * self.cell,
        )
    }

    /// Adds a point source of size `h` at `p`.
    pub fn add_point(&mut self, p: Point2, h: f64) {
        let fi = (p.x - self.origin.x) / self.cell;
        let fj = (p.y - self.origin.y) / self.cell;
        let (i0, j0) = (fi.floor() as isize, fj.floor() as isize);
        for j in (j0 - 1)..=(j0 + 2) {
            for i in (i0 - 1)..=(i0 + 2) {
                if i < 0 || j < 0 || i as usize >= self.nx || j as usize >= self.ny {
                    continue;
                }
                let (i, j) = (i as usize, j as usize);
                let v = h + self.growth * self.node(i, j).distance(p);
                let slot = &mut self.vals[j * self.nx + i];
                if v < *slot {
                    *slot = v;
                }
            }
        }
    }

    /// Adds a source of size `h` along the segment `p q`.
    pub fn add_segment(&mut self, p: Point2, q: Point2, h: f64) {
        let n = ((p.distance(q) / (0.5 * self.cell)).ceil() as usize).clamp(1, 1 << 20);
        for k in 0..=n {
            let t = k as f64 / n as f64;
            self.add_point(Point2::new(p.x + t * (q.x - p.x), p.y + t * (q.y - p.y)), h);
        }
    }

    /// Spreads the growth limit over the grid (call once after adding the sources).
    pub fn propagate(&mut self) {
        let (nx, ny) = (self.nx, self.ny);
        let a = self.growth * self.cell;
        let d = a * std::f64::consts::SQRT_2;
        {
            for j in 0..ny {
                for i in 0..nx {
                    let mut v = self.vals[j * nx + i];
                    if i > 0 {
                        v = v.min(self.vals[j * nx + i - 1] + a);
                    }
                    if j > 0 {
                        v = v.min(self.vals[(j - 1) * nx + i] + a);
                        if i > 0 {
                            v = v.min(self.vals[(j - 1) * nx + i - 1] + d);
                        }
                        if i + 1 < nx {
                            v = v.min(self.vals[(j - 1) * nx + i + 1] + d);
                        }
                    }
                    self.vals[j * nx + i] = v;
                }
            }
            for j in (0..ny).rev() {
                for i in (0..nx).rev() {
                    let mut v = self.vals[j * nx + i];
                    if i + 1 < nx {
                        v = v.min(self.vals[j * nx + i + 1] + a);
                    }
                    if j + 1 < ny {
                        v = v.min(self.vals[(j + 1) * nx + i] + a);
                        if i + 1 < nx {
                            v = v.min(self.vals[(j + 1) * nx + i + 1] + d);
                        }
                        if i > 0 {
                            v = v.min(self.vals[(j + 1) * nx + i - 1] + d);
                        }
                    }
                    self.vals[j * nx + i] = v;
                }
            }
        }
    }

    /// The size at `x` (m).
    #[inline]
    pub fn at(&self, x: Point2) -> f64 {
        let fi = ((x.x - self.origin.x) / self.cell).clamp(0.0, (self.nx - 2) as f64);
        let fj = ((x.y - self.origin.y) / self.cell).clamp(0.0, (self.ny - 2) as f64);
        let (i, j) = (fi.floor() as usize, fj.floor() as usize);
        let (i, j) = (i.min(self.nx - 2), j.min(self.ny - 2));
        let mut best = self.cap;
        for (di, dj) in [(0, 0), (1, 0), (0, 1), (1, 1)] {
            let c = self.node(i + di, j + dj);
            let (dx, dy) = (c.x - x.x, c.y - x.y);
            let v =
                self.vals[(j + dj) * self.nx + i + di] + self.growth * (dx * dx + dy * dy).sqrt();
            if v < best {
                best = v;
            }
        }
        best
    }
}
