#!/usr/bin/env python3
"""Writes paths/cells/rib_gusset.stl: the invented triangular gusset bracing the rib of the
demo cell (paths/cells/rib_cell.yaml), as a closed binary STL in millimetres, in the
gusset's own frame.

The gusset is a right-triangle plate: legs of 50 mm along -x (on the plate) and +z (up the
rib), 10 mm thick along y. Run from the repository root:
    python3 tools/cell-demo/gusset_stl.py
"""
import struct

# The triangle in the x-z plane, counter-clockwise seen from +y, and the thickness.
TRIANGLE = [(0.0, 0.0), (0.0, 50.0), (-50.0, 0.0)]
HALF_THICKNESS = 5.0


def vertex(p, y):
    return (p[0], y, p[1])


def facets():
    lo = [vertex(p, -HALF_THICKNESS) for p in TRIANGLE]
    hi = [vertex(p, HALF_THICKNESS) for p in TRIANGLE]
    # The two triangle faces, outward: -y face reversed, +y face as is.
    yield lo[0], lo[2], lo[1]
    yield hi[0], hi[1], hi[2]
    # The three rectangular sides, two triangles each.
    for i in range(3):
        j = (i + 1) % 3
        yield lo[i], lo[j], hi[j]
        yield lo[i], hi[j], hi[i]


def normal(a, b, c):
    u = [b[k] - a[k] for k in range(3)]
    v = [c[k] - a[k] for k in range(3)]
    n = [u[1] * v[2] - u[2] * v[1], u[2] * v[0] - u[0] * v[2], u[0] * v[1] - u[1] * v[0]]
    length = sum(x * x for x in n) ** 0.5 or 1.0
    return [x / length for x in n]


def main():
    tris = list(facets())
    out = bytearray(b"armpath demo gusset (invented), mm".ljust(80, b" "))
    out += struct.pack("<I", len(tris))
    for a, b, c in tris:
        out += struct.pack("<3f", *normal(a, b, c))
        for p in (a, b, c):
            out += struct.pack("<3f", *p)
        out += b"\0\0"
    with open("paths/cells/rib_gusset.stl", "wb") as f:
        f.write(out)
    print(f"paths/cells/rib_gusset.stl: {len(tris)} triangles")


if __name__ == "__main__":
    main()
