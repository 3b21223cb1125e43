//! The shell around a body: the function xi (1 on the body, 0 outside the shell), the
//! eggshell / virtual-work integral over it, and the mid-line of its first layer.

use coercive_fem::quadrature::TriangleRule;
use coercive_fem::{Formulation, Solution};
use coercive_mesh::{Mesh, TriangleId};

use super::{
    body_mask, depth_of, finish, is_air, maxwell_stress, weight, Body, BodyForce, ForceMethod,
    ForceSettings, MethodForce,
};
use crate::PostError;

/// The piecewise-linear shell function of a body.
pub(crate) struct Shell {
    /// xi at every mesh vertex (dimensionless, 0..=1).
    pub xi: Vec<f64>,
    /// Triangles on which xi is not constant (all are air).
    pub triangles: Vec<usize>,
    /// Layers reached everywhere (fewer than asked where the shell is clipped).
    pub layers_reached: usize,
}

/// Vertex-to-triangle adjacency in compressed rows.
struct VertexTriangles {
    start: Vec<usize>,
    items: Vec<u32>,
}

impl VertexTriangles {
    fn new(mesh: &Mesh) -> Self {
        let nv = mesh.vertices().len();
        let mut count = vec![0usize; nv + 1];
        for tri in mesh.triangles() {
            for v in tri {
                count[v.index() + 1] += 1;
            }
        }
        for i in 0..nv {
            count[i + 1] += count[i];
        }
        let mut fill = count.clone();
        let mut items = vec![0u32; count[nv]];
        for (t, tri) in mesh.triangles().iter().enumerate() {
            for v in tri {
                items[fill[v.index()]] = t as u32;
                fill[v.index()] += 1;
            }
        }
        VertexTriangles {
            start: count,
            items,
        }
    }

    fn of(&self, v: usize) -> &[u32] {
        &self.items[self.start[v]..self.start[v + 1]]
    }
}

/// Vertices on the outer boundary of the mesh (on an edge used by one triangle only).
///
/// Found through the vertex-to-triangle adjacency (an edge a-b is shared when another
/// triangle around a also holds b) rather than a hash map of all edges: on a 1M-triangle
/// mesh the hash map cost about a second per call on a loaded 2-core machine.
fn boundary_vertices(mesh: &Mesh, adjacency: &VertexTriangles) -> Vec<bool> {
    let triangles = mesh.triangles();
    let mut on = vec![false; mesh.vertices().len()];
    for (t, tri) in triangles.iter().enumerate() {
        for k in 0..3 {
            let (a, b) = (tri[k], tri[(k + 1) % 3]);
            let shared = adjacency
                .of(a.index())
                .iter()
                .any(|&u| u as usize != t && triangles[u as usize].contains(&b));
            if !shared {
                on[a.index()] = true;
                on[b.index()] = true;
            }
        }
    }
    on
}

/// Builds the shell of `layers` element layers around the body.
pub(crate) fn build_shell(
    solution: &Solution,
    body: &Body,
    layers: usize,
) -> Result<Shell, PostError> {
    check_layers(layers)?;
    Ok(ShellBase::new(solution, body)?.shell(solution.model().mesh(), layers))
}

fn check_layers(layers: usize) -> Result<(), PostError> {
    if layers == 0 {
        return Err(PostError::InvalidArgument {
            what: "shell layers".into(),
            value: 0.0,
            reason: "at least one element layer is needed".into(),
        });
    }
    Ok(())
}

/// What every shell of one body shares (built once for several thicknesses): the body and
/// air masks, the nodes where xi must vanish and the vertex-to-triangle adjacency.
struct ShellBase {
    mask: Vec<bool>,
    air: Vec<bool>,
    in_body: Vec<bool>,
    blocked: Vec<bool>,
    adjacency: VertexTriangles,
    /// Representative of each node's class: a node and its matched nodes on periodic or
    /// anti-periodic curve pairs form one class and share one value of xi.
    class: Vec<usize>,
}

