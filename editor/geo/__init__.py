"""Qt-free geodesy: ellipsoidal step lengths and the local planar projection."""
from .distance import WGS84, geodesic_steps, step_lengths
from .projection import LocalProjection

__all__ = ["WGS84", "geodesic_steps", "step_lengths", "LocalProjection"]
