"""Constants shared by the test modules (imported as `from shared import ...`)."""

from __future__ import annotations

from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
SAMPLES = ROOT / "sample_sites"

# A compact spot on a seeded synthetic year: quick to assess, no files needed.
BASE_SITE = """
[spot]
name = "test spot"
latitude_deg = 45.0
longitude_deg = 7.0
utc_offset_h = 1

[weather.synthetic]
monthly_clearness = [0.35, 0.4, 0.45, 0.5, 0.52, 0.55, 0.58, 0.55, 0.5, 0.43, 0.36, 0.33]
seed = 7

[node]
supply_v = 3.0
sleep_current_ua = 2.0
[[node.task]]
name = "read and send"
current_ma = 8.0
duration_ms = 50
every_s = 300

[store]
kind = "supercapacitor"
capacitance_f = 1.0
max_v = 5.0
cutoff_v = 2.2
turn_on_v = 3.0

[[source]]
id = "panel"
kind = "solar"
area_cm2 = 3.0
tilt_deg = 45
"""
