"""The site loader on hostile input: it returns a SiteSpec or raises one SiteInputError line naming
the file, never anything else. Hypothesis mutates the bundled sample sites (values replaced by
lists, tables, huge integers, nan, deep nesting, wrong types; text mutated byte-wise), and explicit
regression tests cover each crash class an audit found."""

from __future__ import annotations

import copy
import tomllib
from typing import Any

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from shared import SAMPLES

from siteharvest.errors import SiteInputError, format_value
from siteharvest.site import MAX_SITE_CHARS, load_site, parse_site, parse_site_text

SAMPLE_FILES = sorted(SAMPLES.glob("*.toml"))
SAMPLE_TEXT = {p.name: p.read_text(encoding="utf-8") for p in SAMPLE_FILES}
SAMPLE_DATA = {name: tomllib.loads(text) for name, text in SAMPLE_TEXT.items()}
FUZZ = settings(max_examples=120, deadline=None, suppress_health_check=[HealthCheck.too_slow,
                                                                         HealthCheck.data_too_large])


def _paths(node: Any, prefix: tuple = ()) -> list[tuple]:
    """Every key path inside a TOML document (tables and array items)."""
    out = []
    items = node.items() if isinstance(node, dict) else enumerate(node) if isinstance(node, list) else ()
    for key, child in items:
        out.append((*prefix, key))
        out.extend(_paths(child, (*prefix, key)))
    return out


PATHS = [(name, p) for name, data in SAMPLE_DATA.items() for p in _paths(data)]


def _get(data: Any, path: tuple) -> Any:
    for key in path:
        data = data[key]
    return data


def _set(data: dict, path: tuple, value: Any) -> dict:
    data = copy.deepcopy(data)
    node = data
    for key in path[:-1]:
        node = node[key]
    node[path[-1]] = value
    return data


def _nested(depth: int) -> Any:
    value: Any = 1
    for _ in range(depth):
        value = [value]
    return value


TABLE_PATHS = [(name, p) for name, p in PATHS if isinstance(_get(SAMPLE_DATA[name], p), dict)]
PRESET_KEYS = ("technology", "mounting", "preset", "chemistry", "cell", "conditioning", "kind", "hot_side")

hostile = st.one_of(
    st.lists(st.integers(-3, 3), max_size=3),
    st.dictionaries(st.text(max_size=4), st.integers(), max_size=2),
    st.integers(min_value=-(10**40), max_value=10**40),
    st.just(10**5000),
    st.floats(allow_nan=True, allow_infinity=True),
    st.text(max_size=12),
    st.booleans(),
    st.integers(1, 2500).map(_nested),
    st.just([[1, 2], {"preset": [1]}]),
)


def assert_one_line(exc: SiteInputError, file: str) -> None:
    text = str(exc)
    assert "\n" not in text and "\r" not in text, text
    assert text.startswith(file), text
    for raw in ("np.float64(", "zip() argument", "Traceback", "unhashable"):
        assert raw not in text, text


@FUZZ
@given(where=st.sampled_from(PATHS), value=hostile)
def test_any_value_anywhere_gives_one_line(where, value):
    name, path = where
    data = _set(SAMPLE_DATA[name], path, value)
    try:
        parse_site(data, file=name, text=SAMPLE_TEXT[name])
    except SiteInputError as exc:
        assert_one_line(exc, name)


@FUZZ
@given(where=st.sampled_from(TABLE_PATHS), key=st.sampled_from(PRESET_KEYS), value=hostile)
def test_preset_keys_added_to_any_table_give_one_line(where, key, value):
    name, path = where
    data = copy.deepcopy(SAMPLE_DATA[name])
    _get(data, path)[key] = value
    try:
        parse_site(data, file=name)
    except SiteInputError as exc:
        assert_one_line(exc, name)


TOKENS = ["[", "]", "[[", "{", "}", "=", '"', "'", "\n", "nan", "inf", "-1e300", "9" * 5000, "\x00", "#",
          "x = " + "[" * 2000, "a = {b = ", "true", "0x", "1979-05-27T07:32:00Z"]


@FUZZ
@given(name=st.sampled_from(sorted(SAMPLE_TEXT)), edits=st.lists(
    st.tuples(st.floats(0, 1), st.sampled_from(TOKENS) | st.text(max_size=6), st.integers(0, 8)),
    min_size=1, max_size=4))
def test_mutated_site_text_gives_one_line(name, edits):
    text = SAMPLE_TEXT[name]
    for where, token, cut in edits:
        i = int(where * len(text))
        text = text[:i] + token + text[i + cut:]
    try:
        parse_site_text(text, file=name)
    except SiteInputError as exc:
        assert_one_line(exc, name)


@settings(max_examples=60, deadline=None)
@given(text=st.text(max_size=300))
def test_random_text_gives_one_line(text):
    try:
        parse_site_text(text, file="random.toml")
    except SiteInputError as exc:
        assert_one_line(exc, "random.toml")


# ------------------------------------------------------------------- regressions, one per class

ROOF = "roof-parapet.toml"
PLANT = "plant-room.toml"


def _error(data: dict, name: str) -> SiteInputError:
    with pytest.raises(SiteInputError) as err:
        parse_site(data, file=name, text=SAMPLE_TEXT[name])
    assert_one_line(err.value, name)
    return err.value


