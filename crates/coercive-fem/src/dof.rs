//! Degrees of freedom: node numbering for P1/P2, constraints (fixed and floating potentials,
//! periodic and anti-periodic links, the open boundary) and the numbering of the free equations.
//!
//! Every node (degree of freedom) is either fixed (known value) or equal to `sign * x[eq]`
//! for a free unknown `x[eq]`, `sign` being +1 or -1. Periodic links merge nodes into classes
//! (a union-find with parity); a class that links a node to minus itself is fixed to 0.

use coercive_mesh::{CurveId, Mesh};
use rayon::prelude::*;

use crate::element::{ElementOrder, EDGE_VERTICES};
use crate::model::{
    centre_node, curves_named, matched_pairs, mesh_extent, BoundaryCondition, Formulation, Model,
    PotentialValue,
};
use crate::FemError;

/// Marks a fixed node in [`Layout::dof_eq`].
pub(crate) const FIXED: u32 = u32::MAX;

/// The node numbering and constraint layout of one model.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct Layout {
    pub order: ElementOrder,
    /// Nodes per triangle.
    pub nloc: usize,
    /// Number of mesh vertices (P2 midside nodes are numbered after them).
    pub nv: usize,
    /// Sorted (min, max) vertex pairs of the edges (P2 only).
    pub edges: Vec<(u32, u32)>,
    /// Nodes of each triangle (`nloc` per triangle, local order of [`crate::element`]).
    pub element_dofs: Vec<u32>,
    /// Node coordinates (m).
    pub dof_points: Vec<[f64; 2]>,
    /// Free equation of each node, or [`FIXED`].
    pub dof_eq: Vec<u32>,
    /// Sign of each node relative to its equation (+1 or -1).
    pub dof_sign: Vec<f64>,
    /// Value of each fixed node (0 for free nodes).
    pub fixed_values: Vec<f64>,
    /// Number of free equations.
    pub neq: usize,
}

impl Layout {
    /// Numbers the nodes of `model` and applies its constraints.
    pub fn new(model: &Model) -> Result<Layout, FemError> {
        let mesh = model.mesh();
        let order = model.order();
        let nloc = order.nodes_per_triangle();
        let nv = mesh.vertices().len();
        let nt = mesh.triangles().len();
        let mut dof_points: Vec<[f64; 2]> = mesh.vertices().iter().map(|p| [p.x, p.y]).collect();
        let (edges, element_dofs) = match order {
            ElementOrder::P1 => (
                Vec::new(),
                mesh.triangles()
                    .iter()
                    .flat_map(|t| t.map(|v| v.0))
                    .collect::<Vec<u32>>(),
            ),
            ElementOrder::P2 => {
                let mut keyed: Vec<(u64, u32)> = Vec::with_capacity(3 * nt);
                for (t, tri) in mesh.triangles().iter().enumerate() {
                    for (k, [i, j]) in EDGE_VERTICES.iter().enumerate() {
                        let (a, b) = (tri[*i].0, tri[*j].0);
                        let key = ((a.min(b) as u64) << 32) | a.max(b) as u64;
                        keyed.push((key, (3 * t + k) as u32));
                    }
                }
                keyed.par_sort_unstable();
                let mut edges = Vec::with_capacity(keyed.len() / 2 + 1);
                let mut element_dofs = vec![0u32; 6 * nt];
                for (t, tri) in mesh.triangles().iter().enumerate() {
                    for k in 0..3 {
                        element_dofs[6 * t + k] = tri[k].0;
                    }
                }
                let mut last = u64::MAX;
                for (key, slot) in keyed {
                    if key != last {
                        edges.push(((key >> 32) as u32, key as u32));
                        last = key;
                    }
                    let (t, k) = (slot as usize / 3, slot as usize % 3);
                    element_dofs[6 * t + 3 + k] = (nv + edges.len() - 1) as u32;
                }
                for &(a, b) in &edges {
                    let (pa, pb) = (dof_points[a as usize], dof_points[b as usize]);
                    dof_points.push([0.5 * (pa[0] + pb[0]), 0.5 * (pa[1] + pb[1])]);
                }
                (edges, element_dofs)
            }
        };
        let ndofs = dof_points.len();
        let mut layout = Layout {
            order,
            nloc,
            nv,
            edges,
            element_dofs,
            dof_points,
            dof_eq: vec![FIXED; ndofs],
            dof_sign: vec![1.0; ndofs],
            fixed_values: vec![0.0; ndofs],
            neq: 0,
        };
        layout.apply_constraints(model)?;
        Ok(layout)
    }

