"""Test-wide settings: Qt draws offscreen, so the suite runs on machines without a screen."""
import os

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
