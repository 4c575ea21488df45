"""Simplification against GEOS/shapely and the documented PostGIS examples."""
import numpy as np
import pytest
import shapely
from cleaning_tracks import hill_profile, track_from_xy, wandering_path, xy_of

from editor.processing.simplify import (SimplifyParams, rdp_keep, rdp_keep_geos, simplify,
                                        vw_effective_areas)


def shapely_kept(x, y, tol):
    """Coordinates GEOS keeps (shapely.simplify with preserve_topology=False is Douglas-Peucker)."""
    line = shapely.LineString(np.column_stack((x, y)))
    return np.asarray(shapely.simplify(line, tol, preserve_topology=False).coords)


@pytest.mark.parametrize("keep_fn", [rdp_keep, rdp_keep_geos])
def test_shapely_documented_example_point_at_tolerance_is_dropped(keep_fn):
    # shapely `simplify` documentation: LINESTRING(0 0, 1 10, 0 20) is unchanged at 0.9
    # and becomes (0 0, 0 20) at 1.0 (keep a point only if its distance is greater than the tolerance).
    x, y = np.array([0.0, 1.0, 0.0]), np.array([0.0, 10.0, 20.0])
    assert keep_fn(x, y, 0.9).tolist() == [True, True, True]
    assert keep_fn(x, y, 1.0).tolist() == [True, False, True]


def test_postgis_documented_circle_example():
    # PostGIS ST_Simplify documentation: the 49-point ring of a radius-10 circle buffer
    # (8 segments per quarter) keeps 33 / 17 / 9 points at tolerance 0.1 / 0.5 / 1.
    ring = np.asarray(shapely.Point(1, 3).buffer(10, 12).exterior.coords)
    assert len(ring) == 49
    for keep_fn in (rdp_keep, rdp_keep_geos):
        counts = [int(keep_fn(ring[:, 0], ring[:, 1], tol).sum()) for tol in (0.1, 0.5, 1.0)]
        assert counts == [33, 17, 9]


@pytest.mark.parametrize("seed", range(6))
def test_numpy_rdp_keeps_exactly_what_geos_keeps_on_random_lines(seed):
    # GEOS implements Douglas-Peucker for simplify(preserve_topology=False); our level-at-a-time
    # numpy version must keep the very same vertices, ties and duplicates included.
    rng = np.random.default_rng(seed)
    n = int(rng.integers(50, 4000))
    x, y = np.cumsum(rng.normal(0, 1, n)), np.cumsum(rng.normal(0, 1, n))
    if seed % 2:
        x, y = np.round(x), np.round(y)  # integer grid: repeated points and exact ties
    for tol in (0.1, 0.5, 1.0, 2.5, 7.0):
        keep = rdp_keep(x, y, tol)
        assert np.array_equal(np.column_stack((x[keep], y[keep])), shapely_kept(x, y, tol))
        assert np.array_equal(rdp_keep_geos(x, y, tol), keep)


def test_anchors_split_the_line_into_independent_stretches():
    rng = np.random.default_rng(3)
    n = 600
    x, y = np.cumsum(rng.normal(0, 1, n)), np.cumsum(rng.normal(0, 1, n))
    anchors = np.zeros(n, dtype=bool)
    anchors[[0, 150, 151, 400, n - 1]] = True
    expected = anchors.copy()
    for a, b in ((0, 150), (151, 400), (400, n - 1)):
        sub = np.column_stack((x[a:b + 1], y[a:b + 1]))
        kept = shapely_kept(sub[:, 0], sub[:, 1], 2.0)
        expected[a + np.flatnonzero(rdp_keep(sub[:, 0], sub[:, 1], 2.0))] = True
        assert len(kept) == rdp_keep(sub[:, 0], sub[:, 1], 2.0).sum()
    assert np.array_equal(rdp_keep(x, y, 2.0, anchors), expected)
    assert np.array_equal(rdp_keep_geos(x, y, 2.0, anchors), expected)


def test_vertical_tolerance_keeps_the_climb():
    # A straight road over a 40 m hill: planar RDP keeps only the ends, 3D RDP keeps the summit.
    x = np.linspace(0, 2000, 401)
    y = np.zeros_like(x)
    ele = 300 + 40 * np.sin(np.pi * x / 2000)
    assert rdp_keep(x, y, 5.0).sum() == 2
    keep = rdp_keep(x, y, 5.0, ele=ele, vertical_tolerance_m=2.0)
    assert keep[200]
    kept_ele = ele[keep]
    assert kept_ele.max() - kept_ele[0] == pytest.approx(40.0, abs=1e-9)


