"""Visvalingam–Whyatt resumed between settings gives exactly what a fresh run gives (issue 13)."""
import numpy as np
import pytest
from cleaning_tracks import track_from_xy, wandering_path
from test_simplify import naive_vw

from editor.processing.simplify import SimplifyParams, simplify
from editor.processing.vw_ranking import VWRanking, vw_effective_areas


def _noisy_line(n: int, seed: int):
    rng = np.random.default_rng(seed)
    _t, x, y = wandering_path(n, 5.0, seed=seed)
    return x + rng.normal(0, 2, n), y + rng.normal(0, 2, n)


@pytest.mark.parametrize("seed", range(3))
def test_a_resumed_ranking_drops_what_a_fresh_run_drops_for_every_setting(seed):
    x, y = _noisy_line(3000, seed)
    anchors = np.zeros(len(x), dtype=bool)
    anchors[[700, 1500, 1501]] = True
    resumed = VWRanking(x, y, anchors)
    # up, down, up again, then counts: the order a rider might move the control in
    for area in (5.0, 50.0, 20.0, 0.0, 200.0, 50.0, 1e9):
        fresh = np.flatnonzero(~np.isinf(vw_effective_areas(x, y, anchors, stop_area=area)))
        assert np.array_equal(np.sort(resumed.dropped_below(area)), fresh), area
    for points in (2000, 100, 2999, 3):
        fresh = np.flatnonzero(~np.isinf(vw_effective_areas(x, y, anchors, stop_count=points)))
        assert np.array_equal(np.sort(resumed.dropped_to_count(points)), fresh), points
    assert not resumed.dropped_below(1e12)[np.isin(resumed.dropped_below(1e12), [0, 700, 1500, 1501, 2999])].size


def test_a_ranking_stopped_part_way_still_matches_the_textbook_procedure():
    # naive_vw: full recomputation each step (test_simplify), the definition of Visvalingam & Whyatt (1993)
    x, y = _noisy_line(300, 7)
    ranking = VWRanking(x, y)
    ranking.dropped_below(10.0)  # stopped part way, then carried on to the end
    ranking.run()
    assert np.allclose(ranking.effective_areas(), naive_vw(x, y), rtol=0, atol=1e-6)


def test_simplify_with_a_memo_equals_simplify_without_one():
    _t, x, y = wandering_path(4000, 4.0, seed=3)
    rng = np.random.default_rng(3)
    track = track_from_xy(x + rng.normal(0, 2, len(x)), y + rng.normal(0, 2, len(x)),
                          500 + rng.normal(0, 1, len(x)), _t, starts=(0, 2500))
    memo: dict = {}
    rows = np.arange(1000, 3000)
    for params, chosen in [(SimplifyParams(method="vw", area_m2=50), None),
                           (SimplifyParams(method="vw", area_m2=10), None),
                           (SimplifyParams(method="vw", area_m2=400), None),
                           (SimplifyParams(method="vw", area_m2=400), rows),  # other anchors: a new ranking
                           (SimplifyParams(method="vw", target_points=500), rows),
                           (SimplifyParams(method="vw", area_m2=30), None)]:
        with_memo = simplify(track, params, rows=chosen, memo=memo)
        fresh = simplify(track, params, rows=chosen)
        assert np.array_equal(with_memo.removed, fresh.removed), params
        assert with_memo.info == fresh.info
        assert with_memo.after == fresh.after


def test_two_previews_sharing_one_ranking_at_once_each_get_a_fresh_runs_answer():
    from concurrent.futures import ThreadPoolExecutor

    x, y = _noisy_line(20000, 11)
    shared = VWRanking(x, y)
    areas = [5.0, 400.0, 50.0, 2000.0, 20.0, 100.0]
    with ThreadPoolExecutor(max_workers=2) as pool:
        got = list(pool.map(shared.dropped_below, areas))
    for area, dropped in zip(areas, got):
        fresh = np.flatnonzero(~np.isinf(vw_effective_areas(x, y, stop_area=area)))
        assert np.array_equal(np.sort(dropped), fresh), area