    /// Number of nodes (degrees of freedom before constraints).
    pub fn ndofs(&self) -> usize {
        self.dof_points.len()
    }

    /// The nodes of triangle `t`.
    #[inline]
    pub fn triangle_dofs(&self, t: usize) -> &[u32] {
        &self.element_dofs[t * self.nloc..(t + 1) * self.nloc]
    }

    /// The midside node of the edge joining vertices `a` and `b`, if it is an edge.
    pub fn edge_dof(&self, a: u32, b: u32) -> Option<u32> {
        let key = (a.min(b), a.max(b));
        self.edges
            .binary_search(&key)
            .ok()
            .map(|i| (self.nv + i) as u32)
    }

    /// The ordered nodes of a mesh curve, midside nodes included for P2.
    pub fn curve_dofs(&self, mesh: &Mesh, c: CurveId) -> Vec<u32> {
        let nodes = mesh.curve_nodes(c);
        match self.order {
            ElementOrder::P1 => nodes.iter().map(|v| v.0).collect(),
            ElementOrder::P2 => {
                let mut out = Vec::with_capacity(2 * nodes.len());
                for (i, v) in nodes.iter().enumerate() {
                    if i > 0 {
                        // Mesh::sanity_check guarantees curve nodes are joined by edges.
                        if let Some(m) = self.edge_dof(nodes[i - 1].0, v.0) {
                            out.push(m);
                        }
                    }
                    out.push(v.0);
                }
                out
            }
        }
    }

