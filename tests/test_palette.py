"""The verdict badges' colours, read from the dashboard's style sheet: apart from one another under simulated
colour blindness, and their text legible on them.

Simulation: colour-science's ``matrix_cvd_Machado2009`` (Machado, Oliveira & Fernandes 2009, IEEE Trans.
Visualization and Computer Graphics 15(6): a physiologically based model of anomalous trichromacy, applied to
linear sRGB) at full severity, which stands for protanopia, deuteranopia and tritanopia. Distance:
CIEDE2000 in CIELAB (D65), computed by colour-science. Contrast: the WCAG 2.1 contrast ratio (relative luminance
of sRGB, success criterion 1.4.3, level AA: at least 4.5:1 for normal text).
"""

from __future__ import annotations

import itertools
import re
import warnings
from pathlib import Path

import numpy as np
import pytest
from siteharvest_app.tables import ASSUMED_CLASS, VERDICT_CLASS
from validation import external_check

ROOT = Path(__file__).resolve().parents[1]
CSS = (ROOT / "assets" / "siteharvest.css").read_text(encoding="utf-8")

# A CIEDE2000 difference of about 1 is just noticeable side by side; badges read apart at a glance, one at a time,
# need far more. 12 is our own margin (a range, not a published value), checked for every pair under every
# simulation.
MIN_DELTA_E = 12.0
MIN_CONTRAST = 4.5  # WCAG 2.1 SC 1.4.3 (AA), normal-size text
DEFICIENCIES = {"protanopia": "Protanomaly", "deuteranopia": "Deuteranomaly", "tritanopia": "Tritanomaly"}
BADGES = [*VERDICT_CLASS.values(), ASSUMED_CLASS]


def _rule(cls: str) -> dict[str, str]:
    """The declarations of ``.cls { ... }`` (the last rule for exactly that selector wins, as in the browser)."""
    found: dict[str, str] = {}
    for body in re.findall(r"(?m)^\." + re.escape(cls) + r"\s*\{([^}]*)\}", CSS):
        for decl in body.split(";"):
            if ":" in decl:
                name, value = decl.split(":", 1)
                found[name.strip()] = value.strip()
    return found


def _hex(value: str) -> np.ndarray:
    m = re.fullmatch(r"#([0-9a-fA-F]{6})", value.strip())
    assert m, f"expected a #rrggbb colour, got {value!r}"
    return np.array([int(m.group(1)[i:i + 2], 16) / 255 for i in (0, 2, 4)])


def colours(cls: str) -> tuple[np.ndarray, np.ndarray]:
    rule = _rule(cls)
    assert "background" in rule and "color" in rule, f".{cls} sets no background or text colour"
    return _hex(rule["background"]), _hex(rule["color"])


def linear(srgb: np.ndarray) -> np.ndarray:
    """sRGB to linear light (IEC 61966-2-1, as used by WCAG 2.1's relative luminance)."""
    return np.where(srgb <= 0.04045, srgb / 12.92, ((srgb + 0.055) / 1.055) ** 2.4)


def contrast(a: np.ndarray, b: np.ndarray) -> float:
    """WCAG 2.1 contrast ratio (L1 + 0.05) / (L2 + 0.05) of two sRGB colours."""
    lum = sorted((float(linear(c) @ [0.2126, 0.7152, 0.0722]) for c in (a, b)), reverse=True)
    return (lum[0] + 0.05) / (lum[1] + 0.05)


@pytest.fixture(scope="module")
def colour():
    colour = pytest.importorskip("colour")
    return colour


def lab_seen(colour, srgb: np.ndarray, matrix: np.ndarray) -> np.ndarray:
    rgb = np.clip(matrix @ linear(srgb), 0, 1)
    xyz = colour.RGB_to_XYZ(rgb, colour.RGB_COLOURSPACES["sRGB"], apply_cctf_decoding=False)
    white = colour.CCS_ILLUMINANTS["CIE 1931 2 Degree Standard Observer"]["D65"]
    return colour.XYZ_to_Lab(xyz, white)


def test_every_badge_has_its_own_colours_and_shape():
    backgrounds = [tuple(colours(cls)[0]) for cls in BADGES]
    assert len(set(backgrounds)) == len(BADGES)
    shapes = []
    for cls in BADGES:
        m = re.search(r"(?m)^\." + re.escape(cls) + r"::before\s*\{[^}]*content:\s*\"([^\"]+)\"", CSS)
        assert m, f".{cls} has no shape of its own"
        shapes.append(m.group(1).strip())
    assert len(set(shapes)) == len(BADGES), shapes


@external_check(area="dashboard", quantity="contrast of verdict badge text on its background", value=">= 4.5:1",
                source="WCAG 2.1 success criterion 1.4.3 (AA) and its contrast-ratio definition", tolerance="none")
@pytest.mark.parametrize("cls", BADGES)
def test_badge_text_meets_wcag_aa_contrast(cls: str):
    background, text = colours(cls)
    assert contrast(background, text) >= MIN_CONTRAST


def test_contrast_formula_on_known_pairs():
    # WCAG 2.1's definition: black on white is 21:1, a colour on itself 1:1
    assert contrast(_hex("#000000"), _hex("#ffffff")) == pytest.approx(21.0)
    assert contrast(_hex("#777777"), _hex("#777777")) == pytest.approx(1.0)


@external_check(area="dashboard", quantity="verdict badges apart under simulated protan, deutan and tritan vision",
                value=f"CIEDE2000 >= {MIN_DELTA_E:g} between every pair (our threshold)",
                source="Machado, Oliveira & Fernandes (2009) simulation matrices at full severity, via colour-science",
                tolerance="none")
@pytest.mark.parametrize("deficiency", ["none", *DEFICIENCIES])
def test_badges_stay_apart_under_colour_blindness(colour, deficiency: str):
    if deficiency == "none":
        matrix = np.eye(3)
    else:
        with warnings.catch_warnings():  # (the tritan matrices are an approximation: the library says so)
            warnings.simplefilter("ignore")
            matrix = colour.matrix_cvd_Machado2009(DEFICIENCIES[deficiency], 1.0)
    seen = {cls: lab_seen(colour, colours(cls)[0], matrix) for cls in BADGES}
    closest = min((float(colour.delta_E(seen[a], seen[b], method="CIE 2000")), a, b)
                  for a, b in itertools.combinations(BADGES, 2))
    assert closest[0] >= MIN_DELTA_E, f"under {deficiency}, {closest[1]} and {closest[2]} are {closest[0]:.1f} apart"


def test_simulation_leaves_grey_grey_and_merges_red_and_green(colour):
    # a check of the simulation itself: neutral greys are unchanged, and a protanope's red and green draw close
    m = colour.matrix_cvd_Machado2009("Protanomaly", 1.0)
    grey = np.array([0.5, 0.5, 0.5])
    assert np.allclose(m @ grey, grey, atol=1e-3)
    red, green = _hex("#d03030"), _hex("#30a030")
    normal = float(colour.delta_E(lab_seen(colour, red, np.eye(3)), lab_seen(colour, green, np.eye(3)),
                                  method="CIE 2000"))
    protan = float(colour.delta_E(lab_seen(colour, red, m), lab_seen(colour, green, m), method="CIE 2000"))
    assert protan < normal / 2
