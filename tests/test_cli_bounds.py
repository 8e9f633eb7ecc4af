"""`siteharvest size` options and the sizing functions' arguments are bounded: a bad value prints one
line naming the option and what is expected, exit status 2, before anything is allocated; a study
planned above the memory budget is refused."""

from __future__ import annotations

import pytest
from shared import BASE_SITE, SAMPLES

from siteharvest import sizing
from siteharvest.assess import prepare
from siteharvest.cli import main
from siteharvest.errors import SiteInputError
from siteharvest.site import parse_site_text

SITE = str(SAMPLES / "roof-parapet.toml")


@pytest.mark.parametrize(("option", "value", "expected"), [
    ("--steps", "0", "a whole number from 2 to 200"),
    ("--steps", "-5", "a whole number from 2 to 200"),
    ("--steps", "3000", "a whole number from 2 to 200"),
    ("--steps", "abc", "a whole number from 2 to 200"),
    ("--steps", "2.5", "a whole number from 2 to 200"),
    ("--years", "-1", "a whole number from 0 to 5000"),
    ("--years", "10000000", "a whole number from 0 to 5000"),
    ("--years", "9" * 5000, "a whole number from 0 to 5000"),
    ("--seed", "-1", "a whole number from 0 to 4294967295"),
    ("--outages-per-year", "nan", "a finite number from 0 to 52"),
    ("--outages-per-year", "-1", "a finite number from 0 to 52"),
    ("--outage-days", "inf", "a finite number from 0 to 90"),
    ("--max-deficit-days", "-3", "a whole number from 0 to 365"),
    ("--max-deficit-days", "366", "a whole number from 0 to 365"),
])
def test_bad_size_option_is_one_line_with_exit_2(capsys, option, value, expected):
    assert main(["size", SITE, option, value]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and err.startswith(f"siteharvest: {option}: expected {expected}, got ")
    assert "usage:" not in err and "Traceback" not in err


def test_size_help_states_every_bound(capsys):
    with pytest.raises(SystemExit):
        main(["size", "--help"])
    text = " ".join(capsys.readouterr().out.split())
    for bound in ("0..365", "2..200", "0..5000", "0..4294967295", "0..52", "0..90"):
        assert bound in text


def test_memory_estimate_refuses_what_the_audit_saw():
    # the audit's --steps 3000 tried to allocate 73 GiB: the estimate must see it is far above 2 GB
    assert sizing.sizing_memory_bytes(3000, 3000) > 20 * sizing.MEMORY_BUDGET_BYTES
    assert sizing.sizing_memory_bytes(*[sizing.STEPS_RANGE[1]] * 2) < sizing.MEMORY_BUDGET_BYTES
    assert sizing.weather_risk_memory_bytes(sizing.RISK_YEARS_RANGE[1], 12) < sizing.MEMORY_BUDGET_BYTES


@pytest.fixture(scope="module")
def prep():
    return prepare(parse_site_text(BASE_SITE))


@pytest.mark.parametrize("kwargs", [
    {"n_harvester": 3000}, {"n_store": 1}, {"n_harvester": 2.5}, {"n_harvester": True},
    {"max_deficit_days": -3}, {"max_deficit_days": 400},
])
def test_sizing_map_checks_its_arguments(prep, kwargs):
    with pytest.raises(SiteInputError) as err:
        sizing.sizing_map(prep, prep.spec.source[0].id, **kwargs)
    assert err.value.field == next(iter(kwargs)) and "\n" not in str(err.value)


def test_sizing_map_refuses_a_study_above_the_budget(prep, monkeypatch):
    monkeypatch.setattr(sizing, "MEMORY_BUDGET_BYTES", 1_000_000)
    with pytest.raises(SiteInputError, match="memory budget"):
        sizing.sizing_map(prep, prep.spec.source[0].id, n_harvester=10, n_store=10)


@pytest.mark.parametrize("kwargs", [
    {"years": 0}, {"years": 10_000_000}, {"seed": -1}, {"outage_rate_per_year": float("nan")},
    {"outage_rate_per_year": -1.0}, {"outage_mean_days": float("inf")},
])
def test_weather_risk_checks_its_arguments(prep, kwargs):
    with pytest.raises(SiteInputError) as err:
        sizing.weather_risk(prep, **kwargs)
    assert err.value.field == next(iter(kwargs))


def test_report_interval_checks_the_target(prep):
    with pytest.raises(SiteInputError, match="from 0 to 365"):
        sizing.report_interval(prep, max_deficit_days=-3)


def test_good_options_still_run(capsys):
    assert main(["size", SITE, "--steps", "4", "--years", "3", "--seed", "0", "--max-deficit-days", "0"]) == 0
    assert "deficit days" in capsys.readouterr().out


def test_a_fault_of_the_program_is_one_line_not_a_traceback(monkeypatch, capsys):
    """Common practice for command-line tools: a bug reports itself in one line (exit 1), the traceback on request."""
    from siteharvest import cli

    def broken(args):
        raise TypeError("unsupported operand\nsecond line")

    parser = cli.build_parser()
    monkeypatch.setattr(cli, "build_parser", lambda: parser)
    parser._subparsers._group_actions[0].choices["schema"].set_defaults(func=broken)
    monkeypatch.delenv(cli.DEBUG_ENV, raising=False)
    assert cli.main(["schema"]) == cli.EXIT_INTERNAL
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "internal error (TypeError: unsupported operand second line)" in err
    monkeypatch.setenv(cli.DEBUG_ENV, "1")
    with pytest.raises(TypeError):
        cli.main(["schema"])