/// Node classes of the periodic and anti-periodic curve pairs of the model: `class[v]` is
/// the smallest node matched with v (through any chain of pairs), v itself otherwise; and
/// whether each node lies on such a pair.
fn periodic_classes(solution: &Solution) -> (Vec<usize>, Vec<bool>) {
    use coercive_fem::BoundaryCondition;
    let model = solution.model();
    let mesh = model.mesh();
    let nv = mesh.vertices().len();
    let mut class: Vec<usize> = (0..nv).collect();
    let mut on_pair = vec![false; nv];
    fn find(class: &mut [usize], mut v: usize) -> usize {
        while class[v] != v {
            class[v] = class[class[v]];
            v = class[v];
        }
        v
    }
    for bc in model.boundary_conditions() {
        let (first, second) = match bc {
            BoundaryCondition::Periodic { first, second }
            | BoundaryCondition::AntiPeriodic { first, second } => (first, second),
            _ => continue,
        };
        let (a, b) = (mesh.curves_named(first), mesh.curves_named(second));
        for (ca, cb) in a.iter().zip(&b) {
            for (u, w) in mesh.curve_nodes(*ca).iter().zip(mesh.curve_nodes(*cb)) {
                let (u, w) = (u.index(), w.index());
                on_pair[u] = true;
                on_pair[w] = true;
                let (ru, rw) = (find(&mut class, u), find(&mut class, w));
                let (lo, hi) = (ru.min(rw), ru.max(rw));
                class[hi] = lo;
            }
        }
    }
    for v in 0..nv {
        class[v] = find(&mut class, v);
    }
    (class, on_pair)
}

impl ShellBase {
    fn new(solution: &Solution, body: &Body) -> Result<ShellBase, PostError> {
        let mask = body_mask(solution, body)?;
        let model = solution.model();
        let mesh = model.mesh();
        let nv = mesh.vertices().len();
        let nreg = mesh.regions().len();
        let air: Vec<bool> = (0..nreg)
            .map(|r| is_air(solution, coercive_mesh::RegionId(r as u32)))
            .collect();
        let axisymmetric = matches!(model.formulation(), Formulation::Axisymmetric);
        let (mut lo, mut hi) = ([f64::INFINITY; 2], [f64::NEG_INFINITY; 2]);
        for p in mesh.vertices() {
            lo = [lo[0].min(p.x), lo[1].min(p.y)];
            hi = [hi[0].max(p.x), hi[1].max(p.y)];
        }
        let axis_tol = 1e-9 * (hi[0] - lo[0]).max(hi[1] - lo[1]);

        // Body nodes, and nodes where xi must vanish (other materials, outer boundary).
        let mut in_body = vec![false; nv];
        let mut blocked_by: Vec<Option<usize>> = vec![None; nv];
        for (t, tri) in mesh.triangles().iter().enumerate() {
            let r = mesh.triangle_regions()[t].index();
            if mask[r] {
                for v in tri {
                    in_body[v.index()] = true;
                }
            } else if !air[r] {
                for v in tri {
                    blocked_by[v.index()] = Some(r);
                }
            }
        }
        let adjacency = VertexTriangles::new(mesh);
        // Nodes on periodic or anti-periodic pairs are not on the outer boundary: the shell
        // continues across the pair (one xi per matched class), so a body cut by the edges
        // of a sector (a rotor) gets its sector's share of the torque.
        let (class, on_pair) = periodic_classes(solution);
        let boundary: Vec<bool> = boundary_vertices(mesh, &adjacency)
            .into_iter()
            .zip(&on_pair)
            .map(|(b, p)| b && !p)
            .collect();
        for v in 0..nv {
            if !in_body[v] {
                continue;
            }
            if let Some(r) = blocked_by[v] {
                let p = mesh.vertices()[v];
                let body_region = body_region_at(mesh, &mask, v);
                return Err(PostError::ShellNotInAir {
                    body: body.label(),
                    body_region,
                    region: mesh.regions()[r].name.clone(),
                    x: p.x,
                    y: p.y,
                });
            }
            let p = mesh.vertices()[v];
            if boundary[v] && !(axisymmetric && p.x.abs() <= axis_tol) {
                return Err(PostError::BodyOnBoundary {
                    body: body.label(),
                    x: p.x,
                    y: p.y,
                });
            }
        }
        let mut blocked: Vec<bool> = (0..nv)
            .map(|v| {
                blocked_by[v].is_some()
                    || (boundary[v] && !(axisymmetric && mesh.vertices()[v].x.abs() <= axis_tol))
            })
            .collect();
        // One value per class: a class is in the body (blocked) when any member is.
        let mut class_body = vec![false; nv];
        let mut class_blocked = vec![false; nv];
        for v in 0..nv {
            class_body[class[v]] |= in_body[v];
            class_blocked[class[v]] |= blocked[v];
        }
        for v in 0..nv {
            in_body[v] = class_body[class[v]];
            blocked[v] = class_blocked[class[v]] && !in_body[v];
        }

        Ok(ShellBase {
            mask,
            air,
            in_body,
            blocked,
            adjacency,
            class,
        })
    }

