"""The folders shipped with siteharvest: the dashboard's assets and the sample spots.

In a source checkout they sit at the top of the repository; a wheel carries them inside this package
(pyproject.toml maps ``siteharvest_app.assets`` and ``siteharvest_app.sample_sites`` onto those folders;
the repository's ``app/`` folder itself installs as ``siteharvest_app``).
"""

from __future__ import annotations

from pathlib import Path

HERE = Path(__file__).resolve().parent


def bundled_folder(name: str, package_dir: Path = HERE) -> Path:
    """``<package>/<name>`` when an installed wheel holds it, else ``<checkout>/<name>``."""
    inside = package_dir / name
    return inside if inside.is_dir() else package_dir.parent / name


ASSETS = bundled_folder("assets")
SAMPLE_SITES = bundled_folder("sample_sites")
