"""Fill signal-loss gaps with points estimated by the Kalman/RTS smoother.

A gap is a step longer than ``gap_factor`` times its segment's median interval
and at least ``min_gap_s`` long. For each gap the tool proposes points at the
segment's nominal (median) interval, timestamped ``t_before + k * median``,
placed on the smoother's estimate across the gap: the measurements of
``context_s`` seconds on either side, with the new times added as missing
measurements, go through :func:`editor.processing.kalman.rts_smooth` (process
noise fitted to that context by maximum likelihood, as the smoothing tool
does, scatter estimated from it), whose
prediction-and-smoothing through missing rows is exactly the interpolation
wanted (a constant-velocity model bridges a gap with a smooth curve that
matches speed and heading at both ends). Its posterior standard deviation
becomes the proposal's ``sigma_h_m`` (per horizontal axis, root mean square of
the two) and ``sigma_v_m`` for the inserted rows: widest in the middle of the
gap, as it should be.

Elevation is kept monotone between the gap's ends. With no measurement inside
the gap, the smoother's estimate there is the cubic Hermite curve through the
smoothed elevation and vertical speed at the two ends (the bridge of the
constant-velocity model). Across a long gap an end speed that is mostly noise
(elevation is the noisiest coordinate, often stored to 1 m, and wanders) makes
that curve overshoot by tens of metres, climb that no measurement shows; the
gap says nothing about a hill inside it. So the end speeds are limited as in
Fritsch & Carlson (1980), "Monotone piecewise cubic interpolation", SIAM J.
Numer. Anal. 17(2):238-246: a speed against the direction from one end to the
other becomes 0, and the pair is scaled down to ``alpha^2 + beta^2 <= 9``
(``alpha``, ``beta`` the end speeds over the mean slope), which keeps the
cubic monotone and between the two end values. Where the smoother's curve is
already monotone it is kept unchanged. ``info["ele_limited"]`` counts the gaps
whose end speeds were limited. Horizontal positions are not limited: there the
end headings are well measured and a bend in the gap is real.

Gaps longer than ``max_gap_s`` are not filled: a smooth curve over minutes of
unknown travel would be invention. They are left as they are
(``long_gap="leave"``) or the segment is split there (``"split"``), so that no
distance is counted across them. The limit is held against the signal loss as
recorded: where the spike tool removed fixes beside a gap (the catch-up after a
tunnel) it marked the fix after it with the gap's recorded length
(:func:`editor.model.payload.gap_as_recorded_s`), and that is what the limit sees,
while the points are placed between the good fixes the tool joins. Every gap
left alone is reported with its place and reason in ``info["notes"]``
("gap at 12.4 km: 125 s, over the 120 s limit").

Inserted points carry the payload ``inserted_marker`` the caller passes (the
editor and the batch command pass :data:`editor.model.payload.GAP_FILL_MARKER`;
processing never builds file content itself) unless ``mark_inserted`` is False.
Everything here is an estimate, not a measurement.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from ..model.payload import gap_as_recorded_s, strip_gap_record
from ..model.document import Track
from ..model.points import ALL_COLUMNS, PointTable
from .activity import Activity
from .cleaning_base import (PlanarTrack, activity_for, noise_sigma, plane_of, selection_mask, timed_segments,
                            unchanged_proposal)
from .kalman import Problem
from .proposal import PlaceNote, Proposal, make_proposal
from .scalar_search import most_likely
from .smoothing import LOG10_Q_RANGE
from .stats import StatsParams, Totals, distance_along


@dataclass(frozen=True)
class GapParams:
    """Parameters of :func:`fill_gaps`.

    Attributes
    ----------
    gap_factor : a step is a gap when longer than this many median intervals (default 5:
        loggers jitter by a second or two, a tunnel or a pocket loses tens of seconds).
    min_gap_s : ... and at least this long (default 10 s).
    max_gap_s : longer gaps are not filled (default 120 s: two minutes of walking is 150 m,
        of cycling a kilometre, about as far as a smooth guess stays useful). Held against the gap
        as recorded: points the spike tool removed beside a gap do not make it longer.
    long_gap : ``"leave"`` (default) or ``"split"`` the segment at gaps longer than ``max_gap_s``.
    activity : preset name or ``"auto"``; its process noise is the fallback when the context
        is too short to fit one.
    horizontal_sigma_m, vertical_sigma_m : measurement scatter (metres); ``None`` estimates it
        from the track (never below 0.5 m).
    context_s : seconds of track on each side of a gap the estimate uses (default 60 s, at
        least 5 points).
    mark_inserted : mark inserted points in the file (see module notes).
    """

    gap_factor: float = 5.0
    min_gap_s: float = 10.0
    max_gap_s: float = 120.0
    long_gap: str = "leave"
    activity: str | Activity = "auto"
    horizontal_sigma_m: float | None = None
    vertical_sigma_m: float | None = None
    context_s: float = 60.0
    mark_inserted: bool = True


#: Fewest context points on each side of a gap.
MIN_CONTEXT_POINTS = 5
#: Floors of the estimated scatter (metres); below them the 1 m resolution of many files dominates.
MIN_SIGMA_H_M = 0.5
MIN_SIGMA_V_M = 0.5


def find_gaps(t_s: np.ndarray, factor: float, min_gap_s: float) -> tuple[np.ndarray, float]:
    """Rows ``i`` (of one segment) where the step ``i -> i+1`` is a gap, and the median interval (s)."""
    dt = np.diff(t_s)
    positive = dt[dt > 0]
    if not len(positive):
        return np.zeros(0, dtype=np.int64), float("nan")
    median = float(np.median(positive))
    return np.flatnonzero((dt > factor * median) & (dt >= min_gap_s)), median


def gap_note(at_m: float, span_s: float, recorded_s: float | None, params: GapParams) -> PlaceNote:
    """Why a gap was not filled, for a rider: ``"gap at 12.4 km: 125 s, over the 120 s limit (left as it is)"``."""
    length = f"{span_s:.0f} s"
    if recorded_s is not None and recorded_s < span_s:
        length += f" ({recorded_s:.0f} s without signal)"
    done = "segment split there" if params.long_gap == "split" else "left as it is"
    return PlaceNote(f"gap at {{at}}: {length}, over the {params.max_gap_s:.0f} s limit ({done})", at_m)


def _sigma(given, floor, t, *cols) -> float:
    if given is not None:
        return float(given)
    estimate = noise_sigma(t, *cols)
    return max(estimate, floor) if np.isfinite(estimate) else floor


def fill_gaps(track: Track, params: GapParams = GapParams(), *, rows=None, track_index: int = 0,
              stats_params: StatsParams = StatsParams(), plane: PlanarTrack | None = None,
              before: Totals | None = None, inserted_marker: Any = None) -> Proposal:
    """Propose points across signal-loss gaps (see module notes).

    ``rows`` (sorted row indices): only gaps between two selected rows are filled or split.
    ``plane``: the track already projected (:func:`editor.processing.cleaning_base.planar`);
    ``before``: its totals, if known.
    ``reasons["inserted"]`` are the proposed rows inserted, ``reasons["gap"]`` the original rows
    where each gap found starts (``"split"`` and ``"unfilled"`` those split or left alone).
    ``info`` counts gaps, inserted points and gives the sigmas used.
    """
    if params.long_gap not in ("leave", "split"):
        raise ValueError(f"long_gap must be 'leave' or 'split', not {params.long_gap!r}")
    pt = plane_of(track, plane)
    n = len(pt)
    allowed = selection_mask(n, rows)
    activity = activity_for(pt, params.activity)
    gap_rows, gap_times, gap_counts, split_rows, unfilled = [], [], [], [], []
    windows = []  # (context rows, new times) per filled gap
    notes: list[str] = []
    along = None
    extra = track.points.extra
    timed = timed_segments(pt, min_points=2)
    for number, (a, b) in enumerate(pt.bounds):
        if b - a >= 2 and (a, b) not in timed and allowed[a:b].any():
            notes.append(f"segment {number + 1}: its times are missing or out of order, so gaps cannot be found")
    for a, b in timed:
        t = pt.t_s[a:b]
        found, median = find_gaps(t, params.gap_factor, params.min_gap_s)
        for g in found.tolist():
            row = a + g
            if not (allowed[row] and allowed[row + 1]):
                continue
            span = t[g + 1] - t[g]
            recorded = gap_as_recorded_s(extra[row + 1])
            if (span if recorded is None else min(span, recorded)) > params.max_gap_s:
                (split_rows if params.long_gap == "split" else unfilled).append(row)
                along = distance_along(track) if along is None else along
                notes.append(gap_note(along[row], span, recorded, params))
                continue
            count = int(np.floor((span - 0.5 * median) / median))
            if count < 1:
                continue
            lo = min(int(np.searchsorted(t, t[g] - params.context_s)), max(g + 1 - MIN_CONTEXT_POINTS, 0))
            hi = max(int(np.searchsorted(t, t[g + 1] + params.context_s, side="right")),
                     min(g + 1 + MIN_CONTEXT_POINTS, b - a))
            gap_rows.append(row)
            gap_counts.append(count)
            gap_times.append(median * np.arange(1, count + 1))
            windows.append((a + np.arange(lo, hi), t[g] + gap_times[-1]))
    gap_rows_a = np.array(gap_rows, dtype=np.int64)
    counts = np.array(gap_counts, dtype=np.int64)
    points, source, starts, sigma_h, sigma_v, sigmas = _assemble(track, pt, gap_rows_a, counts, gap_times, windows,
                                                                 split_rows, params, activity, inserted_marker)
    inserted = np.flatnonzero(source < 0)
    segment_extra = None
    if split_rows:
        # one new (empty) extensions payload per segment created by a split
        old_seg = track.segment_of(np.asarray(split_rows))
        segment_extra = list(track.segment_extra)
        for seg in sorted(old_seg.tolist(), reverse=True):
            segment_extra.insert(seg + 1, None)
    all_gaps = np.sort(np.concatenate((gap_rows_a, split_rows, unfilled)).astype(np.int64))
    info = {"activity": activity.name, "gaps": len(all_gaps), "filled": len(gap_rows), "split": len(split_rows),
            "unfilled": len(unfilled), "inserted": len(inserted), "sigma_h_m": sigmas[0], "sigma_v_m": sigmas[1],
            "q_h": sigmas[2], "q_v": sigmas[3], "ele_limited": sigmas[4],
            "max_inserted_sigma_h_m": float(np.nanmax(sigma_h[inserted])) if len(inserted) else 0.0,
            "notes": notes}
    reasons = {"inserted": inserted, "gap": all_gaps, "split": np.array(sorted(split_rows), dtype=np.int64),
               "unfilled": np.array(sorted(unfilled), dtype=np.int64)}
    if not len(inserted) and not split_rows:
        return unchanged_proposal("fill_gaps", "Fill gaps", track_index, track, stats_params, before, reasons=reasons,
                                  sigma_h_m=sigma_h, sigma_v_m=sigma_v, info=info)
    return make_proposal("fill_gaps", "Fill gaps", track_index, track, points, starts, source, stats_params,
                         before=before, segment_extra=segment_extra, reasons=reasons, sigma_h_m=sigma_h,
                         sigma_v_m=sigma_v, info=info)


def _estimate(pt, windows, activity, params):
    """Smoothed x, y, elevation and their standard deviations at every new time, all gaps in one pass."""
    ctx = np.concatenate([w[0] for w in windows])
    t_ctx = pt.t_s[ctx]
    sizes = [len(w[0]) + len(w[1]) for w in windows]
    seq_starts = np.concatenate(([0], np.cumsum(sizes)[:-1]))
    # each window: context rows then new times, sorted by time within the window
    t_all, z_all, is_new = [], [], []
    for rows_w, new_t in windows:
        tw = np.concatenate((pt.t_s[rows_w], new_t))
        order = np.argsort(tw, kind="stable")
        z = np.full((len(tw), 3), np.nan)
        z[:len(rows_w)] = np.column_stack((pt.x[rows_w], pt.y[rows_w], pt.ele[rows_w]))
        new = np.zeros(len(tw), dtype=bool)
        new[len(rows_w):] = True
        t_all.append(tw[order]), z_all.append(z[order]), is_new.append(new[order])
    t_all, z_all, is_new = np.concatenate(t_all), np.concatenate(z_all), np.concatenate(is_new)
    sig_h = _sigma(params.horizontal_sigma_m, MIN_SIGMA_H_M, t_ctx, pt.x[ctx], pt.y[ctx])
    horizontal = Problem(t_all, z_all[:, :2], sig_h ** 2, starts=seq_starts)
    q_h = _fit_q(horizontal, "horizontal", activity.process_noise)
    horiz = horizontal.smooth(q_h, want_std=True)
    ele_hat = np.full(is_new.sum(), np.nan)
    ele_std = np.full(is_new.sum(), np.nan)
    sig_v = q_v = float("nan")
    limited = 0
    if np.isfinite(z_all[:, 2]).sum() >= 2:
        sig_v = _sigma(params.vertical_sigma_m, MIN_SIGMA_V_M, t_ctx, pt.ele[ctx])
        vertical = Problem(t_all, z_all[:, 2], sig_v ** 2, starts=seq_starts)
        q_v = _fit_q(vertical, "vertical", activity.vertical_process_noise)
        vert = vertical.smooth(q_v, want_std=True)
        ele_std = vert.position_std[is_new]
        ele_hat, limited = monotone_bridge(t_all, vert.position, vert.velocity, is_new)
    pos, std = horiz.position[is_new], horiz.position_std[is_new]
    return (pos[:, 0], pos[:, 1], ele_hat, np.sqrt(0.5 * (std[:, 0] ** 2 + std[:, 1] ** 2)), ele_std,
            (sig_h, sig_v, q_h, q_v, limited))


def monotone_bridge(t_s: np.ndarray, value: np.ndarray, rate: np.ndarray, is_new: np.ndarray
                    ) -> tuple[np.ndarray, int]:
    """Values at the ``is_new`` rows on the cubic Hermite curve between the rows on either side.

    ``t_s`` (seconds, increasing within each run of new rows and its two neighbours), ``value``
    and ``rate`` (per second) at every row; each run of new rows must have a row that is not new
    on both sides. The end rates are limited as in Fritsch & Carlson (1980) (see the module
    notes), so the curve is monotone and stays between the two end values. Returns the values
    at the new rows and the number of runs whose end rates had to be limited.
    """
    idx = np.arange(len(is_new))
    a = np.maximum.accumulate(np.where(~is_new, idx, -1))[is_new]
    b = np.minimum.accumulate(np.where(~is_new, idx, len(idx))[::-1])[::-1][is_new]
    span = t_s[b] - t_s[a]
    secant = (value[b] - value[a]) / span
    with np.errstate(invalid="ignore", divide="ignore"):
        alpha = np.where(secant != 0, rate[a] / secant, 0.0)
        beta = np.where(secant != 0, rate[b] / secant, 0.0)
    alpha_l, beta_l = np.maximum(alpha, 0.0), np.maximum(beta, 0.0)
    radius = np.hypot(alpha_l, beta_l)
    shrink = np.where(radius > 3.0, 3.0 / np.where(radius > 0, radius, 1.0), 1.0)
    alpha_l, beta_l = alpha_l * shrink, beta_l * shrink
    changed = ~(np.isclose(alpha_l, alpha, rtol=1e-12, atol=0.0) & np.isclose(beta_l, beta, rtol=1e-12, atol=0.0))
    changed &= np.isfinite(secant)
    s = (t_s[is_new] - t_s[a]) / span
    h00, h10 = 2 * s ** 3 - 3 * s ** 2 + 1, s ** 3 - 2 * s ** 2 + s
    h01, h11 = -2 * s ** 3 + 3 * s ** 2, s ** 3 - s ** 2
    slope_a = np.where(secant != 0, alpha_l * secant, 0.0)
    slope_b = np.where(secant != 0, beta_l * secant, 0.0)
    out = h00 * value[a] + h10 * span * slope_a + h01 * value[b] + h11 * span * slope_b
    return out, int(len(np.unique(a[changed])))


def _fit_q(problem: Problem, axis: str, fallback: float) -> float:
    """Maximum-likelihood process noise q (m^2/s^3) of the context, searched in log10 q.

    The bounds are the smoothing tool's strength range (:data:`editor.processing.smoothing.LOG10_Q_RANGE`),
    so a fill follows the same model the smoother would fit; ``fallback`` if the data say nothing.
    ``problem`` is prepared once; each step of the search is one likelihood pass on it.
    """
    try:
        # a fill needs q to a few per cent only: a coarser tolerance than the smoother's
        q, loglik = most_likely(problem.loglik, LOG10_Q_RANGE[axis], tolerance=0.02)
    except ValueError:
        return fallback
    return q if np.isfinite(loglik) else fallback


def _assemble(track, pt, gap_rows, counts, gap_times, windows, split_rows, params, activity, inserted_marker):
    """The proposed point table with the new rows in place, and what goes with it."""
    old = track.points
    n, total_new = len(old), int(counts.sum())
    # new rows go right after their gap's first row
    shift = np.zeros(n, dtype=np.int64)
    if len(gap_rows):
        np.add.at(shift, gap_rows + 1, counts)
    shift = np.cumsum(shift)
    new_index = np.arange(n) + shift
    source = np.full(n + total_new, -1, dtype=np.int64)
    source[new_index] = np.arange(n)
    columns = {}
    for key, col in old.columns().items():
        out = np.empty(n + total_new, dtype=col.dtype)
        out[new_index] = col
        columns[key] = out
    inserted_at = np.flatnonzero(source < 0)
    sigma_h = np.full(n + total_new, np.nan)
    sigma_v = np.full(n + total_new, np.nan)
    sigmas = (float("nan"),) * 4 + (0,)  # sigma_h, sigma_v, q_h, q_v, gaps with limited end rates
    if total_new:
        x, y, ele, sh, sv, sigmas = _estimate(pt, windows, activity, params)
        lat, lon = pt.projection.to_latlon(x, y)
        t0 = np.repeat(old.time[gap_rows], counts)
        offsets = np.rint(np.concatenate(gap_times) * 1e9).astype("timedelta64[ns]")
        fill = {"lat": lat, "lon": lon, "ele": ele, "time": t0 + offsets}
        for key in ALL_COLUMNS:
            if key in fill:
                columns[key][inserted_at] = fill[key]
            elif key in ("name", "extra"):
                columns[key][inserted_at] = None
            else:
                columns[key][inserted_at] = np.nan
        if params.mark_inserted and inserted_marker is not None:
            columns["extra"][inserted_at] = inserted_marker
        # the fix after a filled gap is no longer after a gap: drop the spike tool's record of it
        after = new_index[gap_rows + 1]
        columns["extra"][after] = [strip_gap_record(e) for e in columns["extra"][after]]
        sigma_h[inserted_at], sigma_v[inserted_at] = sh, sv
    starts = (track.segment_starts + shift[np.minimum(track.segment_starts, n - 1)] if n
              else track.segment_starts.copy())
    if split_rows:
        starts = np.sort(np.concatenate((starts, new_index[np.asarray(split_rows) + 1])))
    return PointTable(**columns), source, starts, sigma_h, sigma_v, sigmas


__all__ = ["GapParams", "fill_gaps", "find_gaps", "gap_note", "monotone_bridge"]
