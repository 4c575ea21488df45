"""The three invented scenarios of the demo recordings: their fictional places, shapes and error models.

Kept apart from ``generate.py`` so the tables can be read (and tuned) on their own. Fictional names only.
"""
from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class ErrorModel:
    """How the simulated logger errs. Metres and seconds; horizontal sigmas are per axis.

    Sources (see /work/shared/check-values.md, "GNSS and barometric error"): the GPS SPS Performance
    Standard (2008 ed.) gives <= 3 m horizontal / <= 5 m vertical (95 %) for good receivers and
    GPS.gov quotes ~4.9 m for smartphones under open sky; our open-sky defaults give a 95 % radius of
    about 2.45 * hypot(2.0, 1.2) = 5.7 m. Consumer receivers under trees show 10-30 m errors,
    time-correlated over tens of seconds, and GNSS elevation is several times noisier than position
    (common practice, no single source); elevation stored at 1 m resolution is common practice too.
    """

    corr_sigma_m: float = 2.0      # time-correlated (Ornstein-Uhlenbeck) part
    corr_tau_s: float = 30.0
    white_sigma_m: float = 1.2     # epoch-to-epoch jitter
    ele_corr_sigma_m: float = 5.0  # slow, smooth elevation wander
    ele_corr_tau_s: float = 120.0
    ele_white_sigma_m: float = 0.5
    ele_step_m: float = 1.0        # quantisation of the stored elevation
    spike_range_m: tuple[float, float] = (20.0, 80.0)   # multipath outliers on single fixes
    drift_sigma_m: float = 7.0     # extra wander while standing still
    drift_tau_s: float = 90.0
    catch_up_m: float = 190.0      # offset of the first fix after a signal loss, then decays
    catch_up_tau_s: float = 6.0
    catch_up_ele_m: float = 35.0
    reacquire_s: float = 6.0       # time from leaving the tunnel to the first fix


@dataclass(frozen=True)
class Scenario:
    """One invented recording. Positions along the path are given as *corner positions*: 3.0 is the
    fourth corner, 3.5 half-way to the fifth (measured on the unsmoothed polyline)."""

    stem: str
    title: str
    description: str
    track_type: str
    origin: tuple[float, float]                  # lat, lon (degrees) of the local east/north frame
    start_utc: str
    corners: tuple[tuple[float, float, float], ...]   # east km, north km, true elevation m
    closed: bool
    length_m: float                              # the polyline is scaled to this length
    corner_sigma_m: float                        # Gaussian rounding of corners
    profile_sigma_m: float                       # Gaussian smoothing of the elevation profile
    rollers: tuple[float, int]                   # amplitude m, number of waves over the path
    activity: str                                # "ride" or "hike" (speed and heart-rate model)
    cruise_mps: float
    sample_s: int                                # the logger's nominal interval
    stops: tuple[tuple[float, float], ...] = ()  # (corner pos, s) standing still, logger on
    pauses: tuple[tuple[float, float], ...] = ()  # (corner pos, s) logger paused: new segment
    tunnel: tuple[float, float] | None = None    # corner positions of entry and exit
    poor_sky: tuple[tuple[float, float, float], ...] = ()  # (from, to, error factor)
    spikes: int = 4
    hdop: bool = False
    sat_fix: bool = False
    waypoints: tuple[tuple[str, str, float | None], ...] = ()  # name, desc, corner pos (None: top)
    planned_route: str | None = None
    errors: ErrorModel = ErrorModel()


