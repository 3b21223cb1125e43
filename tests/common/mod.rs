//! Shared helpers of the validation suite: closed-form reference solutions (each with its
//! source), Gauss-Legendre quadrature, and structured mesh builders for the test geometries.
//!
//! The reference functions are written from the formulas in the cited texts and checked in
//! `tests/reference_functions.rs` against tabulated values and against each other
//! (closed form versus quadrature), so that a solver test compares against something that was
//! itself tested.
#![allow(dead_code)]

pub mod meshes;

use std::f64::consts::PI;

/// Vacuum permeability (H/m): the pre-2019 exact value 4 pi 1e-7, as in check-values.md.
pub const MU_0: f64 = 4.0e-7 * PI;

// ---------------------------------------------------------------------------------------------
// Quadrature
// ---------------------------------------------------------------------------------------------

/// Gauss-Legendre nodes and weights of order `n` on [-1, 1], by Newton's method on the
/// three-term recurrence of the Legendre polynomials (Abramowitz & Stegun 25.4.29 and 22.7.10).
pub fn gauss_legendre(n: usize) -> (Vec<f64>, Vec<f64>) {
    assert!(n >= 1);
    let mut x = vec![0.0; n];
    let mut w = vec![0.0; n];
    for i in 0..n.div_ceil(2) {
        // Tricomi's initial guess for the i-th root (largest first).
        let mut z = (PI * (i as f64 + 0.75) / (n as f64 + 0.5)).cos();
        let mut dp = 0.0;
        for _ in 0..100 {
            let (mut p0, mut p1) = (1.0, z);
            for k in 2..=n {
                let p2 = ((2 * k - 1) as f64 * z * p1 - (k - 1) as f64 * p0) / k as f64;
                p0 = p1;
                p1 = p2;
            }
            let pn = if n == 1 { z } else { p1 };
            let pm1 = if n == 1 { 1.0 } else { p0 };
            dp = n as f64 * (z * pn - pm1) / (z * z - 1.0);
            let dz = pn / dp;
            z -= dz;
            if dz.abs() < 1e-15 {
                break;
            }
        }
        x[i] = -z;
        x[n - 1 - i] = z;
        let wi = 2.0 / ((1.0 - z * z) * dp * dp);
        w[i] = wi;
        w[n - 1 - i] = wi;
    }
    (x, w)
}

/// Composite Gauss-Legendre rule: `panels` equal panels of order `order` on [a, b].
pub fn integrate(f: impl Fn(f64) -> f64, a: f64, b: f64, panels: usize, order: usize) -> f64 {
    let (x, w) = gauss_legendre(order);
    let h = (b - a) / panels as f64;
    let mut s = 0.0;
    for p in 0..panels {
        let lo = a + p as f64 * h;
        for (xi, wi) in x.iter().zip(&w) {
            s += wi * f(lo + 0.5 * h * (xi + 1.0));
        }
    }
    0.5 * h * s
}

// ---------------------------------------------------------------------------------------------
// Complete elliptic integrals
// ---------------------------------------------------------------------------------------------

/// Complete elliptic integrals of the first and second kind, K(m) and E(m), with parameter
/// m = k^2 in [0, 1), by the arithmetic-geometric mean (Abramowitz & Stegun 17.6.1-17.6.4):
/// K = pi / (2 a_N); E = K (1 - sum_{n>=0} 2^(n-1) c_n^2) with c_0^2 = m.
pub fn ellip_ke(m: f64) -> (f64, f64) {
    assert!((0.0..1.0).contains(&m), "parameter m = {m} outside [0, 1)");
    let mut a = 1.0;
    let mut b = (1.0 - m).sqrt();
    let mut sum = 0.5 * m; // 2^(-1) c_0^2
    let mut pow = 0.5;
    for _ in 0..60 {
        let c = 0.5 * (a - b);
        let an = 0.5 * (a + b);
        let bn = (a * b).sqrt();
        pow *= 2.0;
        sum += pow * c * c;
        a = an;
        b = bn;
        if c.abs() < 1e-17 * a {
            break;
        }
    }
    let k = PI / (2.0 * a);
    (k, k * (1.0 - sum))
}

// ---------------------------------------------------------------------------------------------
// Axisymmetric closed forms
// ---------------------------------------------------------------------------------------------