    /// Fills `dof_eq`, `dof_sign`, `fixed_values` and `neq`.
    fn apply_constraints(&mut self, model: &Model) -> Result<(), FemError> {
        let mesh = model.mesh();
        let ndofs = self.ndofs();
        let mut classes = SignedUnionFind::new(ndofs);
        // Links first.
        for bc in model.boundary_conditions() {
            let (first, second, sign) = match bc {
                BoundaryCondition::Periodic { first, second } => (first, second, 1.0),
                BoundaryCondition::AntiPeriodic { first, second } => (first, second, -1.0),
                BoundaryCondition::Open(o) => (&o.circle, &o.exterior_boundary, 1.0),
                BoundaryCondition::FloatingPotential { curve } => {
                    // One class for every node of every curve of that name.
                    let mut anchor: Option<usize> = None;
                    for c in curves_named(mesh, "floating potential", curve)? {
                        for d in self.curve_dofs(mesh, c) {
                            match anchor {
                                None => anchor = Some(d as usize),
                                Some(a) => classes.link(a, d as usize, 1.0),
                            }
                        }
                    }
                    continue;
                }
                BoundaryCondition::FixedPotential { .. } => continue,
            };
            for (a, b) in matched_pairs(mesh, first, second)? {
                let (da, db) = (self.curve_dofs(mesh, a), self.curve_dofs(mesh, b));
                if da.len() != db.len() {
                    return Err(FemError::UnmatchedCurvePair {
                        first: first.clone(),
                        second: second.clone(),
                        reason: "the paired curves have different edge structures".into(),
                    });
                }
                for (x, y) in da.iter().zip(&db) {
                    classes.link(*x as usize, *y as usize, sign);
                }
            }
        }
        // Then fixed values, set on each class's root.
        let mut root_value: Vec<Option<f64>> = vec![None; ndofs];
        let mut fix = |d: usize, v: f64, classes: &mut SignedUnionFind| -> Result<(), FemError> {
            let (r, s) = classes.find(d);
            let want = s * v; // x_d = s x_r  =>  x_r = s v
            let conflict = |old: f64| {
                let p = self.dof_points[d];
                FemError::ConflictingConstraints {
                    node: d,
                    x: p[0],
                    y: p[1],
                    reason: format!("fixed to {v} and, through links, to {}", s * old),
                }
            };
            if classes.zero[r] && want.abs() > 1e-12 * want.abs().max(1.0) {
                return Err(conflict(0.0));
            }
            match root_value[r] {
                Some(old) if (old - want).abs() > 1e-12 * old.abs().max(want.abs()).max(1e-300) => {
                    Err(conflict(old))
                }
                _ => {
                    root_value[r] = Some(want);
                    Ok(())
                }
            }
        };
        for bc in model.boundary_conditions() {
            match bc {
                BoundaryCondition::FixedPotential { curve, value } => {
                    for c in curves_named(mesh, "fixed potential", curve)? {
                        for d in self.curve_dofs(mesh, c) {
                            let d = d as usize;
                            let v = match value {
                                PotentialValue::Constant(v) => *v,
                                PotentialValue::Field(f) => {
                                    let p = self.dof_points[d];
                                    let v = f.at(coercive_mesh::Point2::new(p[0], p[1]));
                                    if !v.is_finite() {
                                        return Err(FemError::NotFinite {
                                            what: format!(
                                                "fixed potential on curve `{curve}` at ({} m, {} m)",
                                                p[0], p[1]
                                            ),
                                            value: v,
                                        });
                                    }
                                    v
                                }
                            };
                            fix(d, v, &mut classes)?;
                        }
                    }
                }
                BoundaryCondition::Open(o) => {
                    fix(centre_node(mesh, o)?, 0.0, &mut classes)?;
                }
                _ => {}
            }
        }
        // Nodes that belong to no triangle carry no equation: fix them to 0.
        let mut referenced = vec![false; ndofs];
        for &d in &self.element_dofs {
            referenced[d as usize] = true;
        }
        for (d, used) in referenced.iter().enumerate() {
            if !used {
                fix(d, 0.0, &mut classes)?;
            }
        }
        if model.formulation() == Formulation::Axisymmetric {
            // A_phi vanishes on the axis.
            let tol = 1e-12 * mesh_extent(mesh);
            for d in 0..ndofs {
                if self.dof_points[d][0].abs() <= tol {
                    fix(d, 0.0, &mut classes)?;
                }
            }
        }
        // Number the free classes in node order (the mesher's renumbering gives locality).
        let mut root_eq = vec![FIXED; ndofs];
        let mut neq = 0u32;
        for d in 0..ndofs {
            let (r, s) = classes.find(d);
            let fixed = if classes.zero[r] {
                Some(root_value[r].unwrap_or(0.0))
            } else {
                root_value[r]
            };
            match fixed {
                Some(v) => {
                    self.dof_eq[d] = FIXED;
                    self.fixed_values[d] = s * v;
                }
                None => {
                    if root_eq[r] == FIXED {
                        root_eq[r] = neq;
                        neq += 1;
                    }
                    self.dof_eq[d] = root_eq[r];
                    self.dof_sign[d] = s;
                }
            }
        }
        self.neq = neq as usize;
        Ok(())
    }