    /// The shell of `layers` (at least 1) element layers.
    fn shell(&self, mesh: &Mesh, layers: usize) -> Shell {
        let ShellBase {
            mask,
            air,
            in_body,
            blocked,
            adjacency,
            class,
        } = self;
        // Members of each periodic class (only classes of more than one node).
        let mut members: std::collections::BTreeMap<usize, Vec<usize>> = Default::default();
        for (v, &c) in class.iter().enumerate() {
            if c != v {
                members.entry(c).or_insert_with(|| vec![c]).push(v);
            }
        }
        let nv = mesh.vertices().len();
        // Breadth-first layers through air triangles.
        let mut level = vec![usize::MAX; nv];
        let mut frontier: Vec<usize> = (0..nv).filter(|&v| in_body[v]).collect();
        for &v in &frontier {
            level[v] = 0;
        }
        let mut reached = layers;
        for k in 1..=layers {
            let mut next = Vec::new();
            for &v in &frontier {
                for &t in adjacency.of(v) {
                    let r = mesh.triangle_regions()[t as usize].index();
                    if mask[r] || !air[r] {
                        continue;
                    }
                    for u in mesh.triangles()[t as usize] {
                        let u = u.index();
                        if level[u] != usize::MAX {
                            continue;
                        }
                        let same: &[usize] = members
                            .get(&class[u])
                            .map_or(std::slice::from_ref(&u), Vec::as_slice);
                        for &w in same {
                            level[w] = k;
                        }
                        if blocked[u] {
                            reached = reached.min(k);
                        } else {
                            next.extend_from_slice(same);
                        }
                    }
                }
            }
            frontier = next;
        }
        let xi: Vec<f64> = (0..nv)
            .map(|v| {
                if in_body[v] {
                    1.0
                } else if blocked[v] || level[v] == usize::MAX {
                    0.0
                } else {
                    1.0 - level[v] as f64 / layers as f64
                }
            })
            .collect();
        let triangles: Vec<usize> = mesh
            .triangles()
            .iter()
            .enumerate()
            .filter(|(_, tri)| {
                let x = tri.map(|v| xi[v.index()]);
                x[0] != x[1] || x[1] != x[2]
            })
            .map(|(t, _)| t)
            .collect();
        Shell {
            xi,
            triangles,
            layers_reached: reached,
        }
    }
}

fn body_region_at(mesh: &Mesh, mask: &[bool], v: usize) -> String {
    mesh.triangles()
        .iter()
        .zip(mesh.triangle_regions())
        .find(|(tri, r)| mask[r.index()] && tri.iter().any(|u| u.index() == v))
        .map(|(_, r)| mesh.regions()[r.index()].name.clone())
        .unwrap_or_default()
}

/// Gradients of the barycentric coordinates of a triangle (1/m) and its area (m^2).
pub(crate) fn barycentric_gradients(p: [[f64; 2]; 3]) -> ([[f64; 2]; 3], f64) {
    let det = (p[1][0] - p[0][0]) * (p[2][1] - p[0][1]) - (p[2][0] - p[0][0]) * (p[1][1] - p[0][1]);
    let g = [
        [(p[1][1] - p[2][1]) / det, (p[2][0] - p[1][0]) / det],
        [(p[2][1] - p[0][1]) / det, (p[0][0] - p[2][0]) / det],
        [(p[0][1] - p[1][1]) / det, (p[1][0] - p[0][0]) / det],
    ];
    (g, 0.5 * det)
}

pub(crate) fn corners(mesh: &Mesh, t: usize) -> [[f64; 2]; 3] {
    mesh.triangle_points(TriangleId(t as u32))
        .map(|p| [p.x, p.y])
}

pub(crate) fn field_at(solution: &Solution, t: usize, p: [f64; 2]) -> Result<[f64; 2], PostError> {
    solution
        .flux_density_at(TriangleId(t as u32), p)
        .map_err(|e| PostError::Internal {
            reason: format!("flux density at ({} m, {} m): {e}", p[0], p[1]),
        })
}