@pytest.mark.parametrize("value", [[1, 2], {"a": 1}, ["monocrystalline-silicon"]])
@pytest.mark.parametrize(("name", "path", "key"), [
    (ROOF, ("source", 0, "technology"), "technology"),
    (ROOF, ("source", 0, "mounting"), "mounting"),
    (ROOF, ("store", "chemistry"), "chemistry"),
    (PLANT, ("source", 1, "preset"), "preset"),
    (PLANT, ("source", 0, "technology"), "technology"),
])
def test_list_or_table_for_a_preset_name_names_the_field(name, path, key, value):
    err = _error(_set(SAMPLE_DATA[name], path, value), name)
    assert err.field.endswith(key)
    assert "one of" in err.expected or "'" in err.expected


def test_table_for_a_conditioning_preset_names_the_choices():
    err = _error(_set(SAMPLE_DATA[ROOF], ("source", 0, "conditioning"), {"preset": [1]}), ROOF)
    assert err.field.endswith("conditioning.preset") and err.expected.startswith("one of: ")
    assert "solar-cell-boost" in err.expected and "got [1]" in str(err)


def test_table_for_a_backup_cell_names_the_choices():
    store = {**SAMPLE_DATA[ROOF]["store"], "backup": {"cell": {"x": 1}}}
    err = _error(_set(SAMPLE_DATA[ROOF], ("store",), store), ROOF)
    assert err.field == "store.backup.cell" and err.expected.startswith("one of: ")


@pytest.mark.parametrize("text", [
    "x = " + "[" * 2000 + "]" * 2000,
    "x = " + "{a = " * 2000 + "1" + "}" * 2000,
])
def test_deep_nesting_is_one_line(text):
    with pytest.raises(SiteInputError, match="nested at most") as err:
        parse_site_text(SAMPLE_TEXT[ROOF] + "\n" + text + "\n", file=ROOF)
    assert_one_line(err.value, ROOF)


def test_deep_nesting_in_a_dictionary_is_one_line():
    with pytest.raises(SiteInputError, match="nested at most"):
        parse_site(_set(SAMPLE_DATA[ROOF], ("spot", "name"), _nested(2000)), file=ROOF)


def test_integer_of_5000_digits_is_one_line_with_its_line():
    text = SAMPLE_TEXT[ROOF].replace("[spot]\n", "[spot]\nmounting_height_m = " + "9" * 5000 + "\n", 1)
    with pytest.raises(SiteInputError, match="4300 digits") as err:
        parse_site_text(text, file=ROOF)
    assert_one_line(err.value, ROOF)
    assert err.value.line == text.splitlines().index("mounting_height_m = " + "9" * 5000) + 1


def test_big_integer_value_is_shown_by_its_digits():
    err = _error(_set(SAMPLE_DATA[ROOF], ("spot", "latitude_deg"), 10**40), ROOF)
    assert "an integer of 41 digits" in str(err)


@pytest.mark.parametrize("value", [float("nan"), float("inf")])
def test_non_finite_number_asks_for_a_finite_one(value):
    err = _error(_set(SAMPLE_DATA[ROOF], ("spot", "latitude_deg"), value), ROOF)
    assert err.field == "spot.latitude_deg" and err.expected == "a finite number"


def test_python_words_are_not_shown():
    err = _error(_set(SAMPLE_DATA[ROOF], ("spot",), [1]), ROOF)
    assert err.expected == "a table" and "instance" not in str(err) and "dictionary" not in str(err)


def test_site_file_over_the_size_limit_is_refused(tmp_path):
    path = tmp_path / "huge.toml"
    path.write_text(SAMPLE_TEXT[ROOF] + "\n# " + "x" * MAX_SITE_CHARS + "\n")
    with pytest.raises(SiteInputError, match="at most 1 MB") as err:
        load_site(path)
    assert_one_line(err.value, str(path))


def test_binary_site_file_is_one_line(tmp_path):
    path = tmp_path / "binary.toml"
    path.write_bytes(b"\xff\xfe\x00\x81" * 50)
    with pytest.raises(SiteInputError) as err:
        load_site(path)
    assert_one_line(err.value, str(path))


@pytest.mark.parametrize(("value", "shown"), [
    (__import__("numpy").float64(0.25), "0.25"),
    ("'quoted'", "'quoted'"),
    ("plain", "'plain'"),
    (1e308, "1e+308"),
    (True, "true"),
    ("two\nlines", "'two lines'"),
    ("", "an empty text"),
])
def test_got_is_formatted_for_people(value, shown):
    assert format_value(value) == shown
    text = str(SiteInputError("something", file="f.toml", field="x", got=value))
    assert text == f"f.toml: x: expected something, got {shown}"


def test_huge_integer_as_a_union_tag_is_one_line_naming_the_field(capsys):
    # a 5000-digit union tag made the validator print 'Exception ignored' through Python's digit limit
    err = _error(_set(SAMPLE_DATA[ROOF], ("store", "kind"), 10**5000), ROOF)
    assert err.field == "store.kind" and "at most 300 digits" in err.expected
    assert "Exception ignored" not in capsys.readouterr().err