def test_every_dropped_point_is_within_both_tolerances_of_the_new_line():
    rng = np.random.default_rng(5)
    t, x, y = wandering_path(5000, 5.0, seed=5)
    x, y = x + rng.normal(0, 2, len(x)), y + rng.normal(0, 2, len(x))
    along = np.concatenate(([0], np.cumsum(np.hypot(np.diff(x), np.diff(y)))))
    ele = hill_profile(along) + rng.normal(0, 1.5, len(x))
    keep = rdp_keep(x, y, 4.0, ele=ele, vertical_tolerance_m=3.0)
    kept = np.flatnonzero(keep)
    dropped = np.flatnonzero(~keep)
    a = kept[np.searchsorted(kept, dropped) - 1]
    b = kept[np.searchsorted(kept, dropped)]
    # horizontal: distance to the kept segment, measured by GEOS (shapely.distance)
    segs = shapely.linestrings(np.stack((np.column_stack((x[a], y[a])), np.column_stack((x[b], y[b]))), axis=1))
    d_h = shapely.distance(segs, shapely.points(x[dropped], y[dropped]))
    assert d_h.max() <= 4.0 + 1e-9
    frac = (along[dropped] - along[a]) / (along[b] - along[a])
    d_v = np.abs(ele[dropped] - (ele[a] + frac * (ele[b] - ele[a])))
    assert d_v.max() <= 3.0 + 1e-9
    # and the points it keeps are needed: planar-only RDP keeps fewer
    assert keep.sum() > rdp_keep(x, y, 4.0).sum()


def test_missing_elevations_fall_back_to_the_horizontal_test():
    rng = np.random.default_rng(6)
    t, x, y = wandering_path(2000, 5.0, seed=6)
    x, y = x + rng.normal(0, 2, len(x)), y + rng.normal(0, 2, len(x))
    ele = 500 + rng.normal(0, 4, len(x))
    ele[:1000] = np.nan  # the first half has no elevation at all
    keep = rdp_keep(x, y, 5.0, ele=ele, vertical_tolerance_m=1.0)
    planar_keep = rdp_keep(x, y, 5.0)
    assert keep[:990].sum() <= planar_keep[:1000].sum() + 5
    assert keep[1000:].sum() > 3 * planar_keep[1000:].sum()  # the noisy elevations are kept


def test_postgis_documented_effective_areas():
    # PostGIS ST_SetEffectiveArea / ST_SimplifyVW documentation: LINESTRING(5 2, 3 8, 6 20, 7 25, 10 10)
    # has effective areas 29, 1.5, 49.5 (endpoints infinite); threshold 30 keeps (5 2, 7 25, 10 10).
    x, y = np.array([5.0, 3, 6, 7, 10]), np.array([2.0, 8, 20, 25, 10])
    eff = vw_effective_areas(x, y)
    assert np.isinf(eff[[0, 4]]).all()
    assert eff[1:4].tolist() == [29.0, 1.5, 49.5]
    keep = np.isinf(vw_effective_areas(x, y, stop_area=30.0))
    assert list(zip(x[keep], y[keep])) == [(5, 2), (7, 25), (10, 10)]


def naive_vw(x, y):
    """Textbook Visvalingam-Whyatt by full recomputation each step (O(n^2)), for comparison."""
    alive = list(range(len(x)))
    eff = np.full(len(x), np.inf)
    floor = 0.0
    while len(alive) > 2:
        areas = [0.5 * abs((x[alive[k]] - x[alive[k - 1]]) * (y[alive[k + 1]] - y[alive[k - 1]])
                           - (x[alive[k + 1]] - x[alive[k - 1]]) * (y[alive[k]] - y[alive[k - 1]]))
                 for k in range(1, len(alive) - 1)]
        k = int(np.argmin(areas)) + 1
        floor = max(floor, areas[k - 1])
        eff[alive[k]] = floor
        del alive[k]
    return eff


