"""Reference axial force between two coaxial, axially magnetised cylinders, from magpylib.

Two equal cylinders of radius R and height T on the z axis, uniform polarisation J along +z
(recoil permeability 1), the lower one from z = -T - g/2 to -g/2, the upper one from g/2 to
g/2 + T. The force on the upper one is printed for several gaps g.

Method: the upper magnet has uniform magnetisation M = J / mu_0 and relative permeability 1,
so it is exactly a pair of magnetic surface charge discs sigma = +M (top face) and -M (bottom
face). Its force is F_z = (J / mu_0) [integral over the top face of B_z - integral over the
bottom face of B_z], with B from magpylib's closed-form cylinder field (magpylib.getB); by
symmetry each face integral is a radial one, integral of B_z(r) 2 pi r dr, done by composite
Gauss-Legendre on panels graded towards the rim r = R (where the field varies on the scale of
the gap). magpylib.getFT (dipole meshing of the target) is printed as a second cross-check.

Run (outside the repository's build):
    python3 -m venv /work/venv-h9
    /work/venv-h9/bin/pip install magpylib numpy
    /work/venv-h9/bin/python crates/coercive-post/tests/reference/coaxial_cylinders.py
"""

import numpy as np
import magpylib as magpy

R, T, J = 0.010, 0.010, 1.2  # m, m, T
MU0 = 4e-7 * np.pi
GAPS = (0.0005, 0.001, 0.002, 0.005, 0.010)  # m


def gauss(n, a, b):
    x, w = np.polynomial.legendre.leggauss(n)
    return 0.5 * (a + b) + 0.5 * (b - a) * x, 0.5 * (b - a) * w


def radial_nodes(scale):
    """Composite Gauss-Legendre on [0, R], panels graded geometrically towards r = R."""
    edges = [R]
    step = scale / 8
    while edges[-1] - step > 0:
        edges.append(edges[-1] - step)
        step *= 1.4
    edges.append(0.0)
    rs, ws = [], []
    for b, a in zip(edges[:-1], edges[1:]):
        r, w = gauss(12, a, b)
        rs.extend(r)
        ws.extend(w)
    return np.array(rs), np.array(ws)


def face_flux(src, z, scale):
    """Integral of B_z over the disc r < R at height z (Wb)."""
    rs, ws = radial_nodes(scale)
    pts = np.stack([rs, np.zeros_like(rs), np.full_like(rs, z)], axis=1)
    bz = magpy.getB(src, pts)[:, 2]
    return float(np.sum(bz * 2 * np.pi * rs * ws))


def force(gap):
    src = magpy.magnet.Cylinder(dimension=(2 * R, T), polarization=(0, 0, J),
                                position=(0, 0, -gap / 2 - T / 2))
    bottom, top = gap / 2, gap / 2 + T
    f = (J / MU0) * (face_flux(src, top, gap + T) - face_flux(src, bottom, gap))
    tgt = magpy.magnet.Cylinder(dimension=(2 * R, T), polarization=(0, 0, J),
                                position=(0, 0, gap / 2 + T / 2))
    return f, src, tgt


def main():
    print(f"magpylib {magpy.__version__}, numpy {np.__version__}")
    print(f"R = {R} m, T = {T} m, J = {J} T along +z; force on the upper magnet")
    for gap in GAPS:
        f, src, tgt = force(gap)
        # Refinement check of the face quadrature: halve the grading scale.
        f2 = (J / MU0) * (face_flux(src, gap / 2 + T, (gap + T) / 2)
                          - face_flux(src, gap / 2, gap / 2))
        ft, _ = magpy.getFT(src, tgt, meshing=(24, 24, 24))
        print(f"g = {gap * 1e3:5.1f} mm: F_z = {f:.6f} N (finer quadrature {f2:.6f} N); "
              f"getFT (24 x 24 x 24 cells) {ft[2]:.4f} N")


if __name__ == "__main__":
    main()
