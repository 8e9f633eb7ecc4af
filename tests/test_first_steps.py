"""First steps in the dashboard, as plain callback calls: a blank spot, a copy of a spot, a saved file named
after its spot, a new source with a name of its own, and removing the last source explained plainly."""

from __future__ import annotations

from dash import no_update
from siteharvest_app import callbacks as cb
from siteharvest_app import ids
from siteharvest_app.engine import assessment_for, load_records
from siteharvest_app.fieldspec import apply_action

from siteharvest.site import parse_site_text


def samples():
    spots, _ = load_records(None)
    return spots, next(iter(spots))


def test_a_new_blank_spot_is_added_shown_and_assessable():
    spots, _ = samples()
    new, new_key, line = cb.new_spot(1, spots)
    assert new_key not in spots and set(spots) < set(new) and "synthetic" in line
    assert assessment_for(new[new_key], None).sources  # it simulates as it stands
    again, second, _ = cb.new_spot(2, new)
    assert second != new_key and len(again) == len(new) + 1


def test_a_duplicate_is_a_copy_with_its_own_name_and_the_same_numbers():
    spots, key = samples()
    new, copy_key, line = cb.duplicate_spot(1, key, spots)
    original, copy = spots[key], new[copy_key]
    assert copy["site"]["spot"]["name"] == original["site"]["spot"]["name"] + " (copy)" and "unchanged" in line
    assert copy["origin"] == original["origin"] and copy["files"] == original["files"]  # the same files
    a, b = assessment_for(original, None), assessment_for(copy, None)
    assert [c.deficit_days for c in a.cases] == [c.deficit_days for c in b.cases]
    assert [c.annual_energy_wh for c in a.cases] == [c.annual_energy_wh for c in b.cases]


def test_a_saved_file_is_named_after_its_spot():
    spots, key = samples()
    name = spots[key]["site"]["spot"]["name"]
    out = cb.download_site(1, key, spots)
    assert out["filename"] == cb.saved_filename(name) and out["filename"].endswith(".toml")
    assert cb.saved_filename("Boiler house, east wall / 2nd floor") == "boiler-house-east-wall-2nd-floor.toml"
    assert cb.saved_filename("***") == "spot.toml"
    assert parse_site_text(out["content"]).spot.name == name


def test_a_new_source_has_a_name_of_its_own():
    spots, key = samples()
    site = apply_action(spots[key]["site"], "add-source:vibration", "source")
    added = site["source"][-1]
    assert added["label"] and added["label"] != added["id"]


def test_removing_the_last_source_says_so_plainly():
    spots, _ = samples()
    one = next(k for k, r in spots.items() if len(r["site"]["source"]) == 1)
    remove = ids.action_id("remove-source", "source.0")
    new, rev, line, _ = cb.edit_structure([1], one, spots, 0, trigger=(remove, 1))
    assert new is no_update and rev is no_update and line == cb.LAST_SOURCE_LINE
