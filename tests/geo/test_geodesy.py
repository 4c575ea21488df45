"""Geodesy against published worked examples and an independent reference library."""
import numpy as np
import pytest
from geographiclib.geodesic import Geodesic
from pyproj import Geod, Transformer

from editor.geo import LocalProjection, geodesic_steps, step_lengths


def dms(d, m, s):
    sign = -1 if d < 0 else 1
    return sign * (abs(d) + m / 60 + s / 3600)


# Geoscience Australia / ICSM worked example (Vincenty inverse on GRS80), Flinders Peak -> Buninyong,
# as quoted in tests/reference/check-values.md: 54 972.271 m.
FLINDERS = (dms(-37, 57, 3.72030), dms(144, 25, 29.52440))
BUNINYONG = (dms(-37, 39, 10.15610), dms(143, 55, 35.38390))


def test_vincenty_worked_example_grs80():
    az12, az21, dist = Geod(ellps="GRS80").inv(FLINDERS[1], FLINDERS[0], BUNINYONG[1], BUNINYONG[0])
    assert dist == pytest.approx(54972.271, abs=1e-3)
    assert az12 % 360 == pytest.approx(dms(306, 52, 5.37), abs=0.01 / 3600)


def test_karney_2013_examples_wgs84():
    # Karney (2013), "Algorithms for geodesics", J. Geodesy 87:43-55 (values in tests/reference/check-values.md)
    g = Geod(ellps="WGS84")
    # nearly antipodal inverse
    assert geodesic_steps(np.array([-30.0, 29.9]), np.array([0.0, 179.8]))[0] == pytest.approx(19989832.827610, abs=1e-3)
    # short inverse: 4.944208 m
    assert step_lengths(np.array([-30.12345, -30.12344]), np.array([0.0, 0.00005]))[0] == pytest.approx(4.944208, abs=1e-6)
    # direct problem, to check the ellipsoid we use is WGS84 (a = 6378137, 1/f = 298.257223563)
    lon2, lat2, _ = g.fwd(0.0, 40.0, 30.0, 10_000_000.0)
    assert lat2 == pytest.approx(41.79331020506, abs=1e-10)
    assert lon2 == pytest.approx(137.84490004377, abs=1e-10)


def test_geographiclib_documentation_example():
    # geographiclib documentation: Wellington -> Salamanca, s12 = 19 959 679.267 m
    assert geodesic_steps(np.array([-41.32, 40.96]), np.array([174.81, -5.50]))[0] == pytest.approx(19959679.267, abs=1e-3)


def test_step_lengths_match_geographiclib_on_random_tracks():
    rng = np.random.default_rng(42)
    for lat0 in (-70.0, -33.9, 0.0, 47.3, 69.0, 88.5):
        n = 400
        step_deg = rng.choice([1e-5, 1e-4, 1e-3, 0.02, 1.0], size=n)  # centimetres up to ~100 km jumps
        lat = np.clip(lat0 + np.cumsum(rng.normal(0, 1, n) * step_deg), -89.9, 89.9)
        lon = (rng.uniform(-180, 180) + np.cumsum(rng.normal(0, 1, n) * step_deg) + 180) % 360 - 180
        ours = step_lengths(lat, lon)
        # independent reference: geographiclib (Karney's algorithm, PyPI)
        ref = np.array([Geodesic.WGS84.Inverse(lat[i], lon[i], lat[i + 1], lon[i + 1])["s12"] for i in range(n - 1)])
        np.testing.assert_allclose(ours, ref, rtol=1e-6, atol=1e-6)


def test_antimeridian_steps_are_short():
    lat = np.array([-17.0, -17.0])
    lon = np.array([179.9999, -179.9999])
    ref = Geodesic.WGS84.Inverse(-17.0, 179.9999, -17.0, -179.9999)["s12"]  # geographiclib
    assert step_lengths(lat, lon)[0] == pytest.approx(ref, rel=1e-9)
    assert ref < 30


def test_projection_reproduces_published_utm_coordinates():
    # Same Geoscience Australia source: Flinders Peak in UTM zone 55 south on GRS80,
    # E 273 741.2966, N 5 796 489.7769 (tests/reference/check-values.md).
    utm55 = LocalProjection(0.0, 147.0)
    # our projection is tmerc with k0=1 and no false origin; apply UTM's k0/false origin via the same formula
    t = Transformer.from_crs("+proj=longlat +ellps=GRS80", "+proj=utm +zone=55 +south +ellps=GRS80", always_xy=True)
    e, n = t.transform(FLINDERS[1], FLINDERS[0])
    assert e == pytest.approx(273741.2966, abs=1e-3) and n == pytest.approx(5796489.7769, abs=1e-3)
    # and ours, on WGS84 at the same central meridian, scaled by UTM's k0 = 0.9996 with the false origin:
    x, y = utm55.to_xy(FLINDERS[0], FLINDERS[1])
    # GRS80 and WGS84 differ by ~0.1 mm in this region (flattening differs in the 10th digit)
    assert 0.9996 * x + 500000 == pytest.approx(273741.2966, abs=1e-3)
    assert 0.9996 * y + 10000000 == pytest.approx(5796489.7769, abs=1e-3)


@pytest.mark.parametrize("lat0,lon0", [(46.5, 8.0), (-17.0, 179.99), (78.2, 15.6), (89.5, -40.0), (0.0, 0.0)])
def test_projection_round_trip_below_a_millimetre(lat0, lon0):
    rng = np.random.default_rng(1)
    lat = np.clip(lat0 + rng.normal(0, 0.1, 2000), -89.99, 89.99)
    lon = (lon0 + rng.normal(0, 0.1, 2000) + 180) % 360 - 180
    proj = LocalProjection.centred_on(lat, lon)
    x, y = proj.to_xy(lat, lon)
    lat2, lon2 = proj.to_latlon(x, y)
    error_m = geodesic_steps(np.ravel(np.column_stack([lat, lat2])), np.ravel(np.column_stack([lon, lon2])))[::2]
    assert error_m.max() < 1e-3


def test_planar_distances_within_transverse_mercator_scale_error():
    # Within 20 km of the central meridian the point scale of transverse Mercator is at most
    # 1 + x^2 / (2 R^2) ~ 1 + 4.9e-6 (standard TM scale formula, Snyder 1987 "Map Projections - A Working
    # Manual", eq. 8-11, recalled from memory); we allow 6e-6.
    rng = np.random.default_rng(5)
    lat0, lon0 = 52.0, 13.0
    lat = lat0 + rng.uniform(-0.17, 0.17, 1000)
    lon = lon0 + rng.uniform(-0.25, 0.25, 1000)
    proj = LocalProjection(lat0, lon0)
    x, y = proj.to_xy(lat, lon)
    inside = np.hypot(x, y) < 20_000
    lat, lon, x, y = lat[inside], lon[inside], x[inside], y[inside]
    planar = np.hypot(np.diff(x), np.diff(y))
    geodesic = geodesic_steps(lat, lon)
    assert np.abs(planar / geodesic - 1).max() < 6e-6


def test_track_across_antimeridian_is_continuous_in_the_plane():
    lon = np.linspace(179.5, 180.5, 101)
    lon = (lon + 180) % 360 - 180
    lat = np.full(101, -16.5)
    proj = LocalProjection.centred_on(lat, lon)
    x, y = proj.to_xy(lat, lon)
    assert np.all(np.diff(x) > 0)
    assert np.hypot(np.diff(x), np.diff(y)).max() < 1100
