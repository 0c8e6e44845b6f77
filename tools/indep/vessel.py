"""Inner-vessel geometry for the independent fleet model (tools/indep).

Volumes come from numerical integration of cross-section areas along a fine grid, tabulated once
per vessel (level -> volume) and interpolated. Nothing here is a closed-form partial-volume formula:

* vertical vessel: the horizontal slice at height z is a disc of radius r(z), area pi r^2; the
  volume below a level is the integral of that area over z (composite 3-point Gauss-Legendre on
  every table interval, summed cumulatively);
* horizontal vessel: the slice across the axis at axial position x is a disc of radius r(x) centred
  on the axis; the wetted part of it is the circular segment below the liquid line, and the volume
  is the integral of that segment area over x (the heads after the substitution s = d (1 - t^2),
  which removes the square-root behaviour at the head's tip).

A head is described by its meridian: r(s), the radius of the head at axial distance s from the
tangent line (s = 0 at the shell, s = depth at the crown).
"""

from __future__ import annotations

import math

import numpy as np

HEAD_KINDS = ("flat", "hemispherical", "ellipsoidal", "torispherical")

# 3-point Gauss-Legendre nodes and weights on [-1, 1]
_GL3_X = np.array([-math.sqrt(0.6), 0.0, math.sqrt(0.6)])
_GL3_W = np.array([5.0 / 9.0, 8.0 / 9.0, 5.0 / 9.0])


class Head:
    """Meridian of one head for a shell of radius R (= D/2)."""

    def __init__(self, kind: str, radius: float):
        if kind not in HEAD_KINDS:
            raise ValueError(f"unknown head kind {kind!r}")
        self.kind = kind
        self.R = radius
        D = 2.0 * radius
        if kind == "flat":
            self.depth = 0.0
        elif kind == "hemispherical":
            self.depth = radius
        elif kind == "ellipsoidal":
            self.depth = D / 4.0  # 2:1 semi-ellipse
        else:
            # flanged and dished: crown radius D, knuckle radius 0.06 D.
            self.rc = D
            self.rk = 0.06 * D
            # crown centre on the axis, behind the tangent line at s = sc (< 0); knuckle centre at
            # (s = 0, r = R - rk); the two circles are tangent, so the centres are rc - rk apart.
            self.sc = -math.sqrt((self.rc - self.rk) ** 2 - (radius - self.rk) ** 2)
            self.depth = self.sc + self.rc
            # where knuckle meets crown: on the line through both centres, rk beyond the knuckle centre
            dist = self.rc - self.rk
            ux = (0.0 - self.sc) / dist
            self.s_join = self.sc + self.rc * ux

    def r(self, s: np.ndarray) -> np.ndarray:
        """Radius of the head at axial distance s (0..depth) from the tangent line."""
        s = np.clip(np.asarray(s, dtype=float), 0.0, self.depth)
        R = self.R
        if self.kind == "flat":
            return np.full_like(s, R)
        if self.kind == "hemispherical":
            return np.sqrt(np.maximum(R * R - s * s, 0.0))
        if self.kind == "ellipsoidal":
            a = self.depth
            return R * np.sqrt(np.maximum(1.0 - (s / a) ** 2, 0.0))
        knuckle = (R - self.rk) + np.sqrt(np.maximum(self.rk**2 - s * s, 0.0))
        crown = np.sqrt(np.maximum(self.rc**2 - (s - self.sc) ** 2, 0.0))
        return np.where(s <= self.s_join, knuckle, crown)

    def surface_area(self, n: int = 20000) -> float:
        """Area of the head's surface (a flat head: the disc), from a fine polyline of the meridian."""
        if self.kind == "flat":
            return math.pi * self.R**2
        # parametrise by t in [0, 1] with s = depth (1 - (1 - t)^2) so the polyline is fine at the tip
        t = np.linspace(0.0, 1.0, n + 1)
        s = self.depth * (1.0 - (1.0 - t) ** 2)
        r = self.r(s)
        ds = np.diff(s)
        dr = np.diff(r)
        seg = np.sqrt(ds * ds + dr * dr)
        rm = 0.5 * (r[1:] + r[:-1])
        return float(np.sum(2.0 * math.pi * rm * seg))


def _segment_area(rad: np.ndarray, y: np.ndarray) -> np.ndarray:
    """Area of the part of a disc of radius rad lying below the line at height y above its centre."""
    rad = np.asarray(rad, dtype=float)
    y = np.asarray(y, dtype=float)
    safe = np.where(rad > 0.0, rad, 1.0)
    q = np.clip(y / safe, -1.0, 1.0)
    # angle-based: the wetted part of the disc subtends 2*theta seen from the centre, theta = acos(-q)
    theta = np.arccos(-q)
    area = safe * safe * (theta - np.sin(theta) * np.cos(theta))
    return np.where(rad > 0.0, area, 0.0)


