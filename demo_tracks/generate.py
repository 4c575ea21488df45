#!/usr/bin/env python3
"""Write Trackwright's bundled demo recordings and the truth they were built from.

Three invented scenarios in an invented valley (the place names are fictional and the roads follow
no real map; the coordinates only put them somewhere plausible). For each one the script builds a
smooth true path and a smooth true elevation profile, walks or rides it with a grade-dependent speed,
then "records" it the way a consumer logger would: time-correlated position error, white jitter,
multipath spikes, drift while standing still, a signal-loss gap with a false catch-up jump, noisy
1 m elevation, irregular sampling and a heart-rate extension. It writes ``<stem>.gpx`` (GPX 1.1) and
``<stem>.truth.json`` (the totals of the noise-free truth and where each artefact is), and
``<stem>.terrain.tif``: the scenario's invented landscape as a 1-arc-second terrain raster that agrees
with its true elevation profile (``demo_terrain.py``; the ground rises over the tunnel). One raster per
scenario: the three invented profiles were made independently and disagree where their paths cross.

It deliberately does not import the ``editor`` package, so the demo files are an independent
recording for the editor's tests. Fixed seed: two runs give byte-identical files (on one platform).

Usage: ``python demo_tracks/generate.py [--out DIR]`` (default: this script's folder).
"""
from __future__ import annotations

import argparse
import json
import math
from datetime import datetime, timedelta, timezone
from pathlib import Path
from xml.sax.saxutils import escape

import numpy as np
from pyproj import Geod

SEED = 20240617
PULSE_NS = "urn:x-trackwright-demo:pulse:1"
CAUTION = ("Invented demo data: a simulated recording of a fictional scenario, not a real place or "
           "activity. Not for navigation.")
# WGS84 ellipsoid, NIMA TR8350.2 (2000): a = 6378137 m, 1/f = 298.257223563.
_A, _F = 6378137.0, 1 / 298.257223563
_E2 = _F * (2 - _F)
GEOD = Geod(ellps="WGS84")


from demo_terrain import write_terrain  # noqa: E402  (beside this script)
from scenarios import SCENARIOS, Scenario  # noqa: E402  (beside this script)

#: Each scenario's invented landscape, a GeoTIFF beside its recording (see demo_terrain.py).
TERRAIN_SUFFIX = ".terrain.tif"
#: Ground above the tunnel's middle, metres (the ridge the tunnel passes under).
TUNNEL_COVER_M = 140.0


# ----------------------------------------------------------------------------- truth
def _gauss_smooth(values: np.ndarray, sigma: float, closed: bool) -> np.ndarray:
    """Gaussian smoothing (sigma in samples); odd reflection at open ends keeps end slopes."""
    half = int(4 * sigma) + 1
    kernel = np.exp(-0.5 * (np.arange(-half, half + 1) / sigma) ** 2)
    kernel /= kernel.sum()
    if closed:
        padded = np.concatenate([values[-half:], values, values[:half]])
    else:
        padded = np.concatenate([2 * values[0] - values[half:0:-1], values,
                                 2 * values[-1] - values[-2:-half - 2:-1]])
    return np.convolve(padded, kernel, mode="valid")


