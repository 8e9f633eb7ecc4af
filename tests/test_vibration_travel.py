"""Peak proof-mass travel under several vibration components, checked in the time domain.

The reference is the motion itself: the harvester's steady response to each tone (amplitude from
:func:`displacement_m`, phase from the same linear oscillator, Williams & Yates 1996) summed over a
long stretch of time and its largest excursion read off. Two equal tones reach twice one tone's
amplitude; a root-sum-square estimate would say sqrt(2) times and let the mass hit its end stops.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from siteharvest.sources.vibration import (
    PEAK_FACTOR,
    Excitation,
    Harvester,
    displacement_m,
    peak_travel_m,
    running_point,
)

TWO_PI = 2 * math.pi


def time_peak_m(freqs_hz, amps_m, phases, seconds=200.0, rate_hz=4000.0) -> float:
    t = np.arange(0.0, seconds, 1.0 / rate_hz)
    x = sum(a * np.cos(TWO_PI * f * t + p) for f, a, p in zip(freqs_hz, amps_m, phases, strict=True))
    return float(np.max(np.abs(x)))


def test_one_tone_and_two_equal_tones():
    z = 0.08e-3
    assert peak_travel_m(np.array(z**2), np.array(z)) == pytest.approx(z)
    two = float(peak_travel_m(np.array(2 * z**2), np.array(2 * z)))
    # frequencies not in a simple ratio (50 Hz and 50 sqrt 2 Hz): the sum comes within 0.5 % of 2 z
    assert time_peak_m([50.0, 50.0 * math.sqrt(2)], [z, z], [0.0, 1.0]) == pytest.approx(two, rel=5e-3)
    assert two == pytest.approx(2 * z) and two > math.sqrt(2) * z * 1.4


def test_many_random_phase_components_peak_near_three_sigma():
    """Many components: near-Gaussian motion; 3 sigma is its 99.7 % point (normal distribution)."""
    rng = np.random.default_rng(3)
    freqs = rng.uniform(20.0, 400.0, 300)
    amps = rng.uniform(0.5, 1.5, 300) * 1e-6
    t = np.arange(0.0, 20.0, 1.0 / 4000.0)
    x = sum(a * np.cos(TWO_PI * f * t + p) for f, a, p in zip(freqs, amps, rng.uniform(0, TWO_PI, 300),
                                                             strict=True))
    est = float(peak_travel_m(np.array(np.sum(amps**2)), np.array(np.sum(amps))))
    assert est == pytest.approx(PEAK_FACTOR * np.sqrt(np.sum(amps**2) / 2))
    assert np.percentile(np.abs(x), 99.73) == pytest.approx(est, rel=0.05)


def test_a_travel_limited_harvester_on_two_tones_stays_within_its_stops():
    fn, zm, limit = 50.0, 0.01, 0.1e-3
    freqs = np.array([fn, fn * 1.004])  # both inside the resonance
    exc = Excitation(freqs, np.array([1.0, 1.0]), np.zeros(2), np.zeros(2))
    h = Harvester(mass_kg=0.005, resonant_hz=fn, zeta_m=zm, zeta_e=zm, travel_limit_m=limit)
    point = running_point(exc, h)
    assert point.travel_limited and point.travel_m == pytest.approx(limit, rel=1e-6)
    zeta_t = zm + point.zeta_e
    amps = [float(displacement_m(math.sqrt(2) * 1.0, f, fn, zeta_t)) for f in freqs]
    # the two tones beat; over 300 s (more than a beat period of 1 / 0.2 Hz) the peak is their sum
    assert time_peak_m(freqs, amps, [0.0, 0.3], seconds=300.0, rate_hz=2000.0) <= limit * 1.001
