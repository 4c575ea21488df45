"""Trackwright: a desktop editor for recorded GPS tracks."""
__version__ = "0.1.0"

#: The caution shown wherever a cleaned track is offered (README, About box, the batch command).
CAUTION = "Cleaned tracks are estimates, not surveyed data, and are not for navigation."