class Vessel:
    """A vertical or horizontal cylinder with two alike heads."""

    def __init__(self, orientation: str, diameter: float, length: float, heads: str,
                 n_levels: int = 4001, n_panels: int = 400):
        if orientation not in ("vertical", "horizontal"):
            raise ValueError(f"unknown orientation {orientation!r}")
        self.orientation = orientation
        self.D = diameter
        self.R = diameter / 2.0
        self.L = length
        self.head = Head(heads, self.R)
        self.heads = heads
        if orientation == "vertical":
            self.height = length + 2.0 * self.head.depth
        else:
            self.height = diameter
        self.z = np.linspace(0.0, self.height, n_levels)
        if orientation == "vertical":
            self.v = self._table_vertical()
        else:
            self.v = self._table_horizontal(n_panels)
        self.volume_total = float(self.v[-1])
        self.area_surface = (2.0 * math.pi * self.R * length + 2.0 * self.head.surface_area())

    # vertical: integrate the disc area pi r(z)^2 over height
    def _radius_vertical(self, z: np.ndarray) -> np.ndarray:
        d = self.head.depth
        z = np.asarray(z, dtype=float)
        r = np.full_like(z, self.R)
        if d > 0.0:
            low = z < d
            r = np.where(low, self.head.r(d - z), r)
            high = z > d + self.L
            r = np.where(high, self.head.r(z - d - self.L), r)
        return r

    def _table_vertical(self) -> np.ndarray:
        z = self.z
        a, b = z[:-1], z[1:]
        mid = 0.5 * (a + b)
        half = 0.5 * (b - a)
        nodes = mid[:, None] + half[:, None] * _GL3_X[None, :]
        area = math.pi * self._radius_vertical(nodes) ** 2
        pieces = half * (area @ _GL3_W)
        return np.concatenate(([0.0], np.cumsum(pieces)))

    # horizontal: integrate the wetted segment of each circular slice along the axis
    def _table_horizontal(self, n_panels: int) -> np.ndarray:
        y = self.z - self.R  # liquid line relative to the axis
        shell = self.L * _segment_area(np.full_like(y, self.R), y)
        d = self.head.depth
        if d <= 0.0:
            return shell
        # s = d (1 - t^2), ds = 2 d t dt, t in [0, 1]; composite 3-point Gauss on n_panels panels
        edges = np.linspace(0.0, 1.0, n_panels + 1)
        mid = 0.5 * (edges[:-1] + edges[1:])
        half = 0.5 * (edges[1:] - edges[:-1])
        t = (mid[:, None] + half[:, None] * _GL3_X[None, :]).ravel()
        w = (half[:, None] * _GL3_W[None, :]).ravel()
        s = d * (1.0 - t * t)
        rad = self.head.r(s)
        jac = 2.0 * d * t * w
        heads = np.empty_like(y)
        chunk = 256
        for i in range(0, len(y), chunk):
            seg = _segment_area(rad[None, :], y[i:i + chunk, None])
            heads[i:i + chunk] = seg @ jac
        return shell + 2.0 * heads

    def volume(self, level: float) -> float:
        """Liquid volume (m^3) below a level (m above the vessel's lowest inner point)."""
        return float(np.interp(level, self.z, self.v))

    def level(self, volume: float) -> float:
        """Level (m) holding a volume (m^3)."""
        return float(np.interp(volume, self.v, self.z))


def _selftest() -> None:
    """Compare whole-vessel volumes with the textbook volumes of the solids (sanity only)."""
    R = 1.2
    L = 5.0
    cases = {
        "flat": math.pi * R * R * L,
        "hemispherical": math.pi * R * R * L + 4.0 / 3.0 * math.pi * R**3,
        "ellipsoidal": math.pi * R * R * L + 2.0 * (2.0 / 3.0) * math.pi * R * R * (R / 2.0),
    }
    for orient in ("vertical", "horizontal"):
        for kind, want in cases.items():
            v = Vessel(orient, 2 * R, L, kind)
            err = v.volume_total / want - 1.0
            print(f"{orient:10s} {kind:14s} V={v.volume_total:.6f} m3 rel.err {err:+.2e}"
                  f"  half-level volume share {v.volume(v.height / 2) / v.volume_total:.6f}")
            assert abs(err) < 2e-6, err
        vt = Vessel(orient, 2 * R, L, "torispherical")
        print(f"{orient:10s} torispherical  V={vt.volume_total:.6f} m3 head depth {vt.head.depth:.5f} m "
              f"({vt.head.depth / (2 * R):.4f} D), surface {vt.area_surface:.3f} m2")
    # the two orientations of one vessel hold the same volume
    for kind in ("hemispherical", "ellipsoidal", "torispherical"):
        a = Vessel("vertical", 2.0, 4.0, kind).volume_total
        b = Vessel("horizontal", 2.0, 4.0, kind).volume_total
        print(f"{kind:14s} vertical vs horizontal {a:.7f} {b:.7f} rel {b / a - 1:+.1e}")
        assert abs(b / a - 1.0) < 2e-6


if __name__ == "__main__":
    _selftest()
