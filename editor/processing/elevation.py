"""The elevation tool: heights from the user's terrain rasters, alone or fused with the recording.

Modes
-----
* ``replace``: terrain only. Positions are smoothed first (the smoother's horizontal part, at its
  maximum-likelihood strength): sampling terrain at raw positions turns position noise into climb.
  The terrain profile along the smoothed path is then smoothed with the same constant-velocity model
  (:mod:`.kalman`), each height weighted by its error (below), strength by maximum likelihood.
* ``combine`` (default when the recording has elevation): one state-space model with the recording
  (plus a slowly varying offset: a barometer's drift and calibration, a receiver's slow wander) and
  the terrain as two measurements of the true height (:mod:`.elevation_model`). Where the terrain
  disagrees with the recording far beyond both errors for a stretch (a bridge or a tunnel: the
  terrain is the ground, not the deck or the tunnel floor) the recording's shape is trusted there:
  the terrain is left out over that stretch, and the stretch is reported.
* ``fill``: only rows without a recorded elevation change; with some recorded elevation they get
  the combine model's estimate of what the recording would have said (height plus offset), so a
  filled stretch joins its neighbours; with none, the replace result.

Terrain height error per point: ``terrain_sigma_m^2 + (slope * (position_sigma_m + pixel / 4))^2``
-- the raster's own error, plus the height change over the position's remaining error and over
the distance bilinear interpolation can be off within a pixel (common practice; the pixel / 4 is
our choice) -- times the number of samples per pixel along the track (up to
:data:`MAX_SAMPLES_PER_PIXEL`: samples reading the same pixels share their error), then scaled by the
maximum-likelihood factor of the terrain-only fit.

Rows outside the terrain (or on holes in it) are reported, never given a made-up terrain value: in
``replace`` they get their recorded height smoothed as the smoothing tool would (NaN stays NaN); a
track with no terrain under it at all gets just that (the batch clean leaves elevation to this step
when terrain is given). The heights are those of the raster's vertical
reference (usually metres above mean sea level). Results are estimates, not surveyed data, and are
not for navigation.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from ..model.document import Track
from .cleaning_base import MAD_TO_SIGMA
from .elevation_model import OffsetDrift, combine_smooth
from .kalman import Problem
from .proposal import Proposal, make_proposal
from .scalar_search import bounded_minimum
from .smoothing import SmoothParams, _estimate, _fit_axis, _problems, _track_arrays, smooth
from .stats import StatsParams

if TYPE_CHECKING:
    from ..terrain import Terrain

MODES = ("auto", "fill", "replace", "combine")
#: log10 range of the offset drift ratio q_b / r_rec searched (1/s).
LOG10_DRIFT_RANGE = (-7.0, 1.0)
#: Window of the running median the disagreement check compares against, seconds.
DISAGREEMENT_WINDOW_S = 600.0
#: Smallest disagreement (m) that marks a stretch, whatever the noise.
MIN_DISAGREEMENT_M = 8.0
#: Most samples counted as sharing one terrain error (see the error model in ``terrain_elevation``).
MAX_SAMPLES_PER_PIXEL = 10.0
#: Lowest factor the maximum-likelihood fit may put on the stated terrain error variance.
MIN_TERRAIN_ERROR_SCALE = 0.25
CAUTION = ("Terrain heights are the ground surface, not a bridge deck or a tunnel; cleaned elevations are "
           "estimates, not surveyed data, and are not for navigation.")


@dataclass(frozen=True)
class ElevationParams:
    """Elevation from terrain.

    Attributes
    ----------
    mode : ``"auto"`` (combine when the track has recorded elevation, else replace), ``"fill"``,
        ``"replace"`` or ``"combine"``.
    terrain_sigma_m : 2.0 m, random height error of the raster between neighbouring pixels. Global
        1-arc-second models quote a few metres absolute error (90 %), much of it a slowly varying
        bias that does not change climb (common practice; values recalled from memory).
    position_sigma_m : 3.0 m, horizontal error left after smoothing positions (common practice).
    disagreement_sigmas : how many combined standard deviations the terrain must be off the
        recording, over a stretch, to be left out there (bridge, tunnel).
    min_stretch_points : shortest such stretch, in points.
    """

    mode: str = "auto"
    terrain_sigma_m: float = 2.0
    position_sigma_m: float = 3.0
    disagreement_sigmas: float = 5.0
    min_stretch_points: int = 3


def _runs(mask: np.ndarray, starts: np.ndarray, bridge: int) -> list[tuple[int, int]]:
    """Runs ``(first, last)`` of True rows, joining runs separated by fewer than ``bridge`` rows,
    never across a segment start."""
    rows = np.flatnonzero(mask)
    if not len(rows):
        return []
    seg = np.searchsorted(starts, rows, side="right")
    cut = np.flatnonzero((np.diff(rows) > bridge) | (np.diff(seg) != 0))
    firsts, lasts = np.r_[rows[:1], rows[cut + 1]], np.r_[rows[cut], rows[-1:]]
    return list(zip(firsts.tolist(), lasts.tolist()))


def _disagreeing(t: np.ndarray, diff: np.ndarray, params: ElevationParams,
                 dop_scale: np.ndarray) -> np.ndarray:
    """Rows where recording minus terrain leaves its own running median (over
    :data:`DISAGREEMENT_WINDOW_S`) by more than ``disagreement_sigmas`` robust deviations (at least
    :data:`MIN_DISAGREEMENT_M`): the offset drifts slowly, a bridge or tunnel makes a bump."""
    from scipy.ndimage import median_filter

    ok = np.flatnonzero(np.isfinite(diff))
    out = np.zeros(len(diff), dtype=bool)
    if len(ok) < 5:
        return out
    step = float(np.median(np.diff(t[ok]))) if len(ok) > 1 else 1.0
    size = int(np.clip(DISAGREEMENT_WINDOW_S / max(step, 1e-3), 5, max(5, len(ok))) // 2 * 2 + 1)
    level = median_filter(diff[ok], size=size, mode="nearest")
    # a fix with a poor DOP may stray further before it counts as a disagreement
    dev = (diff[ok] - level) / dop_scale[ok]
    spread = MAD_TO_SIGMA * float(np.median(np.abs(dev - np.median(dev))))
    core = np.abs(dev) > max(params.disagreement_sigmas * spread, MIN_DISAGREEMENT_M)
    # hysteresis: a stretch reaches out to where the difference is back within 2 deviations, so the
    # ramps onto a bridge do not pull the offset
    wide = np.abs(dev) > max(2.0 * spread, 0.25 * MIN_DISAGREEMENT_M)
    label = np.cumsum(np.r_[True, wide[1:] != wide[:-1]])
    hit = np.unique(label[core & wide])
    out[ok] = wide & np.isin(label, hit)
    return out


def _fit_offset(t, starts, d) -> tuple[float, float]:
    """Maximum-likelihood ``(q_b, r_rec)`` of the recording-minus-terrain difference."""
    lo, hi = LOG10_DRIFT_RANGE
    problem = OffsetDrift(t, starts, d)
    best = bounded_minimum(lambda v: -problem.loglik(10.0 ** v)[0], lo, hi, 0.01)
    _, scale = problem.loglik(10.0 ** best.x)
    return 10.0 ** best.x * scale, scale


def terrain_elevation(track: Track, params: ElevationParams = ElevationParams(), *, terrain: Terrain,
                      rows=None, track_index: int = 0, stats_params: StatsParams = StatsParams(),
                      plane=None, before=None, want_std: bool = True) -> Proposal:
    """Propose elevations from ``terrain`` (see the module notes). ``rows``: only these rows change.

    ``info``: ``mode`` used, ``terrain_report`` (points found, outside, on holes), ``vertical_reference``,
    ``terrain_profile`` (smoothed terrain-only heights per row, for the profile's own line),
    ``disagreements`` (``(first_row, last_row, largest difference m)`` per stretch where the
    recording was trusted), ``offset_range_m``, the noise values used.
    """
    if params.mode not in MODES:
        raise ValueError(f"elevation mode must be one of {', '.join(MODES)}, not {params.mode!r}")
    n = len(track.points)
    points = track.points.copy()
    arrays = _track_arrays(track, None, plane)
    info: dict = {"vertical_reference": terrain.vertical_reference(), "caution": CAUTION,
                  "disagreements": [], "terrain_profile": np.full(n, np.nan)}
    recorded = arrays.ele
    has_ele = bool(np.isfinite(recorded).any())
    mode = params.mode if params.mode != "auto" else ("combine" if has_ele else "replace")
    info["mode"] = mode
    if not len(arrays.rows):
        info["terrain_report"] = "no track points"
        return make_proposal("elevation", "Elevation from terrain", track_index, track, points,
                             track.segment_starts, np.arange(n), stats_params, before=before, info=info)

    # 1. smoothed positions (the smoother's horizontal part at its maximum-likelihood strength)
    hp = SmoothParams(smooth_elevation=False)
    problems = _problems(arrays, hp)
    if problems["horizontal"] is not None:
        estimate = _estimate(arrays, hp, None, None, None, problems=problems)
        xy = problems["horizontal"].smooth(estimate.q_h, want_std=False).position
        lat, lon = arrays.projection.to_latlon(xy[:, 0], xy[:, 1])
    else:
        lat, lon = track.points.lat[arrays.rows], track.points.lon[arrays.rows]
    # 2. terrain along them, with its error
    sample = terrain.sample(lat, lon)
    info["terrain_report"] = sample.report()
    info["terrain_missing"] = int((sample.status != 0).sum())
    z_t = sample.height
    spread = params.position_sigma_m + sample.pixel_m / 4.0
    r_t = params.terrain_sigma_m ** 2 + (sample.slope * spread) ** 2
    # samples closer together than a pixel read the same pixels (and the raster's errors are
    # correlated over neighbouring pixels): they are not independent measurements, so each counts for
    # less, as in an effective-sample-size correction (our choice of form, capped)
    if problems["horizontal"] is not None:
        step = np.hypot(np.diff(xy[:, 0]), np.diff(xy[:, 1]))
        step = np.r_[step[:1], step] if len(step) else np.zeros(len(z_t))
        r_t = r_t * np.clip(sample.pixel_m / np.maximum(step, 0.1), 1.0, MAX_SAMPLES_PER_PIXEL)
    t, starts = arrays.t, arrays.starts
    if not np.isfinite(z_t).any():
        # nothing to take from the terrain (a batch of several files must not stop on the one that
        # lies elsewhere): recorded heights are smoothed as the smoothing tool would, and the report
        # says why
        info["disagreement_count"] = 0
        if has_ele and mode != "fill":
            points = smooth(track, SmoothParams(smooth_horizontal=False), rows=rows, plane=plane,
                            want_std=False).points
            info["terrain_report"] += "; recorded heights smoothed instead"
        return make_proposal("elevation", "Elevation from terrain", track_index, track, points,
                             track.segment_starts, np.arange(n), stats_params, before=before,
                             reasons={"outside terrain": arrays.rows[sample.status != 0]}, info=info)
    ground = Problem(t, z_t, np.where(np.isfinite(z_t), r_t, 1.0), starts=starts)
    q_h, r_scale, _ = _fit_axis(ground, "vertical", None, True, lambda: None)
    # a raster smoother than stated may lower its error, but not to nothing (a noise-free raster would
    # otherwise leave the recording no say at all)
    r_scale = max(r_scale, MIN_TERRAIN_ERROR_SCALE)
    r_t = r_t * r_scale
    info.update(q_ground=q_h, terrain_error_scale=r_scale)
    terrain_only = Problem(t, z_t, np.where(np.isfinite(z_t), r_t, 1.0), starts=starts).smooth(
        q_h, want_std=want_std and mode == "replace")
    h_terrain = terrain_only.position
    info["terrain_profile"][arrays.rows] = np.where(np.isfinite(z_t), h_terrain, np.nan)

    sigma_v = None
    if mode == "replace" or not has_ele:
        outside = ~np.isfinite(z_t) & np.isfinite(recorded)
        if outside.any():  # recorded heights off the terrain: smoothed, as without terrain
            recorded = smooth(track, SmoothParams(smooth_horizontal=False), plane=plane,
                              want_std=False).points.ele[arrays.rows]
        new = np.where(np.isfinite(z_t), h_terrain, recorded)
        if mode == "fill":
            new = np.where(np.isfinite(recorded), recorded, new)
        if want_std and terrain_only.position_std is not None:
            sigma_v = np.full(n, np.nan)
            sigma_v[arrays.rows] = np.where(np.isfinite(z_t), terrain_only.position_std, np.nan)
    else:
        # 3. combine: stretches where the terrain leaves the recording (bridge, tunnel) are found on
        # the difference first, so that neither the offset's drift nor the heights follow them
        diff = recorded - h_terrain
        # the recording's error per point follows its DOP, as in the smoother (vdop, else hdop)
        dop = arrays.r_v if np.isfinite(track.points.vdop).any() else arrays.r_h
        suspect = _disagreeing(t, diff, params, np.sqrt(dop))
        z_use = np.where(suspect, np.nan, z_t)
        q_b, r_rec = _fit_offset(t, starts, np.where(suspect, np.nan, diff))
        # the height may vary as fast as either measurement shows: a barometer sees detail the raster
        # smooths away, while a receiver's wander goes into the offset
        # (its own noise too: the difference's white part also holds the raster's error)
        recording = Problem(t, recorded, dop, starts=starts)
        q_rec, r_rec, _ = _fit_axis(recording, "vertical", None, True, lambda: None)
        r_rec = r_rec * dop
        q_h = max(q_h, q_rec)
        info["q_ground"] = q_h
        h, b, _ = combine_smooth(t, starts, recorded, r_rec, z_use, r_t, q_h, q_b)
        resid = np.abs(z_use - h) / np.sqrt(r_t + r_rec)
        suspect |= np.isfinite(resid) & (resid > params.disagreement_sigmas)
        stretches = [(a, e) for a, e in _runs(suspect, starts, 3) if e - a + 1 >= params.min_stretch_points]
        keep = z_t.copy()
        for a, e in stretches:
            keep[max(a - 2, 0):e + 3] = np.nan  # and a little either side: the ramps onto a bridge
        if not np.array_equal(np.isnan(keep), np.isnan(z_use)):
            h, b, _ = combine_smooth(t, starts, recorded, r_rec, keep, r_t, q_h, q_b)
        info["disagreements"] = [(int(arrays.rows[a]), int(arrays.rows[e]),
                                  float(np.nanmax(np.abs(z_t[a:e + 1] - h[a:e + 1]))))
                                 for a, e in stretches]
        known = np.isfinite(recorded) | np.isfinite(z_t)
        if mode == "fill":
            new = np.where(np.isfinite(recorded), recorded, np.where(known, h + b, recorded))
        else:
            new = np.where(known, h, recorded)
        info.update(q_offset=q_b, r_recording=float(np.median(r_rec)),
                    offset_range_m=(float(np.nanmin(b)), float(np.nanmax(b))))
    info["disagreement_count"] = len(info["disagreements"])
    write = arrays.rows if rows is None else np.intersect1d(np.asarray(rows, dtype=np.int64), arrays.rows)
    at = np.searchsorted(arrays.rows, write)
    points.ele[write] = new[at]
    reasons = {"terrain disagrees": np.array([r for a, e, _ in info["disagreements"] for r in range(a, e + 1)],
                                             dtype=np.int64),
               "outside terrain": arrays.rows[sample.status != 0]}
    return make_proposal("elevation", "Elevation from terrain", track_index, track, points,
                         track.segment_starts, np.arange(n), stats_params, before=before,
                         sigma_v_m=sigma_v, reasons=reasons, info=info)
