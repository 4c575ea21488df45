"""Ascent error of the batch clean with terrain on simulated rides (shared by the test and the score script)."""
from __future__ import annotations

from pathlib import Path

import numpy as np
from ride_simulation import Ride, make_ride

from editor.model.document import Document, Track
from editor.processing.pipeline import CleanParams, clean_document
from editor.processing.stats import track_totals
from editor.terrain import Terrain


def ascent_errors(ride: Ride) -> tuple[float, float]:
    """Relative ascent error (%) of the cleaned track with the recorded elevation and with none."""
    truth = track_totals(ride.true_track).ascent_m
    terrain = Terrain.open(ride.tiles)
    out = []
    for keep_ele in (True, False):
        points = ride.track.points.copy()
        if not keep_ele:
            points.ele[:] = np.nan
        doc = Document(tracks=[Track(points, [0], segment_extra=[None])])
        cleaned, _ = clean_document(doc, CleanParams(), terrain=terrain)
        out.append((track_totals(cleaned.tracks[0]).ascent_m / truth - 1.0) * 100.0)
    terrain.close()
    return out[0], out[1]


def score(seeds, folder: Path, duration_s: int | None = None, report=print) -> dict:
    rows = []
    for seed in seeds:
        ride = make_ride(seed, folder / f"ride{seed}", duration_s=duration_s)
        with_ele, without = ascent_errors(ride)
        lon = ride.true_track.points.lon
        crosses = bool(np.any(np.abs(np.diff(lon)) > 180))
        rows.append((seed, ride.kind, len(ride.tiles), with_ele, without, crosses))
        report(f"ride {seed:2d} {ride.kind:9s} {len(ride.tiles):2d} tiles{' (crosses 180)' if crosses else ''}: "
               f"ascent error with ele {with_ele:+6.2f} %, without ele {without:+6.2f} %")
    w = np.abs([r[3] for r in rows])
    wo = np.abs([r[4] for r in rows])
    return {"rows": rows, "median_with": float(np.median(w)), "worst_with": float(w.max()),
            "median_without": float(np.median(wo)), "worst_without": float(wo.max())}