def build_truth(sc: Scenario) -> dict:
    """Dense true path at ~1 m spacing: east/north (m), arc length s, elevation, grade, curvature."""
    pts = np.array(sc.corners, dtype=float)
    if sc.closed:
        pts = np.vstack([pts, pts[:1]])
    xy = pts[:, :2] * 1000.0
    cum = np.concatenate([[0.0], np.cumsum(np.hypot(*np.diff(xy, axis=0).T))])
    xy *= sc.length_m / cum[-1]
    cum *= sc.length_m / cum[-1]
    s = np.arange(0.0, cum[-1], 1.0) if sc.closed else np.linspace(0, cum[-1], int(cum[-1]) + 1)
    frac = s / cum[-1]
    east = _gauss_smooth(np.interp(s, cum, xy[:, 0]), sc.corner_sigma_m, sc.closed)
    north = _gauss_smooth(np.interp(s, cum, xy[:, 1]), sc.corner_sigma_m, sc.closed)
    ele = _gauss_smooth(np.interp(s, cum, pts[:, 2]), sc.profile_sigma_m, sc.closed)
    if sc.closed:  # close the ring again after the wrap-around smoothing
        east, north, ele, frac = (np.append(a, a[0]) for a in (east, north, ele, frac))
        frac[-1] = 1.0
    ele = ele + sc.rollers[0] * np.sin(2 * np.pi * sc.rollers[1] * frac)
    # re-parameterise by the smoothed path's own arc length, ~1 m steps
    arc = np.concatenate([[0.0], np.cumsum(np.hypot(np.diff(east), np.diff(north)))])
    s = np.linspace(0.0, arc[-1], int(round(arc[-1])) + 1)
    east, north, ele, frac = (np.interp(s, arc, a) for a in (east, north, ele, frac))
    heading = np.unwrap(np.arctan2(np.gradient(north), np.gradient(east)))
    return {"s": s, "east": east, "north": north, "ele": ele,
            "grade": _gauss_smooth(np.gradient(ele, s), 10.0, sc.closed),
            "curvature": np.abs(np.gradient(heading, s)),
            "corner_s": cum / cum[-1] * s[-1]}


def at_corner(truth: dict, pos: float) -> float:
    """Arc length (m) of a corner position (see :class:`Scenario`)."""
    c = truth["corner_s"]
    return float(np.interp(pos, np.arange(len(c)), c))


