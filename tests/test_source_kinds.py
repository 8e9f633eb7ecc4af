"""A source kind is one record: a kind registered only here shows in the command line, the editor and a
sizing map, with no edit anywhere else."""

from __future__ import annotations

import json
from typing import Literal

import numpy as np
import pytest
from siteharvest_app.fieldspec import apply_action, controls_of, editor_groups

from siteharvest import cli
from siteharvest.assess import prepare
from siteharvest.fields import quantity
from siteharvest.site import parse_site
from siteharvest.sizing import sizing_map
from siteharvest.sources import (
    SOURCE_KINDS,
    SizeKnob,
    SourceBase,
    SourceKind,
    SourceOutput,
    check_kind,
    register_kind,
    unregister_kind,
)
from siteharvest.timegrid import HOURS_PER_YEAR


class ConstantCellSource(SourceBase):
    """A cell that gives the same power every hour."""

    kind: Literal["test_cell"] = "test_cell"
    power_uw: float = quantity(40.0, "uW", "power the cell gives every hour", gt=0, le=1e6, step=1)


def constant_cell_output(spec: ConstantCellSource, ctx) -> SourceOutput:
    """Constant power [W] at the terminals, no voltage."""
    return SourceOutput(power_w=np.full(HOURS_PER_YEAR, spec.power_uw * 1e-6))



TEST_KIND = SourceKind(
    kind="test_cell", model=ConstantCellSource, output=constant_cell_output, name="test cell", group="test",
    group_title="Test cells", size_knobs=(SizeKnob("power_uw", "Cell power", proportional=True),),
    new_source={"power_uw": 25.0}, cautions=("electrical_enclosure",))

SITE = {
    "spot": {"name": "bench", "latitude_deg": 48.0, "longitude_deg": 10.0, "utc_offset_h": 1.0},
    "weather": {"synthetic": {"seed": 1}},
    "node": {"supply_v": 3.0, "sleep_current_ua": 1.5,
             "task": [{"name": "send", "current_ma": 5.0, "duration_ms": 20.0, "every_s": 300.0}]},
    "store": {"kind": "supercapacitor", "capacitance_f": 1.0},
    "source": [{"id": "cell", "kind": "test_cell", "power_uw": 40.0}],
}


@pytest.fixture
def test_cell():
    register_kind(TEST_KIND)
    yield TEST_KIND
    unregister_kind("test_cell")


def test_cli_assess_sees_the_new_kind(test_cell, tmp_path, capsys):
    import tomli_w

    path = tmp_path / "bench.toml"
    path.write_text(tomli_w.dumps(SITE))
    assert cli.main(["assess", "--json", str(path)]) == 0
    out = json.loads(capsys.readouterr().out)
    (cell,) = out["sources"]
    assert cell["id"] == "cell" and cell["kind"] == "test_cell"
    # 40 uW for 8760 h is 0.3504 Wh at the terminals; conditioning takes a share (energy balance)
    assert 0 < cell["annual_energy_wh"] <= 40e-6 * 8760


def test_editor_shows_the_new_kind(test_cell):
    groups = {g.key: g for g in editor_groups(SITE)}
    assert groups["test"].title == "Test cells"
    (block,) = groups["test"].items
    assert block.title == "cell · test cell"
    power = next(c for c in controls_of(block.items) if c.name == "power_uw")
    assert power.unit == "uW" and power.bounds == "> 0, ≤ 1000000" and power.label == "power"
    assert ("add-source:test_cell", "add a test cell") in groups["test"].add_actions
    added = apply_action(SITE, "add-source:test_cell", "source")
    assert added["source"][-1] == {"id": "test-cell-1", "kind": "test_cell", "label": "new test cell 1",
                                   "power_uw": 25.0}  # a name of its own, from the record


def test_sizing_map_varies_its_knob(test_cell):
    m = sizing_map(prepare(parse_site(SITE)), "cell", n_harvester=6, n_store=5)
    assert m.harvester_field == "power_uw" and m.harvester_label == "Cell power" and m.harvester_unit == "uW"
    assert m.harvester_sizes.min() < 40.0 < m.harvester_sizes.max()
    # more constant power never adds deficit days at any store size (no hysteresis on this store)
    assert np.all(np.diff(m.deficit_days, axis=0) <= 0)


def test_unregistered_kind_is_refused_again():
    assert "test_cell" not in SOURCE_KINDS
    with pytest.raises(Exception, match="kind"):
        parse_site(SITE)


def test_a_record_must_match_its_model():
    wrong_file = SourceKind(kind="test_cell", model=ConstantCellSource, output=constant_cell_output, name="x",
                            group="g",
                            group_title="G", size_knobs=TEST_KIND.size_knobs, file_fields=("survey_file",))
    with pytest.raises(ValueError, match="file_fields"):
        check_kind(wrong_file)
    wrong_knob = SourceKind(kind="test_cell", model=ConstantCellSource, output=constant_cell_output, name="x",
                            group="g",
                            group_title="G", size_knobs=(SizeKnob("area_cm2", "Area"),))
    with pytest.raises(KeyError):
        check_kind(wrong_knob)
    with pytest.raises(ValueError, match="registered already"):
        register_kind(SOURCE_KINDS["solar"])


def test_every_shipped_kind_declares_its_files():
    """The record's file fields are exactly the fields its model names files in (the one rule)."""
    for record in SOURCE_KINDS.values():
        check_kind(record)
    assert SOURCE_KINDS["vibration"].file_fields == ("spectrum_file",)
    assert SOURCE_KINDS["thermoelectric"].file_fields == ("hot_side.file",)