/// The eggshell integral: F = -integral T . grad(xi) (weighted by 2 pi r axisymmetric) and
/// the torque -integral ((x - c) x (T grad xi)).
fn shell_integral(
    solution: &Solution,
    shell: &Shell,
    centre: [f64; 2],
) -> Result<([f64; 2], f64), PostError> {
    let model = solution.model();
    let mesh = model.mesh();
    let formulation = model.formulation();
    // Degree 4 integrates T (quadratic for P2) times x (torque) exactly in planar models.
    let rule = TriangleRule::of_degree(if matches!(formulation, Formulation::Planar { .. }) {
        4
    } else {
        5
    });
    let mut force = [0.0; 2];
    let mut torque = 0.0;
    for &t in &shell.triangles {
        let p = corners(mesh, t);
        let (g, area) = barycentric_gradients(p);
        let tri = mesh.triangles()[t];
        let mut gx = [0.0; 2];
        for k in 0..3 {
            let x = shell.xi[tri[k].index()];
            gx[0] += x * g[k][0];
            gx[1] += x * g[k][1];
        }
        for (l, w) in rule.points.iter().zip(rule.weights) {
            let x = [
                l[0] * p[0][0] + l[1] * p[1][0] + l[2] * p[2][0],
                l[0] * p[0][1] + l[1] * p[1][1] + l[2] * p[2][1],
            ];
            let b = field_at(solution, t, x)?;
            let s = maxwell_stress(b);
            let f = [
                s[0][0] * gx[0] + s[0][1] * gx[1],
                s[1][0] * gx[0] + s[1][1] * gx[1],
            ];
            let dw = -area * w * weight(formulation, x);
            force[0] += dw * f[0];
            force[1] += dw * f[1];
            torque += dw * ((x[0] - centre[0]) * f[1] - (x[1] - centre[1]) * f[0]);
        }
    }
    Ok(finish(formulation, force, torque))
}

/// Maxwell stress on the mid-line (xi = 1/2) of a one-layer shell: in each shell triangle
/// the level line joins the midpoints of the two edges whose ends differ, and its normal
/// points away from the body. With first-order elements this equals the one-layer eggshell
/// exactly (the level-line length is linear in the level); with P2 it is an independent
/// estimate.
fn mid_line_integral(
    solution: &Solution,
    shell: &Shell,
    centre: [f64; 2],
) -> Result<([f64; 2], f64), PostError> {
    let model = solution.model();
    let mesh = model.mesh();
    let formulation = model.formulation();
    // Three-point Gauss-Legendre on [0, 1].
    let s = (0.6_f64).sqrt();
    let gauss = [
        (0.5 * (1.0 - s), 5.0 / 18.0),
        (0.5, 8.0 / 18.0),
        (0.5 * (1.0 + s), 5.0 / 18.0),
    ];
    let mut force = [0.0; 2];
    let mut torque = 0.0;
    for &t in &shell.triangles {
        let p = corners(mesh, t);
        let tri = mesh.triangles()[t];
        let xi = tri.map(|v| shell.xi[v.index()]);
        let (g, _) = barycentric_gradients(p);
        let mut gx = [0.0; 2];
        for k in 0..3 {
            gx[0] += xi[k] * g[k][0];
            gx[1] += xi[k] * g[k][1];
        }
        let gn = gx[0].hypot(gx[1]);
        let n = [-gx[0] / gn, -gx[1] / gn];
        // Points where xi = 1/2 on the edges whose end values straddle it.
        let mut ends = Vec::with_capacity(2);
        for k in 0..3 {
            let (a, b) = (k, (k + 1) % 3);
            if (xi[a] - 0.5) * (xi[b] - 0.5) < 0.0 {
                let u = (0.5 - xi[a]) / (xi[b] - xi[a]);
                ends.push([
                    p[a][0] + u * (p[b][0] - p[a][0]),
                    p[a][1] + u * (p[b][1] - p[a][1]),
                ]);
            }
        }
        if ends.len() != 2 {
            continue;
        }
        let len = (ends[1][0] - ends[0][0]).hypot(ends[1][1] - ends[0][1]);
        for (u, w) in gauss {
            let x = [
                ends[0][0] + u * (ends[1][0] - ends[0][0]),
                ends[0][1] + u * (ends[1][1] - ends[0][1]),
            ];
            let b = field_at(solution, t, x)?;
            let st = maxwell_stress(b);
            let f = [
                st[0][0] * n[0] + st[0][1] * n[1],
                st[1][0] * n[0] + st[1][1] * n[1],
            ];
            let dw = len * w * weight(formulation, x);
            force[0] += dw * f[0];
            force[1] += dw * f[1];
            torque += dw * ((x[0] - centre[0]) * f[1] - (x[1] - centre[1]) * f[0]);
        }
    }
    Ok(finish(formulation, force, torque))
}