    /// Errors if some connected part of the model has no fixed node (singular system).
    pub fn check_floating(&self, model: &Model) -> Result<(), FemError> {
        let nt = self.element_dofs.len() / self.nloc;
        // Union-find over equations; a component is anchored if one of its triangles has a
        // fixed node.
        let mut parent: Vec<u32> = (0..self.neq as u32).collect();
        fn root(parent: &mut [u32], mut i: u32) -> u32 {
            while parent[i as usize] != i {
                let p = parent[parent[i as usize] as usize];
                parent[i as usize] = p;
                i = p;
            }
            i
        }
        let mut anchored = vec![false; self.neq];
        let mut pending_anchor = Vec::new();
        for t in 0..nt {
            let dofs = self.triangle_dofs(t);
            let mut first: Option<u32> = None;
            let mut has_fixed = false;
            for &d in dofs {
                let e = self.dof_eq[d as usize];
                if e == FIXED {
                    has_fixed = true;
                    continue;
                }
                let re = root(&mut parent, e);
                match first {
                    None => first = Some(re),
                    Some(f) => {
                        let rf = root(&mut parent, f);
                        if rf != re {
                            parent[re as usize] = rf;
                        }
                    }
                }
            }
            if has_fixed {
                if let Some(f) = first {
                    pending_anchor.push(f);
                }
            }
        }
        for f in pending_anchor {
            let r = root(&mut parent, f);
            anchored[r as usize] = true;
        }
        let mut floating_regions = vec![false; model.mesh().regions().len()];
        let mut any = false;
        for t in 0..nt {
            for &d in self.triangle_dofs(t) {
                let e = self.dof_eq[d as usize];
                if e != FIXED && !anchored[root(&mut parent, e) as usize] {
                    floating_regions[model.mesh().triangle_regions()[t].index()] = true;
                    any = true;
                }
            }
        }
        if any {
            return Err(FemError::FloatingRegions {
                regions: floating_regions
                    .iter()
                    .enumerate()
                    .filter(|(_, f)| **f)
                    .map(|(i, _)| model.mesh().regions()[i].name.clone())
                    .collect(),
            });
        }
        Ok(())
    }
}

/// Union-find where each node carries a sign relative to its parent: x_d = sign * x_parent.
struct SignedUnionFind {
    parent: Vec<u32>,
    sign: Vec<f64>,
    /// True for roots of classes that link a node to minus itself (value forced to 0).
    zero: Vec<bool>,
}

impl SignedUnionFind {
    fn new(n: usize) -> Self {
        Self {
            parent: (0..n as u32).collect(),
            sign: vec![1.0; n],
            zero: vec![false; n],
        }
    }

    /// The root of `d` and the sign s with x_d = s x_root.
    fn find(&mut self, d: usize) -> (usize, f64) {
        let mut s = 1.0;
        let mut i = d;
        while self.parent[i] as usize != i {
            s *= self.sign[i];
            i = self.parent[i] as usize;
        }
        let root = i;
        // Path compression with sign bookkeeping.
        let mut i = d;
        let mut si = s;
        while self.parent[i] as usize != root && self.parent[i] as usize != i {
            let next = self.parent[i] as usize;
            let snext = si * self.sign[i];
            self.parent[i] = root as u32;
            self.sign[i] = si;
            i = next;
            si = snext;
        }
        (root, s)
    }

    /// Records x_b = sign * x_a.
    fn link(&mut self, a: usize, b: usize, sign: f64) {
        let (ra, sa) = self.find(a);
        let (rb, sb) = self.find(b);
        // sb x_rb = sign sa x_ra  =>  x_rb = (sign sa sb) x_ra.
        let rel = sign * sa * sb;
        if ra == rb {
            if rel < 0.0 {
                self.zero[ra] = true;
            }
            return;
        }
        self.parent[rb] = ra as u32;
        self.sign[rb] = rel;
        let z = self.zero[rb];
        self.zero[ra] |= z;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn signed_union_find_tracks_parity_and_contradictions() {
        let mut u = SignedUnionFind::new(5);
        u.link(0, 1, -1.0);
        u.link(1, 2, -1.0);
        assert_eq!(u.find(2).1 * u.find(0).1, 1.0);
        assert_eq!(u.find(1).1 * u.find(0).1, -1.0);
        u.link(3, 4, 1.0);
        u.link(4, 3, -1.0);
        let (r3, r0) = (u.find(3).0, u.find(0).0);
        assert!(u.zero[r3]);
        assert!(!u.zero[r0]);
    }
}
