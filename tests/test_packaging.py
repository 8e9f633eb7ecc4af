"""What a wheel carries: every module, the dashboard's assets and the sample spots, under the project's own
top-level names. Most checks read pyproject.toml's setuptools tables against the source tree; one builds
the wheel, installs it into a new virtual environment (no network: the dependencies come from this
interpreter's site-packages) and runs the command line and the dashboard from there."""

from __future__ import annotations

import fnmatch
import json
import os
import socket
import subprocess
import sys
import time
import tomllib
import urllib.request
import zipfile
from pathlib import Path

import pytest
from siteharvest_app.bundled import ASSETS, SAMPLE_SITES, bundled_folder

ROOT = Path(__file__).resolve().parents[1]
SETUPTOOLS = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))["tool"]["setuptools"]


def test_every_python_package_of_the_tree_is_in_the_wheel():
    installed_as = {"siteharvest": "siteharvest", "app": "siteharvest_app"}
    on_disk = {".".join((installed_as[top], *p.parent.relative_to(ROOT / top).parts))
               for top in installed_as for p in (ROOT / top).rglob("__init__.py")}
    listed = set(SETUPTOOLS["packages"])
    assert on_disk <= listed, f"add to [tool.setuptools] packages: {sorted(on_disk - listed)}"
    for name in listed - on_disk:  # the rest are data folders mapped onto the checkout's top level
        assert (ROOT / SETUPTOOLS["package-dir"][name]).is_dir()
    assert {name.split(".")[0] for name in listed} == {"siteharvest", "siteharvest_app"}


def test_every_asset_and_sample_file_is_in_the_wheel():
    for package, folder in SETUPTOOLS["package-dir"].items():
        if package not in SETUPTOOLS["package-data"]:
            continue  # a code package (its modules are found by the packages list)
        patterns = SETUPTOOLS["package-data"][package]
        files = [p.relative_to(ROOT / folder).as_posix() for p in (ROOT / folder).rglob("*")
                 if p.is_file() and "__pycache__" not in p.parts]
        assert files, folder
        missing = [f for f in files if not any(fnmatch.fnmatch(f, pat) for pat in patterns)]
        assert not missing, f"{folder}: no package-data pattern for {missing}"


def test_bundled_folders_are_the_checkouts_here_and_the_packages_in_a_wheel(tmp_path):
    assert ASSETS == ROOT / "assets" and (ASSETS / "siteharvest.css").is_file()
    assert SAMPLE_SITES == ROOT / "sample_sites" and any(SAMPLE_SITES.glob("*.toml"))
    package = tmp_path / "site-packages" / "siteharvest_app"
    (package / "assets").mkdir(parents=True)
    (tmp_path / "site-packages" / "assets").mkdir()  # another distribution's top-level folder is not ours
    assert bundled_folder("assets", package) == package / "assets"
    assert bundled_folder("sample_sites", package) == tmp_path / "site-packages" / "sample_sites"


def _free_port() -> int:
    with socket.socket() as sock:
        sock.bind(("127.0.0.1", 0))
        return int(sock.getsockname()[1])


@pytest.fixture(scope="module")
def installed_wheel(tmp_path_factory) -> Path:
    """A virtual environment holding only the built wheel (its dependencies seen from this interpreter)."""
    tmp = tmp_path_factory.mktemp("wheel")
    subprocess.run([sys.executable, "-m", "pip", "wheel", str(ROOT), "--no-deps", "--no-build-isolation",
                    "--disable-pip-version-check", "-q", "-w", str(tmp / "dist")], check=True, cwd=tmp)
    wheel = next((tmp / "dist").glob("siteharvest-*.whl"))
    with zipfile.ZipFile(wheel) as archive:
        tops = {name.split("/")[0] for name in archive.namelist()}
    assert {t for t in tops if not t.endswith(".dist-info")} == {"siteharvest", "siteharvest_app"}
    venv = tmp / "venv"
    subprocess.run([sys.executable, "-m", "venv", "--system-site-packages", str(venv)], check=True)
    python = venv / "bin" / "python"
    subprocess.run([str(python), "-m", "pip", "install", "--no-deps", "--no-index", "-q",
                    "--disable-pip-version-check", str(wheel)], check=True, cwd=tmp)
    return venv


def _venv_env(venv: Path) -> dict[str, str]:
    env = {k: v for k, v in os.environ.items() if k not in ("PYTHONPATH", "VIRTUAL_ENV")}
    return {**env, "PATH": f"{venv / 'bin'}{os.pathsep}{env.get('PATH', '')}"}


def test_the_wheel_installs_only_our_names_and_runs_the_command_line(installed_wheel, tmp_path):
    venv = installed_wheel
    where = subprocess.run([str(venv / "bin" / "python"), "-c",
                            "import json, siteharvest, siteharvest_app, importlib.util as u; "
                            "print(json.dumps([siteharvest.__file__, siteharvest_app.__file__, "
                            "u.find_spec('app') is not None]))"],
                           cwd=tmp_path, env=_venv_env(venv), capture_output=True, text=True, check=True)
    core, dashboard, has_app = json.loads(where.stdout)
    assert Path(core).is_relative_to(venv) and Path(dashboard).is_relative_to(venv)  # not the checkout
    assert not has_app  # nothing named "app" came with it
    sample = Path(dashboard).parent / "sample_sites" / "roof-parapet.toml"
    out = subprocess.run([str(venv / "bin" / "siteharvest"), "assess", str(sample), "--json"], cwd=tmp_path,
                         env=_venv_env(venv), capture_output=True, text=True, timeout=300)
    assert out.returncode == 0, out.stderr
    assert json.loads(out.stdout)["sources"]


def test_the_wheel_serves_the_dashboard(installed_wheel, tmp_path):
    venv = installed_wheel
    port = _free_port()
    server = subprocess.Popen([str(venv / "bin" / "siteharvest"), "serve", "--port", str(port)], cwd=tmp_path,
                              env=_venv_env(venv), stdout=subprocess.PIPE, stderr=subprocess.STDOUT, text=True)
    try:
        deadline = time.monotonic() + 120
        while True:
            try:
                with urllib.request.urlopen(f"http://127.0.0.1:{port}/_dash-layout", timeout=5) as reply:
                    layout = reply.read().decode("utf-8")
                break
            except OSError:
                assert server.poll() is None, server.stdout.read() if server.stdout else ""
                assert time.monotonic() < deadline, "the installed dashboard did not answer"
                time.sleep(0.5)
        for sample in sorted(SAMPLE_SITES.glob("*.toml")):  # the bundled samples are served, each by name
            name = tomllib.loads(sample.read_text(encoding="utf-8"))["spot"]["name"]
            assert json.dumps(name)[1:-1] in layout, name
        with urllib.request.urlopen(f"http://127.0.0.1:{port}/assets/siteharvest.css", timeout=5) as reply:
            assert reply.status == 200
    finally:
        server.terminate()
        server.wait(timeout=30)