/// Flux density (Br, Bz) in T of a circular filament loop of radius `a` (m) centred on the
/// axis at z = 0, carrying `current` (A), at (r, z) (m). Smythe, Static and Dynamic
/// Electricity (1950), sec. 7.10; the same form in Simpson et al., NASA/TM-2001-210969:
/// Bz = mu0 I / (2 pi s) [K + (a^2 - r^2 - z^2)/((a - r)^2 + z^2) E],
/// Br = mu0 I z / (2 pi r s) [-K + (a^2 + r^2 + z^2)/((a - r)^2 + z^2) E],
/// s = sqrt((a + r)^2 + z^2), m = k^2 = 4 a r / s^2. On the axis the Biot-Savart result
/// Bz = mu0 I a^2 / (2 (a^2 + z^2)^(3/2)) is used.
pub fn loop_field(a: f64, current: f64, r: f64, z: f64) -> (f64, f64) {
    if r < 1e-12 * a {
        return (
            0.0,
            MU_0 * current * a * a / (2.0 * (a * a + z * z).powf(1.5)),
        );
    }
    let s2 = (a + r).powi(2) + z * z;
    let s = s2.sqrt();
    let m = 4.0 * a * r / s2;
    let (k, e) = ellip_ke(m);
    let d2 = (a - r).powi(2) + z * z;
    let bz = MU_0 * current / (2.0 * PI * s) * (k + (a * a - r * r - z * z) / d2 * e);
    let br = MU_0 * current * z / (2.0 * PI * r * s) * (-k + (a * a + r * r + z * z) / d2 * e);
    (br, bz)
}

/// Azimuthal vector potential A_phi (Wb/m) of the same filament loop at (r, z):
/// A_phi = mu0 I / (pi k) sqrt(a / r) [(1 - k^2/2) K - E] (Smythe 1950, sec. 7.10; Jackson,
/// Classical Electrodynamics, 3rd ed., eq. 5.37). Zero on the axis.
pub fn loop_potential(a: f64, current: f64, r: f64, z: f64) -> f64 {
    if r <= 0.0 {
        return 0.0;
    }
    let m = 4.0 * a * r / ((a + r).powi(2) + z * z);
    let k = m.sqrt();
    let (kk, ee) = ellip_ke(m);
    MU_0 * current / (PI * k) * (a / r).sqrt() * ((1.0 - 0.5 * m) * kk - ee)
}

/// Mutual inductance (H) of two coaxial filament loops of radii `a`, `b` (m) a distance `d`
/// (m) apart, Maxwell's formula: M = mu0 sqrt(a b) [(2/k - k) K - (2/k) E],
/// k^2 = 4 a b / ((a + b)^2 + d^2) (Maxwell, Treatise, vol. 2, art. 701; Smythe 1950, 8.09).
pub fn loop_mutual_inductance(a: f64, b: f64, d: f64) -> f64 {
    let m = 4.0 * a * b / ((a + b).powi(2) + d * d);
    let k = m.sqrt();
    let (kk, ee) = ellip_ke(m);
    MU_0 * (a * b).sqrt() * ((2.0 / k - k) * kk - 2.0 / k * ee)
}

/// Axial force (N) on a filament loop of radius `b` at height z from a coaxial loop of radius
/// `a` at height 0, currents i1, i2 (A) in the same sense; positive = repulsion (along +z on
/// the loop at +z). F = -mu0 i1 i2 z / sqrt((a+b)^2 + z^2) [-K + (a^2+b^2+z^2)/((a-b)^2+z^2) E]
/// (the Lorentz force i2 * 2 pi b * Br of [`loop_field`]; equal to i1 i2 dM/dz).
pub fn loop_pair_force(a: f64, b: f64, z: f64, i1: f64, i2: f64) -> f64 {
    let (br, _) = loop_field(a, i1, b, z);
    // Force on loop 2: dF = I2 dl x B; dl along phi, B_r component gives F_z = -I2 B_r 2 pi b.
    -i2 * br * 2.0 * PI * b
}

