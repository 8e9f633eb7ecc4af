"""What a wheel carries: every module, the dashboard's assets and the sample spots (the checks read
pyproject.toml's setuptools tables against the source tree, so no build and no network is needed)."""

from __future__ import annotations

import fnmatch
import tomllib
from pathlib import Path

from app.bundled import ASSETS, SAMPLE_SITES, bundled_folder

ROOT = Path(__file__).resolve().parents[1]
SETUPTOOLS = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))["tool"]["setuptools"]


def test_every_python_package_of_the_tree_is_in_the_wheel():
    on_disk = {".".join(p.parent.relative_to(ROOT).parts) for top in ("siteharvest", "app")
               for p in (ROOT / top).rglob("__init__.py")}
    listed = set(SETUPTOOLS["packages"])
    assert on_disk <= listed, f"add to [tool.setuptools] packages: {sorted(on_disk - listed)}"
    for name in listed - on_disk:  # the rest are data folders mapped onto the checkout's top level
        assert (ROOT / SETUPTOOLS["package-dir"][name]).is_dir()


def test_every_asset_and_sample_file_is_in_the_wheel():
    for package, folder in SETUPTOOLS["package-dir"].items():
        patterns = SETUPTOOLS["package-data"][package]
        files = [p.relative_to(ROOT / folder).as_posix() for p in (ROOT / folder).rglob("*")
                 if p.is_file() and "__pycache__" not in p.parts]
        assert files, folder
        missing = [f for f in files if not any(fnmatch.fnmatch(f, pat) for pat in patterns)]
        assert not missing, f"{folder}: no package-data pattern for {missing}"


def test_bundled_folders_are_the_checkouts_here_and_the_packages_in_a_wheel(tmp_path):
    assert ASSETS == ROOT / "assets" and (ASSETS / "siteharvest.css").is_file()
    assert SAMPLE_SITES == ROOT / "sample_sites" and any(SAMPLE_SITES.glob("*.toml"))
    package = tmp_path / "site-packages" / "app"
    (package / "assets").mkdir(parents=True)
    (tmp_path / "site-packages" / "assets").mkdir()  # another distribution's top-level folder is not ours
    assert bundled_folder("assets", package) == package / "assets"
    assert bundled_folder("sample_sites", package) == tmp_path / "site-packages" / "sample_sites"
