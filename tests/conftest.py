"""Test-wide settings: Qt draws offscreen, so the suite runs on machines without a screen.

The per-user data folder (crash-recovery journals) is moved into a temporary folder for every
test, so no test reads or writes the user's own journals.
"""
import os

import pytest

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")


@pytest.fixture(autouse=True)
def private_data_dir(tmp_path_factory, monkeypatch):
    from editor.recovery import DATA_DIR_VARIABLE

    folder = tmp_path_factory.mktemp("user-data")
    monkeypatch.setenv(DATA_DIR_VARIABLE, str(folder))
    return folder