/// Axial force (N) between two coaxial rings of rectangular cross-section carrying uniform
/// azimuthal current densities j1, j2 (A/m^2): ring 1 is r1 in [ra1, rb1], z in [za1, zb1],
/// ring 2 likewise. Quadrature of the filament force [`loop_pair_force`] over both cross-
/// sections (the method of Babic & Akyel and of Ravaud et al., PIER 102, 2010), `n` Gauss
/// points per direction. Positive = ring 2 pushed towards +z.
#[allow(clippy::too_many_arguments)]
pub fn ring_pair_force(ring1: [f64; 4], j1: f64, ring2: [f64; 4], j2: f64, n: usize) -> f64 {
    let (x, w) = gauss_legendre(n);
    let map = |lo: f64, hi: f64, xi: f64| lo + 0.5 * (hi - lo) * (xi + 1.0);
    let [ra1, rb1, za1, zb1] = ring1;
    let [ra2, rb2, za2, zb2] = ring2;
    let mut s = 0.0;
    for (xa, wa) in x.iter().zip(&w) {
        let r1 = map(ra1, rb1, *xa);
        for (xb, wb) in x.iter().zip(&w) {
            let z1 = map(za1, zb1, *xb);
            for (xc, wc) in x.iter().zip(&w) {
                let r2 = map(ra2, rb2, *xc);
                for (xd, wd) in x.iter().zip(&w) {
                    let z2 = map(za2, zb2, *xd);
                    s += wa * wb * wc * wd * loop_pair_force(r1, r2, z2 - z1, 1.0, 1.0);
                }
            }
        }
    }
    let jac = (rb1 - ra1) * (zb1 - za1) * (rb2 - ra2) * (zb2 - za2) / 16.0;
    s * jac * j1 * j2
}

/// Field (Br, Bz) in T of a coil of rectangular cross-section r in [r0, r1], z in [z0, z1]
/// carrying a uniform azimuthal current density `j` (A/m^2), at (r, z): quadrature of
/// [`loop_field`] over the cross-section (`n` Gauss points per direction). Valid outside the
/// coil's cross-section.
pub fn thick_coil_field(coil: [f64; 4], j: f64, r: f64, z: f64, n: usize) -> (f64, f64) {
    let (x, w) = gauss_legendre(n);
    let [r0, r1, z0, z1] = coil;
    let (mut br, mut bz) = (0.0, 0.0);
    for (xa, wa) in x.iter().zip(&w) {
        let rc = r0 + 0.5 * (r1 - r0) * (xa + 1.0);
        for (xb, wb) in x.iter().zip(&w) {
            let zc = z0 + 0.5 * (z1 - z0) * (xb + 1.0);
            let (a, b) = loop_field(rc, 1.0, r, z - zc);
            br += wa * wb * a;
            bz += wa * wb * b;
        }
    }
    let jac = 0.25 * (r1 - r0) * (z1 - z0) * j;
    (br * jac, bz * jac)
}

/// On-axis field (T) of a finite thin solenoid of length `len` (m) and radius `radius` (m),
/// centred at z = 0, with `n_per_m` turns per metre carrying `current` (A):
/// B = (mu0 n I / 2) [(z + L/2)/sqrt((z + L/2)^2 + R^2) - (z - L/2)/sqrt((z - L/2)^2 + R^2)]
/// (integration of the on-axis loop field; e.g. Griffiths, Introduction to Electrodynamics,
/// 4th ed., problem 5.11; check-values item 6).
pub fn solenoid_axis_field(n_per_m: f64, current: f64, len: f64, radius: f64, z: f64) -> f64 {
    let zp = z + 0.5 * len;
    let zm = z - 0.5 * len;
    0.5 * MU_0
        * n_per_m
        * current
        * (zp / (zp * zp + radius * radius).sqrt() - zm / (zm * zm + radius * radius).sqrt())
}

// ---------------------------------------------------------------------------------------------
// Planar closed forms
// ---------------------------------------------------------------------------------------------

/// Inductance per metre (H/m) of a coaxial cable with solid inner conductor of radius a and a
/// return conductor b < r < c, uniform current densities, computed from the stored energy:
/// L' = (mu0 / 2 pi) [1/4 + ln(b/a) + c^4 ln(c/b)/(c^2 - b^2)^2 - (3 c^2 - b^2)/(4 (c^2 - b^2))]
/// (Cheng, Field and Wave Electromagnetics, 2nd ed., sec. 6-12 / problem P.6-37; check-values
/// item 2).
pub fn coax_inductance(a: f64, b: f64, c: f64) -> f64 {
    let (b2, c2) = (b * b, c * c);
    MU_0 / (2.0 * PI)
        * (0.25 + (b / a).ln() + c2 * c2 * (c / b).ln() / (c2 - b2).powi(2)
            - (3.0 * c2 - b2) / (4.0 * (c2 - b2)))
}

