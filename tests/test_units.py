"""The units a tool setting is shown in (editor.units.UnitSystem.setting_unit), Qt-free.

Outside reference: the international foot is exactly 0.3048 m and the international mile exactly
1609.344 m (the 1959 international yard and pound agreement; NIST SP 811, appendix B).
"""
from __future__ import annotations

import pytest

from editor.units import IMPERIAL, METRIC, UNIT_WORDS

FOOT_M = 0.3048  # exact (NIST SP 811)


def test_setting_units_match_the_definitions():
    assert IMPERIAL.setting_unit("m") == (FOOT_M, "ft")
    size, name = IMPERIAL.setting_unit("m²")
    assert name == "ft²" and size == pytest.approx(0.09290304, rel=1e-15)  # 0.3048² exactly
    size, name = IMPERIAL.setting_unit("m/s")
    assert name == "mph" and size == pytest.approx(0.44704, rel=1e-15)  # 1609.344 m / 3600 s
    size, name = METRIC.setting_unit("m/s")
    assert name == "km/h" and size == pytest.approx(1 / 3.6, rel=1e-15)
    assert METRIC.setting_unit("m") == (1.0, "m") and METRIC.setting_unit("m²") == (1.0, "m²")


def test_other_units_are_shown_as_stored_and_every_shown_unit_has_words():
    for units in (METRIC, IMPERIAL):
        for stored in ("s", "%", "points", ""):
            assert units.setting_unit(stored) == (1.0, stored)
        for stored in ("m", "m²", "m/s"):
            assert units.setting_unit(stored)[1] in UNIT_WORDS