/// Force and torque on a body by the eggshell (virtual work) method over `layers` air
/// element layers around it; torque about `centre` (m).
///
/// Planar: N/m and N m/m; axisymmetric: axial force (N), torque 0. The shell is clipped
/// (xi = 0) where it meets another non-air region or the outer boundary, which keeps the
/// method valid (xi only needs to be 1 on the body and 0 on every other material).
///
/// # Errors
/// [`PostError::UnknownRegion`], [`PostError::EmptyBody`], [`PostError::ShellNotInAir`]
/// (the body touches a non-air region that is not part of it: include that region in the
/// body), [`PostError::BodyOnBoundary`], [`PostError::InvalidArgument`] for zero layers.
pub fn eggshell(
    solution: &Solution,
    body: &Body,
    layers: usize,
    centre: [f64; 2],
) -> Result<MethodForce, PostError> {
    let shell = build_shell(solution, body, layers)?;
    let (force, torque) = shell_integral(solution, &shell, centre)?;
    Ok(MethodForce {
        method: ForceMethod::Eggshell { layers },
        force,
        torque,
        depth_m: depth_of(solution),
    })
}

/// Force and torque on a body by three estimates side by side: the eggshell with
/// `settings.shell_layers` layers (the main result), the one-layer eggshell (thickness
/// consistency check; two layers when the main shell has one) and the Maxwell stress on the
/// mid-line of the first air layer; with their relative spread, the uncertainty of the main
/// result (see [`BodyForce`]) and a warning flag.
///
/// With first-order (P1) elements the mid-line stress equals the one-layer eggshell
/// exactly; with P2 all three are distinct estimates.
///
/// # Errors
/// As [`eggshell`].
pub fn force_on(
    solution: &Solution,
    body: &Body,
    settings: &ForceSettings,
) -> Result<BodyForce, PostError> {
    let c = settings.torque_centre;
    check_layers(settings.shell_layers)?;
    let base = ShellBase::new(solution, body)?;
    let mesh = solution.model().mesh();
    let main = base.shell(mesh, settings.shell_layers);
    let reached = main.layers_reached;
    let (f_main, t_main) = shell_integral(solution, &main, c)?;
    let depth = depth_of(solution);
    let mut methods = vec![MethodForce {
        method: ForceMethod::Eggshell {
            layers: settings.shell_layers,
        },
        force: f_main,
        torque: t_main,
        depth_m: depth,
    }];
    let thin = if settings.shell_layers == 1 {
        // The thickness check then uses a two-layer shell.
        let thick = base.shell(mesh, 2);
        let (f, t) = shell_integral(solution, &thick, c)?;
        methods.push(MethodForce {
            method: ForceMethod::Eggshell { layers: 2 },
            force: f,
            torque: t,
            depth_m: depth,
        });
        main
    } else {
        let thin = base.shell(mesh, 1);
        let (f, t) = shell_integral(solution, &thin, c)?;
        methods.push(MethodForce {
            method: ForceMethod::Eggshell { layers: 1 },
            force: f,
            torque: t,
            depth_m: depth,
        });
        thin
    };
    let (f_mid, t_mid) = mid_line_integral(solution, &thin, c)?;
    methods.push(MethodForce {
        method: ForceMethod::StressMidLine,
        force: f_mid,
        torque: t_mid,
        depth_m: depth,
    });
    Ok(BodyForce::from_methods(body, methods, settings, reached))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn boundary_vertices_are_exactly_those_on_the_rectangle_sides() {
        let (nx, ny) = (7, 5);
        let mesh = coercive_mesh::structured::rectangle(0.0, 0.0, 0.7, 0.5, nx, ny, "air").unwrap();
        let adjacency = VertexTriangles::new(&mesh);
        let on = boundary_vertices(&mesh, &adjacency);
        let mut count = 0;
        for (v, p) in mesh.vertices().iter().enumerate() {
            let side = p.x.abs() < 1e-12
                || (p.x - 0.7).abs() < 1e-12
                || p.y.abs() < 1e-12
                || (p.y - 0.5).abs() < 1e-12;
            assert_eq!(on[v], side, "vertex {v} at ({} m, {} m)", p.x, p.y);
            count += usize::from(side);
        }
        assert_eq!(count, 2 * (nx + ny));
    }
}