/// Azimuthal H (A/m) at radius r in the same coaxial cable carrying `current` (A) from
/// Ampere's law with the enclosed current: I r^2/a^2 inside, I between, I (c^2 - r^2)/(c^2 - b^2)
/// in the return conductor, 0 outside; divided by 2 pi r.
pub fn coax_h(a: f64, b: f64, c: f64, current: f64, r: f64) -> f64 {
    let enclosed = if r < a {
        current * r * r / (a * a)
    } else if r < b {
        current
    } else if r < c {
        current * (c * c - r * r) / (c * c - b * b)
    } else {
        0.0
    };
    enclosed / (2.0 * PI * r)
}

/// Inductance of a toroid of rectangular cross-section (H): L = mu0 N^2 h ln(b/a) / (2 pi),
/// N turns, height h, inner radius a, outer radius b (m) (Cheng, Field and Wave
/// Electromagnetics, 2nd ed., example 6-20; check-values item 8).
pub fn toroid_inductance(turns: f64, h: f64, a: f64, b: f64) -> f64 {
    MU_0 * turns * turns * h * (b / a).ln() / (2.0 * PI)
}

/// The 2D permeable cylinder (radius a, relative permeability mu_r) in a uniform field B0
/// along +x: the exact planar potential, A_z = B0 y (1 + C a^2/r^2) outside with
/// C = (mu_r - 1)/(mu_r + 1), and A_z = B0 y 2 mu_r/(mu_r + 1) inside (separation of variables
/// in polar coordinates; the cylindrical analogue of Jackson, Classical Electrodynamics,
/// 3rd ed., sec. 5.12). B = (dA/dy, -dA/dx).
pub fn cylinder_potential(a: f64, mu_r: f64, b0: f64, x: f64, y: f64) -> f64 {
    let r2 = x * x + y * y;
    let c = (mu_r - 1.0) / (mu_r + 1.0);
    if r2 < a * a {
        b0 * y * 2.0 * mu_r / (mu_r + 1.0)
    } else {
        b0 * y * (1.0 + c * a * a / r2)
    }
}

/// Field ratio B_in / B0 inside a cylindrical shell a < r < b of relative permeability mu_r in
/// a uniform transverse field: 4 mu_r b^2 / [(mu_r + 1)^2 b^2 - (mu_r - 1)^2 a^2]
/// (check-values item 3; planar analogue of Jackson 3rd ed. sec. 5.12).
pub fn shell_shielding_ratio(mu_r: f64, a: f64, b: f64) -> f64 {
    4.0 * mu_r * b * b / ((mu_r + 1.0).powi(2) * b * b - (mu_r - 1.0).powi(2) * a * a)
}

// ---------------------------------------------------------------------------------------------
// Round conductor inside a nonlinear ring (check-values item 4)
// ---------------------------------------------------------------------------------------------

/// The saturating law of check-values item 4: B = mu0 H + Js H / (H + H0) (T).
#[derive(Clone, Copy, Debug)]
pub struct SaturatingLaw {
    /// Saturation polarisation Js (T).
    pub js: f64,
    /// Knee field H0 (A/m).
    pub h0: f64,
}

impl SaturatingLaw {
    /// B (T) at H (A/m), H >= 0.
    pub fn b(&self, h: f64) -> f64 {
        MU_0 * h + self.js * h / (h + self.h0)
    }

    /// Co-energy density int_0^H B dH' (J/m^3) in closed form:
    /// mu0 H^2/2 + Js (H - H0 ln((H + H0)/H0)).
    pub fn coenergy_density(&self, h: f64) -> f64 {
        0.5 * MU_0 * h * h + self.js * (h - self.h0 * ((h + self.h0) / self.h0).ln())
    }

    /// Energy density int_0^B H dB' = B H - co-energy density (J/m^3) (integration by parts).
    pub fn energy_density(&self, h: f64) -> f64 {
        self.b(h) * h - self.coenergy_density(h)
    }

