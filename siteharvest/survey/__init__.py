"""From site survey to spot: measured logs in, fitted site inputs out.

One module per log kind, sharing the log reader and the schedule and year-extension methods:

- :mod:`.logs`         reading and checking timestamped logs (clocks, order, gaps, units);
- :mod:`.profile`      on/off states, their weekday-hour profile, the weekly schedule that fits it;
- :mod:`.extend`       a short log extended to the reference year, with its 90 % interval;
- :mod:`.light`        light log -> lamp level, lamp schedule, occupancy, daylight factor;
- :mod:`.temperature`  surface and air temperature logs -> hot-side levels, schedule, shutdowns;
- :mod:`.vibration`    acceleration recordings -> Welch spectrum, dominant lines, drift, schedule;
- :mod:`.apply`        the fitted fields into a copy of the site, with ``[[measured]]`` records.

Front ends call :func:`survey_light`, :func:`survey_temperature` or :func:`survey_vibration` (each
returns a result with ``.update`` and ``.to_json()``) and :func:`apply_update`; the site's
:func:`siteharvest.site.measured_fields` says which fields came from a log.
"""

from .apply import FitQuality, SurveyUpdate, apply_update
from .light import LightSurvey, survey_light
from .temperature import TemperatureSurvey, survey_temperature
from .vibration import VibrationSurvey, survey_vibration

__all__ = ["FitQuality", "LightSurvey", "SurveyUpdate", "TemperatureSurvey", "VibrationSurvey", "apply_update",
           "survey_light", "survey_temperature", "survey_vibration"]