SCENARIOS = (
    Scenario(
        "demo_ride", "Vell Valley loop over Orrin Saddle",
        "Invented road-bike loop: valley road, a forest gorge, switchbacks to a saddle, a cafe pause "
        "in Harnby (logger paused: two segments) and a wait at a level crossing.",
        "road cycling", (47.1830, 9.0610), "2023-06-17T06:42:00",
        ((0, 0, 520), (4.5, 0.6, 540), (9, 1.5, 565), (11, 4, 640), (12.2, 4.8, 720),
         (11.0, 5.4, 800), (12.3, 6.1, 880), (11.2, 6.7, 960), (11.5, 7.5, 1080), (8, 10, 780),
         (5, 9.5, 610), (1, 8, 690), (-2, 5, 560), (-1.5, 2, 600)),
        closed=True, length_m=40000.0, corner_sigma_m=40.0, profile_sigma_m=250.0, rollers=(10.0, 14),
        activity="ride", cruise_mps=8.3, sample_s=1,
        stops=((11.6, 150.0),), pauses=((10.0, 900.0),), poor_sky=((2.2, 3.0, 3.5),),
        spikes=6, hdop=True,
        waypoints=(("Start", "Harrowby village green (start and finish)", 0.0),
                   ("Orrin Saddle", "Summit of the loop", None),
                   ("Cafe Harnby", "Pause; the logger was stopped here", 10.0))),
    Scenario(
        "demo_hike", "Skarrow Peak by the Tallbeck path",
        "Invented hill walk: up a stream valley and steep forest switchbacks to Skarrow Peak, a rest "
        "at the summit (the logger keeps recording and drifts), back down the east ridge.",
        "hiking", (47.2140, 9.1990), "2023-09-02T08:05:00",
        ((0, 0, 880), (0.8, 1.2, 960), (1.5, 2.6, 1060), (2.1, 3.3, 1150), (2.6, 3.5, 1240),
         (2.2, 3.8, 1320), (2.8, 4.1, 1410), (2.4, 4.4, 1490), (3.0, 4.7, 1580), (3.3, 5.0, 1690),
         (4.2, 4.6, 1600), (4.9, 3.8, 1470), (5.0, 2.8, 1330), (4.4, 1.8, 1180), (3.6, 1.0, 1060),
         (2.4, 0.4, 960), (1.0, -0.2, 900)),
        closed=True, length_m=12500.0, corner_sigma_m=15.0, profile_sigma_m=100.0, rollers=(4.0, 10),
        activity="hike", cruise_mps=1.35, sample_s=2,
        stops=((9.0, 420.0),), poor_sky=((2.6, 4.4, 2.5),), spikes=4,
        waypoints=(("Tallbeck trailhead", "Start and finish", 0.0),
                   ("Skarrow Peak", "Summit; rest stop", None)),
        planned_route="Planned: Tallbeck path up, east ridge down",
        # at walking pace a smoother, slower error: the receiver's own filter hides more jitter
        errors=ErrorModel(white_sigma_m=0.6, corr_tau_s=60.0, drift_sigma_m=5.0)),
    Scenario(
        "demo_tunnel", "Lindle rail trail through Cowl Tunnel",
        "Invented ride on a former railway line from Lindle to Ostry; the 650 m Cowl Tunnel cuts the "
        "satellite signal and the first fixes after it land far off before converging.",
        "cycling", (47.1510, 8.9790), "2023-10-08T13:20:00",
        ((0, 0, 610), (2.0, 0.5, 625), (4.0, 1.4, 650), (5.5, 2.6, 668), (6.2, 3.0, 675),
         (6.8, 3.3, 680), (8.5, 4.2, 700), (10.5, 4.6, 715), (12.0, 5.5, 705)),
        closed=False, length_m=13000.0, corner_sigma_m=60.0, profile_sigma_m=300.0, rollers=(2.0, 6),
        activity="ride", cruise_mps=6.8, sample_s=1,
        tunnel=(4.0, 5.0), poor_sky=((3.3, 4.0, 2.0),), spikes=3, hdop=True, sat_fix=True,
        waypoints=(("Lindle station", "Start", 0.0), ("Cowl Tunnel west portal", "Tunnel entry", 4.0),
                   ("Ostry", "Finish", 8.0))),
)
