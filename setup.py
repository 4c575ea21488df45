"""Only what pyproject.toml cannot say: the package list including the data-only packages.

``resources/`` and ``demo_tracks/`` stay top-level folders in the checkout; the wheel carries them as
``editor/bundled/resources`` and ``editor/bundled/demo_tracks`` (``package-dir`` in pyproject.toml).
"""
from setuptools import find_packages, setup

BUNDLED = ["editor.bundled.resources", "editor.bundled.resources.icons", "editor.bundled.demo_tracks"]

setup(packages=find_packages(include=["editor", "editor.*"]) + BUNDLED)