@pytest.mark.parametrize("seed", range(4))
def test_heap_vw_matches_the_textbook_procedure(seed):
    rng = np.random.default_rng(seed)
    x, y = np.cumsum(rng.normal(0, 3, 300)), np.cumsum(rng.normal(0, 3, 300))
    eff, ref = vw_effective_areas(x, y), naive_vw(x, y)
    # areas are ranked in units of 2^-21 m^2 (see vw_effective_areas)
    assert np.allclose(eff, ref, rtol=0, atol=1e-6)
    assert np.all(np.diff(np.sort(eff[1:-1])) >= 0)
    target = np.isinf(vw_effective_areas(x, y, stop_count=40))
    assert target.sum() == 40
    assert np.array_equal(target, np.isin(np.arange(300), np.argsort(-ref, kind="stable")[:40]) | np.isinf(ref))


def _two_segment_track():
    rng = np.random.default_rng(8)
    t, x, y = wandering_path(3000, 4.0, seed=8)
    along = np.concatenate(([0], np.cumsum(np.hypot(np.diff(x), np.diff(y)))))
    ele = np.round(hill_profile(along) + rng.normal(0, 1.0, len(x)))
    return track_from_xy(x + rng.normal(0, 2, len(x)), y + rng.normal(0, 2, len(x)), ele, t, starts=(0, 1800))


@pytest.mark.parametrize("params", [SimplifyParams(), SimplifyParams(vertical_tolerance_m=3.0),
                                    SimplifyParams(method="vw", area_m2=40.0),
                                    SimplifyParams(method="vw", target_points=300)])
def test_simplify_proposal_keeps_segment_ends_and_reports(params):
    track = _two_segment_track()
    prop = simplify(track, params)
    kept = prop.source_rows
    for a, b in track.segment_bounds():
        assert a in kept and b - 1 in kept
    assert prop.segment_starts.tolist() == [0, int(np.searchsorted(kept, 1800))]
    assert prop.info["kept"] == len(kept) == prop.after.points
    assert prop.info["removed"] == len(prop.removed) > 0
    assert prop.info["ascent_change_m"] == pytest.approx(prop.after.ascent_m - prop.before.ascent_m)
    if params.method == "rdp":
        assert prop.info["max_deviation_m"] <= params.tolerance_m
    if params.vertical_tolerance_m is not None:
        assert prop.info["max_vertical_deviation_m"] <= params.vertical_tolerance_m
    if params.target_points:
        assert len(kept) == params.target_points
    assert not prop.changed.any()


def test_simplify_only_removes_selected_rows():
    track = _two_segment_track()
    rows = np.arange(500, 1200)
    prop = simplify(track, SimplifyParams(tolerance_m=8.0), rows=rows)
    assert len(prop.removed) > 100
    assert np.isin(prop.removed, rows).all()
    assert 500 - 1 in prop.source_rows and 1200 in prop.source_rows


def test_vertical_simplification_preserves_climb_better_than_planar():
    track = _two_segment_track()
    planar_only = simplify(track, SimplifyParams(tolerance_m=10.0))
    with_vertical = simplify(track, SimplifyParams(tolerance_m=10.0, vertical_tolerance_m=2.0))
    assert abs(with_vertical.info["ascent_change_m"]) < abs(planar_only.info["ascent_change_m"])


def test_an_unbalanced_line_needs_no_recursion():
    # A saw-tooth whose teeth grow along the line: every split peels off the last tooth, so the
    # recursion is as deep as the line is long (2,000 > Python's default limit of 1,000 frames).
    n = 2000
    x = np.arange(n, dtype=float)
    y = np.where(np.arange(n) % 2 == 0, 0.0, 1.0) * np.linspace(0.1, 3.0, n)
    keep = rdp_keep(x, y, 0.05)
    assert np.array_equal(np.column_stack((x[keep], y[keep])), shapely_kept(x, y, 0.05))


def test_a_long_recorded_line_matches_geos():
    rng = np.random.default_rng(12)
    t, x, y = wandering_path(300_000, 5.0, seed=12)
    x, y = x + rng.normal(0, 3, len(x)), y + rng.normal(0, 3, len(x))
    keep = rdp_keep(x, y, 5.0)
    assert np.array_equal(np.column_stack((x[keep], y[keep])), shapely_kept(x, y, 5.0))


def test_unknown_method_is_refused():
    with pytest.raises(ValueError):
        simplify(_two_segment_track(), SimplifyParams(method="fancy"))


def test_planar_proposal_points_come_back_in_place():
    track = _two_segment_track()
    prop = simplify(track, SimplifyParams(tolerance_m=3.0))
    x, y = xy_of(prop.as_track(track))
    x0, y0 = xy_of(track)
    assert np.allclose(x, x0[prop.source_rows]) and np.allclose(y, y0[prop.source_rows])
