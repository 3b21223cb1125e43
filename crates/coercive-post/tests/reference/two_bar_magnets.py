"""Reference force per length between two long bar magnets side by side, from magpylib.

Two cuboid magnets of cross-section W x H (x by y), length L along z, polarisation
Br along +y, side by side along x with a gap S between them. As L grows, the force per
unit length F/L tends to the planar (2D) value; this script prints F/L for several L and a
Richardson extrapolation in 1/L.

Method: the target magnet has uniform magnetisation M = Br/mu_0 and relative permeability 1,
so it is exactly a pair of magnetic surface charge sheets sigma = +-M on its faces normal to y
(no volume charge). The force on it is the integral of sigma * B_source over those faces,
with B_source from magpylib's closed-form cuboid field (magpylib.getB). magpylib.getFT
(dipole meshing of the target) is printed as a cross-check at the shortest length.

Run (outside the repository's build):
    python3 -m venv /work/pyvenv
    /work/pyvenv/bin/pip install magpylib numpy
    /work/pyvenv/bin/python crates/coercive-post/tests/reference/two_bar_magnets.py
"""

import numpy as np
import magpylib as magpy

W, H, S, BR = 0.010, 0.020, 0.002, 1.2  # m, m, m, T
MU0 = 4e-7 * np.pi


def gauss(n, a, b):
    x, w = np.polynomial.legendre.leggauss(n)
    return 0.5 * (a + b) + 0.5 * (b - a) * x, 0.5 * (b - a) * w


def z_nodes(length):
    """Composite Gauss-Legendre along z, panels graded towards both ends."""
    half = 0.5 * length
    # Panel edges: geometric from the end (step W/8) towards the middle.
    edges = [0.0]
    step = W / 8
    while edges[-1] + step < half:
        edges.append(edges[-1] + step)
        step *= 1.5
    edges.append(half)
    zs, ws = [], []
    for a, b in zip(edges[:-1], edges[1:]):
        z, w = gauss(8, a, b)
        zs.extend(half - z)  # from the end inwards on the +z half
        ws.extend(w)
    zs, ws = np.array(zs), np.array(ws)
    return np.concatenate([zs, -zs]), np.concatenate([ws, ws])


def force_per_length(length):
    src = magpy.magnet.Cuboid(dimension=(W, H, length), polarization=(0, BR, 0),
                              position=(-(S + W) / 2, 0, 0))
    x0 = S / 2
    xs, wx = gauss(24, x0, x0 + W)
    zs, wz = z_nodes(length)
    force = np.zeros(3)
    for y, sign in ((H / 2, 1.0), (-H / 2, -1.0)):
        X, Z = np.meshgrid(xs, zs, indexing="ij")
        pts = np.stack([X.ravel(), np.full(X.size, y), Z.ravel()], axis=1)
        b = magpy.getB(src, pts)
        wgt = (wx[:, None] * wz[None, :]).ravel()
        force += sign * (BR / MU0) * (b * wgt[:, None]).sum(axis=0)
    return force / length, src


def main():
    print(f"W = {W} m, H = {H} m, gap S = {S} m, Br = {BR} T (polarisation along +y)")
    rows = []
    for ratio in (50, 100, 200, 400, 800):
        length = ratio * W
        f, _ = force_per_length(length)
        rows.append((length, f[0]))
        print(f"L = {length:8.3f} m (L/W = {ratio:4d}): F_x/L = {f[0]:.6f} N/m, F_y/L = {f[1]:.2e} N/m")
    (l1, f1), (l2, f2) = rows[-2], rows[-1]
    # F/L = F2D + c/L: eliminate c.
    extrap = (f2 * l2 - f1 * l1) / (l2 - l1)
    print(f"Richardson in 1/L from the last two: F_x/L -> {extrap:.6f} N/m")
    print(f"relative end effect at L/W = 800: {abs(f2 - extrap) / abs(extrap):.2e}")
    # Cross-check with magpylib's own force routine at L/W = 50.
    length = 50 * W
    f, src = force_per_length(length)
    tgt = magpy.magnet.Cuboid(dimension=(W, H, length), polarization=(0, BR, 0),
                              position=((S + W) / 2, 0, 0))
    ft, _ = magpy.getFT(src, tgt, meshing=(8, 16, 400))
    print(f"magpylib.getFT at L/W = 50 (meshing 8 x 16 x 400): F_x/L = {ft[0] / length:.6f} N/m "
          f"(surface-charge integral {f[0]:.6f} N/m)")


if __name__ == "__main__":
    main()
