"""The constant-velocity model in statsmodels' state-space form: the outside reference for the smoother.

Used by tests/processing/test_kalman.py and tests/bench/bench_kalman.py, so both compare against the
same model: state [position, velocity], one transition and process-noise matrix per time step, exact
diffuse start (statsmodels' ``initialize_diffuse``).
"""
from __future__ import annotations

import numpy as np
from statsmodels.tsa.statespace.kalman_smoother import KalmanSmoother


def unit_q(h, q_form="continuous"):
    """Process noise per unit q for steps ``h`` (seconds): continuous or discrete white acceleration."""
    q = np.zeros((2, 2, len(h)))
    if q_form == "continuous":
        q[0, 0], q[0, 1], q[1, 1] = h ** 3 / 3, h ** 2 / 2, h
    else:
        q[0, 0], q[0, 1], q[1, 1] = h ** 4 / 4, h ** 3 / 2, h ** 2
    q[1, 0] = q[0, 1]
    return q


def transition(h):
    """F(dt) = [[1, dt], [0, 1]] for each step."""
    f = np.zeros((2, 2, len(h)))
    f[0, 0] = f[1, 1] = 1.0
    f[0, 1] = h
    return f


def statsmodels_model(t, z, r, q, q_form="continuous") -> KalmanSmoother:
    """One axis: times ``t`` (s), measurements ``z`` (NaN = missing), variance ``r`` (scalar or per row)."""
    n = len(t)
    h = np.append(np.diff(t), 0.0)
    ks = KalmanSmoother(k_endog=1, k_states=2, k_posdef=2)
    ks.bind(np.asarray(z, dtype=float).reshape(1, -1).copy())
    ks["design"] = np.array([[1.0, 0.0]])
    ks["obs_cov"] = np.broadcast_to(np.asarray(r, dtype=float), (n,)).reshape(1, 1, n).copy()
    ks["transition"] = transition(h)
    ks["selection"] = np.eye(2)
    ks["state_cov"] = q * unit_q(h, q_form)
    ks.initialize_diffuse()
    return ks
