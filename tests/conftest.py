"""Shared fixtures: small, fast site files built in temporary folders."""

from __future__ import annotations

from pathlib import Path

import pytest
from shared import BASE_SITE


@pytest.fixture
def site_file(tmp_path: Path):
    """Write a site file (BASE_SITE unless text is given) and return its path."""

    def make(text: str = BASE_SITE, name: str = "spot.toml") -> Path:
        path = tmp_path / name
        path.write_text(text, encoding="utf-8")
        return path

    return make
