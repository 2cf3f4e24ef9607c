"""Shading of a roof face's modules: the far horizon, box obstacles near the face and racked rows.

Pure geometry over numpy, with shapely for the polygons. Everything is per module and per bypass-diode substring,
so that the string model (:mod:`core.model.iv`) can tell a shadow on one substring from a shadow on a whole module.

Coordinates: x east, y north, z up (m). A face has tilt ``beta`` and azimuth ``gamma`` (the direction it looks
towards, clockwise from north, 180 = south). In the face's plane ``u`` runs along its horizontal edge (to the right
of someone facing the face) and ``s`` up the slope from the lowest edge. Module positions are numbered row by row,
from the lowest (or front) row, left to right in ``u``.

Sources: the beam is blocked where the sun is below the horizon profile (linear interpolation in azimuth); an
obstacle's shadow is the obstacle's part above the plane projected along the sun's direction onto the plane and
clipped against each cell block's rectangle; a substring is as bright as its most shaded block, because its cells
carry one current (Bishop 1988; the block model after Martínez-Moreno, Muñoz & Lorenzo, Solar Energy Materials &
Solar Cells 94 (2010) 2298-2303). Inter-row shadows come from :func:`pvlib.shading.shaded_fraction1d`. The sky
diffuse is isotropic (Liu & Jordan 1963) and the share of it that reaches the plane past the horizon and the
obstacles is the view-factor integral over the unobstructed sky, as in Quaschning & Hanitsch, "Irradiance
calculation on shaded surfaces", Solar Energy 62 (1998) 369-375 (from memory).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pvlib
import shapely

#: Elevation band (degrees) that Perez's horizon-brightening term comes from (Perez et al. 1990 model it as a
#: band at the horizon about 6.5 degrees high, from memory).
HORIZON_BAND_DEG = 6.5


@dataclass(frozen=True)
class FaceLayout:
    """The modules on a face: rows x columns, their size and orientation, bypass diodes and cell blocks.

    ``length_m``/``width_m`` are the module's long and short sides; ``portrait`` puts the long side up the slope.
    ``blocks`` is the number of cell rows along a substring's long side (a substring of a 60-cell, 3-diode module is
    two cells wide and ten long: 10). ``row_pitch_m``: racked rows (one module high) at this horizontal pitch;
    None = modules flush on one plane, rows stacked up the slope.
    """

    tilt_deg: float
    azimuth_deg: float
    rows: int
    columns: int
    length_m: float
    width_m: float
    portrait: bool = True
    bypass_diodes: int = 3
    blocks: int = 10
    row_pitch_m: float | None = None

    @property
    def module_u_m(self) -> float:
        return self.width_m if self.portrait else self.length_m

    @property
    def module_s_m(self) -> float:
        return self.length_m if self.portrait else self.width_m

    @property
    def n_modules(self) -> int:
        return self.rows * self.columns


def face_vectors(tilt_deg: float, azimuth_deg: float):
    """Unit vectors of a face: ``d`` (horizontal, the way it looks), ``u`` (along its lowest edge), ``w`` (up the
    slope) and ``n`` (its normal, out of the face)."""
    b, g = np.radians(tilt_deg), np.radians(azimuth_deg)
    d = np.array([np.sin(g), np.cos(g), 0.0])  # horizontal, the way the face looks
    u = np.array([np.cos(g), -np.sin(g), 0.0])  # along the lowest edge
    w = np.array([-np.sin(g) * np.cos(b), -np.cos(g) * np.cos(b), np.sin(b)])  # up the slope
    n = np.array([np.sin(b) * np.sin(g), np.sin(b) * np.cos(g), np.cos(b)])  # normal, out of the face
    return d, u, w, n


def sun_vectors(zenith_deg, azimuth_deg) -> np.ndarray:
    """Unit vectors towards the sun (n, 3), x east, y north, z up."""
    z, a = np.radians(np.asarray(zenith_deg, float)), np.radians(np.asarray(azimuth_deg, float))
    return np.stack([np.sin(z) * np.sin(a), np.sin(z) * np.cos(a), np.cos(z)], axis=-1)


def row_origins(layout: FaceLayout) -> np.ndarray:
    """3-D origin (lowest edge, u = 0 at the layout's middle) of each row's plane (rows, 3)."""
    d, _, w, _ = face_vectors(layout.tilt_deg, layout.azimuth_deg)
    r = np.arange(layout.rows, dtype=float)[:, None]
    if layout.row_pitch_m is None:
        return r * layout.module_s_m * w[None, :]  # stacked up the slope on one plane
    return -r * float(layout.row_pitch_m) * d[None, :]  # racks one behind another, all at the same height


def face_centre(layout: FaceLayout) -> np.ndarray:
    """The middle of the module layout (3-D): where obstacles are measured from."""
    _, _, w, _ = face_vectors(layout.tilt_deg, layout.azimuth_deg)
    return row_origins(layout).mean(axis=0) + 0.5 * layout.module_s_m * w


def block_rectangles(layout: FaceLayout) -> np.ndarray:
    """Cell-block rectangles in each row's plane, as (u0, s0, u1, s1) per (module in row, substring, block).

    Returns shape (columns, bypass_diodes, blocks, 4). Portrait: substrings are strips side by side along ``u``,
    each running the module's length up the slope (a shadow on the bottom edge reaches all of them); landscape:
    substrings are bands stacked up the slope (a shadow on the bottom edge reaches the lowest first). Blocks are
    cell rows across a substring's long side.
    """
    mu, ms, nb, nk = layout.module_u_m, layout.module_s_m, layout.bypass_diodes, layout.blocks
    left = (np.arange(layout.columns) - layout.columns / 2.0) * mu
    out = np.zeros((layout.columns, nb, nk, 4))
    for c in range(layout.columns):
        for k in range(nb):
            for j in range(nk):
                if layout.portrait:  # substring = strip along u, blocks stacked along s
                    u0, u1 = left[c] + k * mu / nb, left[c] + (k + 1) * mu / nb
                    s0, s1 = j * ms / nk, (j + 1) * ms / nk
                else:  # substring = band along s, blocks along u
                    u0, u1 = left[c] + j * mu / nk, left[c] + (j + 1) * mu / nk
                    s0, s1 = k * ms / nb, (k + 1) * ms / nb
                out[c, k, j] = (u0, s0, u1, s1)
    return out


# ----------------------------------------------------------------------------------------------- horizon
def horizon_elevation_deg(profile, azimuth_deg) -> np.ndarray:
    """Elevation of the horizon profile at ``azimuth_deg``: linear between (azimuth, elevation) points, periodic
    over 360 degrees; an empty profile is a flat horizon (0)."""
    az = np.asarray(azimuth_deg, float)
    if not profile:
        return np.zeros_like(az)
    pts = np.asarray(sorted(profile), float)
    return np.interp(az % 360.0, pts[:, 0], pts[:, 1], period=360.0)


def beam_visible(zenith_deg, azimuth_deg, profile) -> np.ndarray:
    """True where the sun is above the horizon profile (and above the astronomical horizon)."""
    elev = 90.0 - np.asarray(zenith_deg, float)
    return (elev > 0.0) & (elev > horizon_elevation_deg(profile, azimuth_deg))


# ----------------------------------------------------------------------------------------------- obstacles
def obstacle_corners(centre_xy, obstacle) -> np.ndarray:
    """The 8 corners (8, 3) of an obstacle box: ``distance_m`` from ``centre_xy`` towards ``azimuth_deg``, depth
    along that line, width across it, from the face's lowest edge (z = 0) to ``height_m``."""
    a = np.radians(obstacle.azimuth_deg)
    along = np.array([np.sin(a), np.cos(a)])
    across = np.array([np.cos(a), -np.sin(a)])
    c = np.asarray(centre_xy, float)[:2] + obstacle.distance_m * along
    pts = []
    for z in (0.0, float(obstacle.height_m)):
        for sa in (-0.5, 0.5):
            for sw in (-0.5, 0.5):
                xy = c + sa * obstacle.depth_m * along + sw * obstacle.width_m * across
                pts.append((xy[0], xy[1], z))
    return np.asarray(pts)


_BOX_EDGES = [(i, j) for i in range(8) for j in range(i + 1, 8) if bin(i ^ j).count("1") == 1]


def clip_above_plane(corners: np.ndarray, origin: np.ndarray, normal: np.ndarray) -> np.ndarray:
    """The vertices of a box's part on the front side of a plane: the corners in front plus where the box's edges
    cross the plane (a convex solid stays convex when cut by a plane). Empty (0, 3) when all is behind."""
    dist = (corners - origin) @ normal
    pts = [corners[i] for i in range(8) if dist[i] >= 0.0]
    for i, j in _BOX_EDGES:
        if (dist[i] > 0.0) != (dist[j] > 0.0) and dist[i] != dist[j]:
            t = dist[i] / (dist[i] - dist[j])
            pts.append(corners[i] + t * (corners[j] - corners[i]))
    return np.asarray(pts).reshape(-1, 3)


def obstacle_block_shade(zenith_deg, azimuth_deg, layout: FaceLayout, obstacles) -> np.ndarray:
    """Shaded share (0..1) of every cell block by the obstacles' shadows, per step.

    Returns (steps, modules, bypass_diodes, blocks). Only steps with the sun up, in front of the face and a
    shadow that reaches the layout's bounding box go through shapely.
    """
    n = len(np.asarray(zenith_deg))
    _, u, w, nrm = face_vectors(layout.tilt_deg, layout.azimuth_deg)
    rects = block_rectangles(layout)
    out = np.zeros((n, layout.rows, layout.columns, layout.bypass_diodes, layout.blocks))
    if not obstacles or n == 0:
        return out.reshape(n, layout.n_modules, layout.bypass_diodes, layout.blocks)
    sun = sun_vectors(zenith_deg, azimuth_deg)
    facing = sun @ nrm
    lit = (np.asarray(zenith_deg, float) < 90.0) & (facing > 1e-6)
    centre = face_centre(layout)
    flat = rects.reshape(-1, 4)
    area = (flat[:, 2] - flat[:, 0]) * (flat[:, 3] - flat[:, 1])
    lo, hi = flat[:, :2].min(axis=0), flat[:, 2:].max(axis=0)
    for r, origin in enumerate(row_origins(layout)):
        hulls = []
        for ob in obstacles:
            verts = clip_above_plane(obstacle_corners(centre, ob), origin, nrm)
            if len(verts) < 3:
                continue
            idx = np.flatnonzero(lit)
            rel = verts - origin  # (k, 3)
            t = (rel @ nrm)[None, :] / facing[idx, None]  # (m, k): distance along the ray down to the plane
            proj = rel[None, :, :] - t[..., None] * sun[idx, None, :]  # (m, k, 3) on the plane
            uv = np.stack([proj @ u, proj @ w], axis=-1)
            near = ((uv[..., 0].max(axis=1) > lo[0]) & (uv[..., 0].min(axis=1) < hi[0])
                    & (uv[..., 1].max(axis=1) > lo[1]) & (uv[..., 1].min(axis=1) < hi[1]))
            if not near.any():
                continue
            steps = idx[near]
            hull = shapely.convex_hull(shapely.multipoints(uv[near]))
            hulls.append((steps, hull))
        for steps, hull in hulls:
            # Only pairs whose bounding boxes overlap go to shapely; a block inside the shadow's box may still be
            # partly lit, so the overlap test only prunes.
            bounds = shapely.bounds(hull)  # (m, 4)
            pair = ((bounds[:, None, 0] < flat[None, :, 2]) & (bounds[:, None, 2] > flat[None, :, 0])
                    & (bounds[:, None, 1] < flat[None, :, 3]) & (bounds[:, None, 3] > flat[None, :, 1]))
            cut = np.zeros(pair.shape)
            for ri in np.flatnonzero(pair.any(axis=0)):  # GEOS's rectangle clipper, many shadows at a time
                si = np.flatnonzero(pair[:, ri])
                cut[si, ri] = shapely.area(shapely.clip_by_rect(hull[si], *flat[ri])) / area[ri]
            cut = cut.reshape(len(steps), layout.columns, layout.bypass_diodes, layout.blocks)
            # Several obstacles: the larger shade per block (overlap is not double-counted; a union would be exact).
            out[steps, r] = np.maximum(out[steps, r], np.clip(cut, 0.0, 1.0))
    return out.reshape(n, layout.n_modules, layout.bypass_diodes, layout.blocks)


# ----------------------------------------------------------------------------------------------- racked rows
def row_block_shade(zenith_deg, azimuth_deg, layout: FaceLayout) -> np.ndarray:
    """Shaded share of every cell block by the rack row in front, per step: (steps, modules, diodes, blocks).

    The shadow's height on a row is :func:`pvlib.shading.shaded_fraction1d` of the module's slant side (rows long
    compared with their height; the front row is unshaded). It covers the row's lower part across its whole
    length, so a block's share is the part of its height under the shadow line.
    """
    n = len(np.asarray(zenith_deg))
    out = np.zeros((n, layout.rows, layout.columns, layout.bypass_diodes, layout.blocks))
    if layout.row_pitch_m is None or layout.rows < 2 or n == 0:
        return out.reshape(n, layout.n_modules, layout.bypass_diodes, layout.blocks)
    zen = np.asarray(zenith_deg, float)
    sf = pvlib.shading.shaded_fraction1d(zen, np.asarray(azimuth_deg, float),
                                         axis_azimuth=(layout.azimuth_deg - 90.0) % 360.0,
                                         shaded_row_rotation=layout.tilt_deg, collector_width=layout.module_s_m,
                                         pitch=layout.row_pitch_m)
    shadow_s = np.where(zen < 90.0, np.nan_to_num(np.asarray(sf, float), nan=0.0), 0.0) * layout.module_s_m
    rects = block_rectangles(layout)  # (columns, diodes, blocks, 4)
    s0, s1 = rects[..., 1], rects[..., 3]
    share = np.clip((shadow_s[:, None, None, None] - s0) / (s1 - s0), 0.0, 1.0)
    out[:, 1:] = share[:, None]
    return out.reshape(n, layout.n_modules, layout.bypass_diodes, layout.blocks)


def row_shaded_fraction(zenith_deg, azimuth_deg, layout: FaceLayout) -> np.ndarray:
    """The shaded share of a (non-front) row's slant side, pvlib's 1-D model (for the Martínez check)."""
    zen = np.asarray(zenith_deg, float)
    sf = pvlib.shading.shaded_fraction1d(zen, np.asarray(azimuth_deg, float),
                                         axis_azimuth=(layout.azimuth_deg - 90.0) % 360.0,
                                         shaded_row_rotation=layout.tilt_deg, collector_width=layout.module_s_m,
                                         pitch=layout.row_pitch_m)
    return np.where(zen < 90.0, np.nan_to_num(np.asarray(sf, float), nan=0.0), 0.0)


def substring_beam_factor(block_shade: np.ndarray) -> np.ndarray:
    """Share of the beam a substring can use: its cells carry one current, so it is as bright as its most shaded
    block (steps, modules, diodes)."""
    return 1.0 - np.max(block_shade, axis=-1)


# ----------------------------------------------------------------------------------------------- sky diffuse
def obstacle_elevation_deg(point: np.ndarray, centre_xy, obstacles, azimuths_deg: np.ndarray) -> np.ndarray:
    """Elevation (degrees) of the obstacles' top as seen from ``point`` (3-D) along each azimuth (0 where none);
    the obstacles are placed from ``centre_xy``, the face's centre."""
    out = np.zeros(len(azimuths_deg))
    a = np.radians(azimuths_deg)
    far = 1e4
    rays = shapely.linestrings(np.stack([np.stack([np.full_like(a, point[0]), np.full_like(a, point[1])], -1),
                                         np.stack([point[0] + far * np.sin(a), point[1] + far * np.cos(a)], -1)],
                                        axis=1))
    origin = shapely.points(point[0], point[1])
    for ob in obstacles:
        corners = obstacle_corners(centre_xy, ob)
        foot = shapely.convex_hull(shapely.multipoints(corners[:4, :2]))
        rise = float(ob.height_m) - float(point[2])
        if rise <= 0.0 or shapely.contains(foot, origin):
            continue
        hit = shapely.intersection(rays, foot)
        dist = np.where(shapely.is_empty(hit), np.inf, shapely.distance(origin, hit))
        out = np.maximum(out, np.where(np.isfinite(dist), np.degrees(np.arctan2(rise, dist)), 0.0))
    return out


def sky_view_factors(tilt_deg: float, azimuth_deg: float, obstruction_deg, azimuths_deg) -> dict[str, float]:
    """Share of the isotropic sky diffuse (``sky``) and of the horizon band (``band``) a plane still receives
    past an obstructed horizon, by integrating ``cos(incidence) * cos(elevation)`` over the unobstructed sky
    (isotropic radiance; Quaschning & Hanitsch 1998, from memory). ``obstruction_deg`` is the obstruction's
    elevation at each of the equally spaced ``azimuths_deg``. A flat horizon gives 1 and 1.
    """
    az = np.radians(np.asarray(azimuths_deg, float))[:, None]
    el_deg = np.linspace(0.25, 89.75, 180)[None, :]
    el = np.radians(el_deg)
    b, g = np.radians(tilt_deg), np.radians(azimuth_deg)
    cos_inc = np.clip(np.sin(el) * np.cos(b) + np.cos(el) * np.sin(b) * np.cos(az - g), 0.0, None)
    weight = cos_inc * np.cos(el)
    open_sky = el_deg > np.asarray(obstruction_deg, float)[:, None]
    band = el_deg < HORIZON_BAND_DEG
    total, total_band = weight.sum(), (weight * band).sum()
    return {"sky": float((weight * open_sky).sum() / total) if total > 0 else 1.0,
            "band": float((weight * band * open_sky).sum() / total_band) if total_band > 0 else 1.0}


def face_sky_factors(layout: FaceLayout, horizon, obstacles, step_deg: float = 2.0) -> dict[str, float]:
    """Sky and horizon-band factors at the layout's centre: with the horizon alone (``sky_horizon``,
    ``band_horizon``) and with horizon and obstacles (``sky``, ``band``), so the two losses can be told apart."""
    azimuths = np.arange(0.0, 360.0, step_deg) + step_deg / 2
    hor = horizon_elevation_deg(horizon, azimuths)
    centre = face_centre(layout)
    both = np.maximum(hor, obstacle_elevation_deg(centre, centre, obstacles, azimuths)) if obstacles else hor
    h = sky_view_factors(layout.tilt_deg, layout.azimuth_deg, hor, azimuths)
    a = sky_view_factors(layout.tilt_deg, layout.azimuth_deg, both, azimuths)
    return {"sky_horizon": h["sky"], "band_horizon": h["band"], "sky": a["sky"], "band": a["band"]}