    /// H (A/m) at B (T) by bisection (the law is strictly increasing).
    pub fn h(&self, b: f64) -> f64 {
        let (mut lo, mut hi) = (0.0, 1.0);
        while self.b(hi) < b {
            hi *= 2.0;
        }
        for _ in 0..200 {
            let mid = 0.5 * (lo + hi);
            if self.b(mid) < b {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        0.5 * (lo + hi)
    }
}

/// Flux per metre (Wb/m) crossing a radial cut a < r < b of the ring around a conductor
/// carrying `current`, closed form of check-values item 4 with c = I/(2 pi):
/// mu0 c ln(b/a) + Js (c/H0) ln[(c + H0 b)/(c + H0 a)].
pub fn ring_flux_closed_form(law: SaturatingLaw, current: f64, a: f64, b: f64) -> f64 {
    let c = current / (2.0 * PI);
    MU_0 * c * (b / a).ln() + law.js * (c / law.h0) * ((c + law.h0 * b) / (c + law.h0 * a)).ln()
}

// ---------------------------------------------------------------------------------------------
// Post-processing helpers written for the tests (independent of coercive-post)
// ---------------------------------------------------------------------------------------------

/// The triangle of `mesh` containing `p` (brute force; tests only).
pub fn locate(mesh: &coercive::mesh::Mesh, p: [f64; 2]) -> coercive::mesh::TriangleId {
    let mut best = (0usize, f64::NEG_INFINITY);
    for (t, tri) in mesh.triangles().iter().enumerate() {
        let [a, b, c] = tri.map(|v| mesh.vertex(v));
        let d = (b.x - a.x) * (c.y - a.y) - (c.x - a.x) * (b.y - a.y);
        let l1 = ((b.x - p[0]) * (c.y - p[1]) - (c.x - p[0]) * (b.y - p[1])) / d;
        let l2 = ((c.x - p[0]) * (a.y - p[1]) - (a.x - p[0]) * (c.y - p[1])) / d;
        let l3 = 1.0 - l1 - l2;
        let m = l1.min(l2).min(l3);
        if m > best.1 {
            best = (t, m);
        }
    }
    assert!(
        best.1 > -1e-9,
        "point ({}, {}) m is outside the mesh",
        p[0],
        p[1]
    );
    coercive::mesh::TriangleId(best.0 as u32)
}

/// B (T) of a solution at point `p` (m).
pub fn b_at(sol: &coercive::fem::Solution, p: [f64; 2]) -> [f64; 2] {
    let t = locate(sol.model().mesh(), p);
    sol.flux_density_at(t, p)
        .expect("point inside its triangle")
}

/// The potential (A_z planar, Wb/m) of a solution at point `p` (m).
pub fn a_at(sol: &coercive::fem::Solution, p: [f64; 2]) -> f64 {
    let t = locate(sol.model().mesh(), p);
    sol.potential_at(t, p).expect("point inside its triangle")
}

/// Mean of the nodal potential over a planar region (Wb/m): exact integration of the P1 or
/// P2 interpolant (a P2 triangle's vertex shape functions integrate to 0, its edge functions
/// to area/3).
pub fn region_mean_potential(sol: &coercive::fem::Solution, region: &str) -> f64 {
    let mesh = sol.model().mesh();
    let r = mesh.region_by_name(region).expect("region exists");
    let (mut s, mut area) = (0.0, 0.0);
    for t in 0..mesh.triangles().len() {
        let t = coercive::mesh::TriangleId(t as u32);
        if mesh.triangle_region(t) != r {
            continue;
        }
        let nodes = sol.triangle_nodes(t);
        let a = mesh.triangle_area(t);
        let mean = if nodes.len() == 6 {
            nodes[3..]
                .iter()
                .map(|&n| sol.potential()[n as usize])
                .sum::<f64>()
                / 3.0
        } else {
            nodes
                .iter()
                .map(|&n| sol.potential()[n as usize])
                .sum::<f64>()
                / 3.0
        };
        s += mean * a;
        area += a;
    }
    s / area
}

/// |v| of a plane vector.
pub fn norm(v: [f64; 2]) -> f64 {
    v[0].hypot(v[1])
}
