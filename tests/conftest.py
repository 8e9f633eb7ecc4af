"""Shared fixtures: small, fast site files built in temporary folders."""

from __future__ import annotations

import os
from pathlib import Path

import pytest
from hypothesis import settings
from shared import BASE_SITE


@pytest.fixture
def site_file(tmp_path: Path):
    """Write a site file (BASE_SITE unless text is given) and return its path."""

    def make(text: str = BASE_SITE, name: str = "spot.toml") -> Path:
        path = tmp_path / name
        path.write_text(text, encoding="utf-8")
        return path

    return make


# CI runs each property test on the same examples every time (a failure there is then repeatable);
# a developer's run keeps searching new ones.
settings.register_profile("ci", derandomize=True, print_blob=True)
if os.environ.get("CI"):
    settings.load_profile("ci")