def to_latlon(sc: Scenario, east: np.ndarray, north: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Local tangent plane -> WGS84, with the radii of curvature at the origin (ample for ~20 km)."""
    phi = math.radians(sc.origin[0])
    w = math.sqrt(1 - _E2 * math.sin(phi) ** 2)
    meridional, prime_vertical = _A * (1 - _E2) / w ** 3, _A / w
    return (sc.origin[0] + np.degrees(north / meridional),
            sc.origin[1] + np.degrees(east / (prime_vertical * math.cos(phi))))


def speed_profile(sc: Scenario, truth: dict, halts_s: list[float]) -> np.ndarray:
    """Speed (m/s) along the path: grade model, cornering limit, gentle starts and stops."""
    g = truth["grade"]
    if sc.activity == "ride":  # roughly constant effort: slower uphill, faster (capped) downhill
        v = np.where(g >= 0, sc.cruise_mps / (1 + 15 * g), np.minimum(sc.cruise_mps * (1 - 6 * g), 15.0))
        lateral, accel, brake = 2.5, 0.8, 1.5
    else:  # Tobler's hiking function (recalled from memory: 6 exp(-3.5 |g + 0.05|) km/h), rescaled
        v = sc.cruise_mps / 1.4 * (6 / 3.6) * np.exp(-3.5 * np.abs(g + 0.05))
        lateral, accel, brake = 10.0, 0.5, 0.5
    v = np.minimum(v, np.sqrt(lateral / np.maximum(truth["curvature"], 1e-9)))
    s = truth["s"]
    v[np.searchsorted(s, halts_s).clip(0, len(s) - 1)] = 0.0
    v[0] = v[-1] = 0.0
    ds = np.diff(s)
    for i in range(1, len(v)):  # acceleration limit forwards, braking limit backwards
        v[i] = min(v[i], math.sqrt(v[i - 1] ** 2 + 2 * accel * ds[i - 1]))
    for i in range(len(v) - 2, -1, -1):
        v[i] = min(v[i], math.sqrt(v[i + 1] ** 2 + 2 * brake * ds[i]))
    return v


def motion(sc: Scenario, truth: dict) -> dict:
    """Time knots (s since start) of the true motion, with dwell intervals at stops and pauses."""
    halts = sorted([(at_corner(truth, p), d, "stop") for p, d in sc.stops]
                   + [(at_corner(truth, p), d, "pause") for p, d in sc.pauses])
    s = truth["s"]
    v = speed_profile(sc, truth, [h[0] for h in halts])
    t = np.concatenate([[0.0], np.cumsum(np.diff(s) / np.maximum(0.5 * (v[1:] + v[:-1]), 0.2))])
    t_knots, s_knots, intervals = t.copy(), s.copy(), []
    for s_halt, dwell, kind in reversed(halts):
        j = int(np.searchsorted(s, s_halt).clip(0, len(s) - 1))
        t_knots[j + 1:] += dwell
        t_knots = np.insert(t_knots, j + 1, t_knots[j] + dwell)
        s_knots = np.insert(s_knots, j + 1, s_knots[j])
        intervals.append({"kind": kind, "s": float(s[j]), "arrive": t[j], "dwell": dwell})
    shift = 0.0
    for iv in sorted(intervals, key=lambda d: d["arrive"]):
        iv["arrive"] += shift
        iv["leave"] = iv["arrive"] + iv["dwell"]
        shift += iv["dwell"]
    return {"t": t_knots, "s": s_knots, "halts": sorted(intervals, key=lambda d: d["arrive"])}


# ----------------------------------------------------------------------------- recording
def ou_series(rng: np.random.Generator, n: int, tau_s: float, sigma: float) -> np.ndarray:
    """Ornstein-Uhlenbeck (AR(1)) values on a 1 s grid, stationary standard deviation ``sigma``."""
    phi = math.exp(-1.0 / tau_s)
    shocks = rng.standard_normal(n) * sigma * math.sqrt(1 - phi * phi)
    out = np.empty(n)
    out[0] = sigma * rng.standard_normal()
    for i in range(1, n):
        out[i] = phi * out[i - 1] + shocks[i]
    return out


def sample_clock(rng: np.random.Generator, end_s: float, base_s: int) -> np.ndarray:
    """Fix times in integer milliseconds: mostly the nominal interval, sometimes one second late,
    a few duplicated times and a few fixes jittered by 0.5 s (sub-second parts)."""
    base = 1000 * base_s
    steps = rng.choice([base, base + 1000, 0], p=[0.9565, 0.042, 0.0015], size=int(end_s / base_s) + 50)
    t = np.concatenate([[0], np.cumsum(steps)])
    t = t[t <= 1000 * end_s]
    for i in np.sort(rng.choice(np.arange(2, len(t) - 2), size=max(3, len(t) // 1000), replace=False)):
        new = t[i] + int(rng.choice([-500, 500]))
        if t[i - 1] < new < t[i + 1]:
            t[i] = new
    return t.astype(np.int64)


def heart_rate(sc: Scenario, truth: dict, mot: dict, rng: np.random.Generator, n_s: int) -> np.ndarray:
    """Heart rate (bpm) on the 1 s grid: a 40 s lag towards an effort-dependent target.

    An invented model with a plausible shape (not physiology): it only has to rise on climbs and
    fall while standing, so the extension data look alive."""
    grid = np.arange(n_s, dtype=float)
    s = np.interp(grid, mot["t"], mot["s"])
    speed = np.gradient(s)  # 0 while standing still
    grade = np.interp(s, truth["s"], truth["grade"])
    # rider power with rough textbook values recalled from memory: 80 kg, Crr 0.005, CdA 0.35 m2, 1.15 kg/m3
    if sc.activity == "ride":
        power = np.maximum(80 * 9.81 * speed * (grade + 0.005) + 0.5 * 1.15 * 0.35 * speed ** 3, 0)
        target = 88 + 0.3 * power
    else:
        target = 88 + 35 * speed / 1.3 + 300 * np.maximum(speed * grade, 0)
    target = np.minimum(target, 182) + ou_series(rng, n_s, 20.0, 1.5)
    hr = np.empty(n_s)
    hr[0], gain = 80.0, 1 - math.exp(-1 / 40.0)
    for i in range(1, n_s):
        hr[i] = hr[i - 1] + gain * (target[i] - hr[i - 1])
    return hr


def fix_times(sc: Scenario, truth: dict, mot: dict, rng: np.random.Generator) -> tuple:
    """Times (ms) of the fixes that exist, the first row of each segment and the signal-loss gap."""
    t_ms = sample_clock(rng, float(mot["t"][-1]), sc.sample_s)
    keep = np.ones(len(t_ms), dtype=bool)
    for iv in mot["halts"]:
        if iv["kind"] == "pause":
            keep &= (t_ms <= 1000 * iv["arrive"]) | (t_ms >= 1000 * iv["leave"])
    tunnel = None
    if sc.tunnel:
        tunnel = np.interp([at_corner(truth, p) for p in sc.tunnel], mot["s"], mot["t"])
        keep &= (t_ms <= 1000 * tunnel[0]) | (t_ms >= 1000 * (tunnel[1] + sc.errors.reacquire_s))
    t_ms = t_ms[keep]
    seg_starts = [0] + [int(np.searchsorted(t_ms, 1000 * iv["leave"])) for iv in mot["halts"]
                        if iv["kind"] == "pause"]
    gap = None
    if tunnel is not None:
        after = int(np.searchsorted(t_ms, 1000 * (tunnel[1] + sc.errors.reacquire_s)))
        gap = {"last_index_before": after - 1, "first_index_after": after,
               "tunnel_length_m": round(float(np.diff(np.interp(tunnel, mot["t"], mot["s"]))[0]), 1)}
    return t_ms, seg_starts, gap


def record(sc: Scenario, truth: dict, mot: dict, rng: np.random.Generator) -> dict:
    """Simulate the logger: which fixes exist, where it thought it was, what it stored."""
    em = sc.errors
    t_ms, seg_starts, gap = fix_times(sc, truth, mot, rng)
    t, n_grid = t_ms / 1000.0, int(mot["t"][-1]) + 2
    grid = np.arange(n_grid)
    s = np.interp(t, mot["t"], mot["s"])
    east, north, ele = (np.interp(s, truth["s"], truth[k]) for k in ("east", "north", "ele"))
    factor = np.ones(len(t))
    for a, b, f in sc.poor_sky:  # worse sky view: larger errors, ramped in and out over 150 m
        sa, sb = at_corner(truth, a), at_corner(truth, b)
        factor += (f - 1) * np.interp(s, [sa - 150, sa, sb, sb + 150], [0, 1, 1, 0])
    err = np.stack([np.interp(t, grid, ou_series(rng, n_grid, em.corr_tau_s, em.corr_sigma_m))
                    for _ in range(2)]) * factor + rng.standard_normal((2, len(t))) * em.white_sigma_m
    wander = np.convolve(ou_series(rng, n_grid + 30, em.ele_corr_tau_s, 1.0), np.ones(31) / 31, "valid")
    ele_err = np.interp(t, grid, wander) * em.ele_corr_sigma_m / wander.std() * factor
    ele_err += rng.standard_normal(len(t)) * em.ele_white_sigma_m
    standing = np.zeros(len(t))
    for iv in mot["halts"]:  # standing still with the logger on: the fix wanders, fading in and out
        if iv["kind"] == "stop":
            standing += np.clip((t - iv["arrive"]) / 20, 0, 1) * np.clip((iv["leave"] + 8 - t) / 8, 0, 1)
    err += np.stack([np.interp(t, grid, ou_series(rng, n_grid, em.drift_tau_s, em.drift_sigma_m))
                     for _ in range(2)]) * standing
    hdop = 0.7 + 0.3 * factor + 0.2 * np.abs(rng.standard_normal(len(t))) + 0.6 * standing
    sat = np.clip(np.rint(12 - 2 * (factor - 1) - 3 * standing + rng.integers(-1, 2, len(t))), 4, 14)
    decay = np.zeros(len(t))
    if gap:  # the first fixes after the tunnel land far off and converge (false catch-up jump)
        after = gap["first_index_after"]
        decay[after:] = np.exp(-(t[after:] - t[after]) / em.catch_up_tau_s)
        angle = rng.uniform(0, 2 * np.pi)
        err += np.outer([math.cos(angle), math.sin(angle)], em.catch_up_m * decay)
        ele_err += em.catch_up_ele_m * decay
        hdop += 6.0 * decay
        sat[decay > 0.5] = 5
    # multipath spikes on single moving fixes, away from the other artefacts and from each other
    calm = (standing == 0) & (decay < 1e-3) & (np.gradient(s) > 0.5)
    for start in seg_starts + ([gap["first_index_after"]] if gap else []):
        calm[max(start - 30, 0):start + 60] = False
    calm[:30] = calm[-30:] = False
    dup = np.flatnonzero(np.diff(t_ms) == 0) + 1  # second fix of each pair with the same time
    calm[np.concatenate([dup - 1, dup])] = False
    spikes = np.sort(rng.choice(np.flatnonzero(calm)[::40], size=sc.spikes, replace=False))
    size = rng.uniform(*em.spike_range_m, size=sc.spikes)
    angle = rng.uniform(0, 2 * np.pi, size=sc.spikes)
    err[:, spikes] += np.stack([np.cos(angle), np.sin(angle)]) * size
    ele_err[spikes] += rng.uniform(-20, 20, size=sc.spikes)
    lat, lon = to_latlon(sc, east + err[0], north + err[1])
    return {"t_ms": t_ms, "east": east, "north": north, "ele_true": ele, "lat": lat, "lon": lon,
            "ele": np.rint((ele + ele_err) / em.ele_step_m) * em.ele_step_m,
            "hr": np.rint(np.interp(t, grid, heart_rate(sc, truth, mot, rng, n_grid))),
            "hdop": np.round(hdop, 1), "sat": sat, "fix": np.where(decay > 0.5, "2d", "3d"),
            "seg_starts": seg_starts, "gap": gap, "spikes": spikes, "spike_m": size, "dup": dup}


# ----------------------------------------------------------------------------- output
def iso(start: datetime, ms: int) -> str:
    stamp = start + timedelta(milliseconds=int(ms))
    frac = f".{stamp.microsecond // 1000:03d}" if stamp.microsecond else ""
    return stamp.strftime("%Y-%m-%dT%H:%M:%S") + frac + "Z"


def gpx_text(sc: Scenario, truth: dict, rec: dict, start: datetime) -> str:
    """The recording as GPX 1.1, children in the schema's order (ele, time, fix, sat, hdop, extensions)."""
    rows = [int(np.argmax(truth["ele"])) if pos is None else
            min(int(np.searchsorted(truth["s"], at_corner(truth, pos))), len(truth["s"]) - 1)
            for _, _, pos in sc.waypoints]
    w_lat, w_lon = to_latlon(sc, truth["east"][rows], truth["north"][rows])
    wpts = [f'  <wpt lat="{a:.8f}" lon="{b:.8f}">\n    <ele>{truth["ele"][j]:.0f}</ele>\n'
            f"    <name>{escape(name)}</name>\n    <desc>{escape(desc)}</desc>\n  </wpt>"
            for a, b, j, (name, desc, _) in zip(w_lat, w_lon, rows, sc.waypoints)]
    r_lat, r_lon = to_latlon(sc, *(np.interp(truth["corner_s"], truth["s"], truth[k])
                                   for k in ("east", "north")))
    route = []
    if sc.planned_route:
        corner_ele = [c[2] for c in sc.corners + ((sc.corners[0],) if sc.closed else ())]
        route = ["  <rte>", f"    <name>{escape(sc.planned_route)}</name>"]
        route += [f'    <rtept lat="{a:.8f}" lon="{b:.8f}"><ele>{e:.0f}</ele></rtept>'
                  for a, b, e in zip(r_lat, r_lon, corner_ele)] + ["  </rte>"]
    lats = np.concatenate([rec["lat"], w_lat] + ([r_lat] if route else []))
    lons = np.concatenate([rec["lon"], w_lon] + ([r_lon] if route else []))
    out = ['<?xml version="1.0" encoding="UTF-8"?>',
           '<gpx version="1.1" creator="Trackwright demo generator" xmlns="http://www.topografix.com/GPX/1/1" '
           f'xmlns:xsi="http://www.w3.org/2001/XMLSchema-instance" xmlns:pulse="{PULSE_NS}" '
           'xsi:schemaLocation="http://www.topografix.com/GPX/1/1 http://www.topografix.com/GPX/1/1/gpx.xsd">',
           "  <metadata>", f"    <name>{escape(sc.title)}</name>",
           f"    <desc>{escape(sc.description + ' ' + CAUTION)}</desc>",
           f"    <time>{iso(start, int(rec['t_ms'][-1]) + 60000)}</time>",
           "    <keywords>demo, invented, simulated</keywords>",
           f'    <bounds minlat="{lats.min():.8f}" minlon="{lons.min():.8f}" '
           f'maxlat="{lats.max():.8f}" maxlon="{lons.max():.8f}"/>', "  </metadata>", *wpts, *route,
           "  <trk>", f"    <name>{escape(sc.title)}</name>", f"    <type>{escape(sc.track_type)}</type>"]
    bounds = rec["seg_starts"] + [len(rec["t_ms"])]
    for a, b in zip(bounds[:-1], bounds[1:]):
        out.append("    <trkseg>")
        for i in range(a, b):
            dop = f'<fix>{rec["fix"][i]}</fix><sat>{rec["sat"][i]:.0f}</sat>' if sc.sat_fix else ""
            dop += f'<hdop>{rec["hdop"][i]:.1f}</hdop>' if sc.hdop else ""
            out.append(f'      <trkpt lat="{rec["lat"][i]:.8f}" lon="{rec["lon"][i]:.8f}">'
                       f'<ele>{rec["ele"][i]:.0f}</ele><time>{iso(start, rec["t_ms"][i])}</time>{dop}'
                       f'<extensions><pulse:hr>{rec["hr"][i]:.0f}</pulse:hr></extensions></trkpt>')
        out.append("    </trkseg>")
    return "\n".join(out + ["  </trk>", "</gpx>", ""])


#: How close a cleaned recording's totals must come to the truth (see ``cleaned_tolerance``).
DISTANCE_TOLERANCE = 0.01
CLIMB_TOLERANCE, CLIMB_TOLERANCE_FLOOR_M = 0.10, 10.0


def cleaned_tolerance(distance_m: float, ascent_m: float, descent_m: float) -> dict:
    """Largest difference between a cleaned recording's totals and the truth's that counts as a good clean.

    Distance 1 % (common practice: what riders expect of a GNSS distance); ascent and descent 10 %
    or 10 m, whichever is larger (common practice: a 5 m climb threshold drops small undulations of
    the truth, and elevations are stored to 1 m).
    """
    return {"distance_m": round(DISTANCE_TOLERANCE * distance_m, 1),
            "ascent_m": round(max(CLIMB_TOLERANCE * ascent_m, CLIMB_TOLERANCE_FLOOR_M), 1),
            "descent_m": round(max(CLIMB_TOLERANCE * descent_m, CLIMB_TOLERANCE_FLOOR_M), 1),
            "applies_to": "totals (5 m climb threshold) of the recording after the recommended clean: "
                          "spikes, gaps, stops, smoothing"}


def truth_json(sc: Scenario, truth: dict, mot: dict, rec: dict, start: datetime) -> str:
    """The noise-free totals and the place of every artefact, for tests and for the README."""
    lat, lon = to_latlon(sc, truth["east"], truth["north"])
    rise = np.diff(truth["ele"])
    n = len(rec["t_ms"])
    segment = np.searchsorted(rec["seg_starts"], np.arange(n), side="right")
    inside = segment[1:] == segment[:-1]  # steps within a segment
    fix_lat, fix_lon = to_latlon(sc, rec["east"], rec["north"])
    fix_rise = np.diff(rec["ele_true"])[inside]
    gaps = []
    if rec["gap"]:
        g = dict(rec["gap"])
        a, b = (int(rec["t_ms"][g[k]]) for k in ("last_index_before", "first_index_after"))
        gaps.append({"start_time": iso(start, a), "end_time": iso(start, b), "duration_s": (b - a) / 1000,
                     **g, "cause": "tunnel", "catch_up_initial_offset_m": sc.errors.catch_up_m,
                     "catch_up_decay_time_s": sc.errors.catch_up_tau_s,
                     "catch_up_initial_elevation_offset_m": sc.errors.catch_up_ele_m})
    doc = {
        "file": f"{sc.stem}.gpx", "title": sc.title, "caution": CAUTION, "seed": SEED,
        "scenario": sc.description,
        "true_distance_m": round(float(GEOD.line_length(lon, lat)), 1),
        "true_ascent_m": round(float(rise[rise > 0].sum()), 1),
        "true_descent_m": round(float(-rise[rise < 0].sum()), 1),
        "true_min_elevation_m": round(float(truth["ele"].min()), 1),
        "true_max_elevation_m": round(float(truth["ele"].max()), 1),
        "true_distance_through_fixes_m": round(float(GEOD.inv(
            fix_lon[:-1], fix_lat[:-1], fix_lon[1:], fix_lat[1:])[2][inside].sum()), 1),
        "true_ascent_through_fixes_m": round(float(fix_rise[fix_rise > 0].sum()), 1),
        "point_count": n, "segment_count": len(rec["seg_starts"]),
        "segment_point_counts": np.diff(rec["seg_starts"] + [n]).tolist(),
        "start_time": iso(start, 0), "end_time": iso(start, int(rec["t_ms"][-1])),
        "stops": [{"start_time": iso(start, round(1000 * iv["arrive"])),
                   "end_time": iso(start, round(1000 * iv["leave"])), "duration_s": iv["dwell"],
                   "logger": "recording (drifts)" if iv["kind"] == "stop" else "paused (new segment)"}
                  for iv in mot["halts"]],
        "gaps": gaps,
        "spike_indices": rec["spikes"].tolist(),
        "spike_offsets_m": np.round(rec["spike_m"], 1).tolist(),
        "duplicate_time_indices": rec["dup"].tolist(),
        "subsecond_time_indices": np.flatnonzero(rec["t_ms"] % 1000).tolist(),
        "error_model": vars(sc.errors),
        "cleaned_tolerance": cleaned_tolerance(float(GEOD.line_length(lon, lat)), float(rise[rise > 0].sum()),
                                               float(-rise[rise < 0].sum())),
        "notes": "Indices count the track's points across segments from 0. Distances on WGS84 (pyproj "
                 "Geod). 'through_fixes' totals follow the true path sampled at the fix times.",
    }
    return json.dumps(doc, indent=2, ensure_ascii=False) + "\n"


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description="Write the invented demo recordings and their truth files.")
    parser.add_argument("--out", type=Path, default=Path(__file__).resolve().parent,
                        help="output folder (default: the folder of this script)")
    args = parser.parse_args(argv)
    args.out.mkdir(parents=True, exist_ok=True)
    for number, sc in enumerate(SCENARIOS):
        rng = np.random.default_rng([SEED, number])
        truth = build_truth(sc)
        mot = motion(sc, truth)
        rec = record(sc, truth, mot, rng)
        start = datetime.fromisoformat(sc.start_utc).replace(tzinfo=timezone.utc)
        for suffix, text in ((".gpx", gpx_text(sc, truth, rec, start)),
                             (".truth.json", truth_json(sc, truth, mot, rec, start))):
            path = args.out / f"{sc.stem}{suffix}"
            path.write_bytes(text.encode("utf-8"))
            print(f"wrote {path} ({path.stat().st_size:,} bytes, {len(rec['t_ms'])} points)")
        path = args.out / f"{sc.stem}{TERRAIN_SUFFIX}"
        write_terrain(path, [_ground_of(sc, truth)])
        print(f"wrote {path} ({path.stat().st_size:,} bytes, invented terrain)")
    return 0


def _ground_of(sc: Scenario, truth: dict) -> dict:
    """The path, its true elevation, and the ground above it (a ridge over the tunnel, 0 elsewhere)."""
    step = 10  # every 10th metre of the dense truth is ample for a 30 m raster
    lat, lon = to_latlon(sc, truth["east"][::step], truth["north"][::step])
    s = truth["s"][::step]
    extra = np.zeros(len(s))
    if sc.tunnel is not None:
        a, b = at_corner(truth, sc.tunnel[0]), at_corner(truth, sc.tunnel[1])
        inside = (s > a) & (s < b)
        extra[inside] = TUNNEL_COVER_M * np.sin(np.pi * (s[inside] - a) / (b - a)) ** 0.5
    return {"lat": lat, "lon": lon, "ele": truth["ele"][::step], "ground_extra": extra}


if __name__ == "__main__":
    raise SystemExit(main())
