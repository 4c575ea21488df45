"""Previews reuse work between settings (issue 13): ``smooth(..., memo=...)`` must propose exactly
what the same settings propose without it, array for array.

The reference is the smoother itself called without the memo on the same track (whose own
correctness tests/processing/test_smoothing.py checks against statsmodels and closed forms).
"""
from __future__ import annotations

import numpy as np
import pytest

from editor.processing import kalman as K
from editor.processing import smoothing as S
from editor.processing.cleaning_base import planar

from test_smoothing import simulate


def _same_proposal(a, b) -> None:
    for column in ("lat", "lon", "ele"):
        assert np.array_equal(getattr(a.points, column), getattr(b.points, column), equal_nan=True), column
    assert np.array_equal(a.changed, b.changed)
    for name in ("sigma_h_m", "sigma_v_m"):
        x, y = getattr(a, name), getattr(b, name)
        assert (x is None) == (y is None), name
        if x is not None:
            assert np.array_equal(x, y, equal_nan=True), name
    assert np.array_equal(a.info["speed_mps"], b.info["speed_mps"], equal_nan=True)
    assert a.after == b.after


# a slider session: one strength at a time, both, noise, automatic strengths, one axis off
SETTINGS = [
    dict(horizontal_strength=40.0, vertical_strength=40.0),
    dict(horizontal_strength=40.0, vertical_strength=55.0),      # elevation alone
    dict(horizontal_strength=62.0, vertical_strength=55.0),      # position alone
    dict(horizontal_strength=62.0, vertical_strength=55.0, horizontal_sigma_m=7.5),
    dict(horizontal_strength=None, vertical_strength=55.0),
    dict(horizontal_strength=30.0, vertical_strength=None, estimate_noise=True),
    dict(horizontal_strength=30.0, vertical_strength=55.0, smooth_elevation=False),
    dict(horizontal_strength=0.0, vertical_strength=20.0),
    dict(horizontal_strength=40.0, vertical_strength=40.0),      # back to the start
]


@pytest.mark.parametrize("want_std", ["vertical", True])
def test_a_shared_memo_proposes_exactly_what_a_fresh_call_proposes(want_std):
    track, _, _ = simulate(1500, seed=4)
    plane = planar(track)
    memo: dict = {}
    for values in SETTINGS:
        params = S.SmoothParams(**values)
        with_memo = S.smooth(track, params, plane=plane, want_std=want_std, memo=memo)
        fresh = S.smooth(track, params, plane=plane, want_std=want_std)
        _same_proposal(with_memo, fresh)


def test_a_selection_gets_its_own_prepared_arrays():
    track, _, _ = simulate(1200, seed=5)
    memo: dict = {}
    params = S.SmoothParams(horizontal_strength=50.0, vertical_strength=50.0)
    for rows in (None, np.arange(300, 700), np.arange(100, 200), None):
        _same_proposal(S.smooth(track, params, rows=rows, memo=memo), S.smooth(track, params, rows=rows))


def test_changing_the_elevation_strength_does_not_smooth_positions_again(monkeypatch):
    track, _, _ = simulate(800, seed=6)
    memo: dict = {}
    S.smooth(track, S.SmoothParams(horizontal_strength=40.0, vertical_strength=40.0), memo=memo)
    solved = []
    real = K.Problem.smooth
    monkeypatch.setattr(K.Problem, "smooth", lambda self, q, **kw: solved.append(self.z.shape[1]) or real(self, q, **kw))
    S.smooth(track, S.SmoothParams(horizontal_strength=40.0, vertical_strength=70.0), memo=memo)
    assert solved == [1]          # the elevation only (one column), positions reused
    solved.clear()
    S.smooth(track, S.SmoothParams(horizontal_strength=20.0, vertical_strength=70.0), memo=memo)
    assert solved == [2]          # the positions only (east and north)
