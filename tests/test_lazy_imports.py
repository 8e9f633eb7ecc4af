"""What a command imports: ``--version`` and ``--help`` nothing heavy, a spot only the packages its path
needs (a spot with no sun geometry and lamp light only: neither pvlib nor colour-science), and the copies
that make that possible agree with the library they come from. No timings here (see benchmarks/)."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import numpy as np
import pvlib
import pytest
from shared import ROOT, SAMPLES

from siteharvest import photometry as ph
from siteharvest.sources.solar import MOUNTING_PRESETS
from siteharvest.sources.thermoelectric import standard_pressure_pa
from siteharvest.weather import TMY3_VARIABLE_MAP, pvlib_data_dir

HEAVY = ("pvlib", "colour", "numpy", "pandas", "numba", "scipy", "pydantic", "plotly", "dash")

# Runs ``python -m siteharvest ARGS`` in this interpreter, then names the heavy packages it imported.
PROBE = f"""
import runpy, sys
sys.argv = ["siteharvest", *sys.argv[1:]]
try:
    runpy.run_module("siteharvest", run_name="__main__", alter_sys=True)
except SystemExit as exc:
    if exc.code not in (0, None):
        raise
print("LOADED", *sorted({{m.split(".")[0] for m in sys.modules}} & set({HEAVY!r})), file=sys.stderr)
"""


def loaded_by(*args: str) -> set[str]:
    """The heavy top-level packages a ``siteharvest`` process imported to run ``args``."""
    done = subprocess.run([sys.executable, "-c", PROBE, *args], cwd=ROOT, capture_output=True, text=True,
                          timeout=300)
    assert done.returncode == 0, done.stderr[-2000:]
    line = [x for x in done.stderr.splitlines() if x.startswith("LOADED")][-1]
    return set(line.split()[1:])


@pytest.mark.parametrize("args", [("--version",), ("--help",), ("assess", "--help"), ("report", "--help")])
def test_version_and_help_import_nothing_heavy(args):
    assert loaded_by(*args) == set()


def test_a_spot_imports_only_what_its_path_needs():
    plant = str(SAMPLES / "plant-room.toml")  # lamps, a thermoelectric module, a shaker: no sun geometry
    loaded_by("assess", plant, "--json")       # the first run may have to keep the CIE tables
    loaded = loaded_by("assess", plant, "--json")
    assert {"numpy", "pandas", "numba", "pydantic"} <= loaded  # the probe sees what the run imports
    assert not {"pvlib", "colour"} & loaded
    # a solar spot does need pvlib: the probe sees it
    assert "pvlib" in loaded_by("assess", str(SAMPLES / "roof-parapet.toml"), "--json")


@pytest.fixture
def table_dir(tmp_path, monkeypatch):
    """The CIE tables kept in a folder of the test's own, and computed afresh before and after."""
    monkeypatch.setattr(ph, "TABLE_CACHE_DIR", tmp_path)
    ph._tables.cache_clear()
    yield tmp_path
    ph._tables.cache_clear()


def test_kept_cie_tables_are_those_of_colour_science(table_dir, monkeypatch):
    first = ph._tables()
    kept = ph.table_cache_file()
    assert kept is not None and kept.parent == table_dir and kept.is_file()
    ph._tables.cache_clear()

    def no_colour() -> dict:
        raise AssertionError("the kept tables should have been read")

    fresh = ph.tables_from_colour()
    monkeypatch.setattr(ph, "tables_from_colour", no_colour)
    again = ph._tables()
    assert set(again) == set(fresh) == {ph.PHOTOPIC_KEY, *ph.LIGHT_SOURCES}
    for key, table in fresh.items():
        assert again[key].dtype == table.dtype and np.array_equal(again[key], table), key
        assert np.array_equal(first[key], table), key
        assert not again[key].flags.writeable
    assert ph.spectrum("fluorescent") is again["fluorescent"] and ph.photopic_v() is again[ph.PHOTOPIC_KEY]


def test_a_damaged_table_file_is_computed_again(table_dir):
    path = ph.table_cache_file()
    assert path is not None
    path.write_bytes(b"not a numpy archive")
    tables = ph._tables()
    assert np.array_equal(tables["incandescent"], ph.tables_from_colour()["incandescent"])
    assert ph._read_tables(path) is not None  # written again, whole


def test_no_table_folder_still_gives_the_tables(monkeypatch):
    monkeypatch.setattr(ph, "TABLE_CACHE_DIR", None)
    ph._tables.cache_clear()
    try:
        assert ph.table_cache_file() is None
        assert np.array_equal(ph.spectrum("daylight"), ph.tables_from_colour()["daylight"])
    finally:
        ph._tables.cache_clear()


def test_copies_agree_with_pvlib():
    # The same mapping, formula and table as pvlib's (the reference library they are copied from).
    assert TMY3_VARIABLE_MAP == pvlib.iotools.tmy.VARIABLE_MAP
    for altitude_m in (-400.0, 0.0, 263.0, 1500.5, 4000.0):
        assert standard_pressure_pa(altitude_m) == pvlib.atmosphere.alt2pres(altitude_m)
    king = pvlib.temperature.TEMPERATURE_MODEL_PARAMETERS["sapm"]
    rows = {"open-rack": "open_rack_glass_polymer", "close-to-wall": "close_mount_glass_glass",
            "insulated-back": "insulated_back_glass_polymer"}
    assert dict(MOUNTING_PRESETS) == {
        name: {"cell_temp_a": king[row]["a"], "cell_temp_b": king[row]["b"], "cell_temp_rise_c": king[row]["deltaT"]}
        for name, row in rows.items()}
    assert pvlib_data_dir() == Path(pvlib.__file__).resolve().parent / "data"


def test_the_kernel_comes_from_numbas_cache_and_only_the_one_a_run_uses():
    env = {**os.environ, "NUMBA_DEBUG_CACHE": "1"}
    cmd = [sys.executable, "-m", "siteharvest", "assess", str(SAMPLES / "north-wall.toml")]
    subprocess.run(cmd, cwd=ROOT, env=env, capture_output=True, check=True, timeout=600)  # may compile
    done = subprocess.run(cmd, cwd=ROOT, env=env, capture_output=True, text=True, check=True, timeout=600)
    cache = [line for line in done.stdout.splitlines() if line.startswith("[cache]")]
    assert any("data loaded" in line and "kernel._run-" in line for line in cache), cache
    assert not any("saved" in line for line in cache), cache        # nothing compiled again
    assert not any("_run_steady" in line for line in cache), cache  # the sizing kernel: not for assess
