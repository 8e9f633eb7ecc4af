"""Component ids of the dashboard, in one place (layout, callbacks and tests share them).

Plain strings are single components; the ``*_TYPE`` constants are the ``type`` key of
pattern-matching dict ids (one per generated input, message, button or upload).
"""

from __future__ import annotations

# state (dcc.Store)
SPOTS = "sh-spots"  # {key: spot record}: every loaded spot, as dumped site dicts
SESSION = "sh-session"  # this page's random token: its uploads are kept on the server under it
VIEW_KEY = "sh-view-key"  # the content the open view must show: a new value redraws it
FORM_REV = "sh-form-rev"  # int: bumped when the editor must be rebuilt (structure or presets changed)

# header
SPOT_PICKER = "sh-spot-picker"
SITE_UPLOAD = "sh-site-upload"
SITE_UPLOAD_MSG = "sh-site-upload-msg"
SITE_DOWNLOAD_BUTTON = "sh-site-download-button"
SITE_DOWNLOAD = "sh-site-download"
REPORT_PDF_BUTTON = "sh-report-pdf-button"
REPORT_HTML_BUTTON = "sh-report-html-button"
REPORT_DOWNLOAD = "sh-report-download"
REPORT_MSG = "sh-report-msg"  # one line when the report could not be made
REPORT_BUSY = "sh-report-busy"  # "preparing the report" while it runs
PORTFOLIO_PDF_BUTTON = "sh-portfolio-pdf-button"  # the report of every loaded spot, ranked
PORTFOLIO_HTML_BUTTON = "sh-portfolio-html-button"
PORTFOLIO_DOWNLOAD = "sh-portfolio-download"
PORTFOLIO_MSG = "sh-portfolio-msg"
PORTFOLIO_BUSY = "sh-portfolio-busy"

# editor
EDITOR = "sh-editor"
EDITOR_MSG = "sh-editor-msg"
EDITOR_NOTE = "sh-editor-note"  # what an accepted upload brought (assumptions, notes)
WEATHER_UPLOAD = "sh-weather-upload"
WEATHER_UPLOAD_MSG = "sh-weather-upload-msg"
FIELD_TYPE = "sh-field"  # {"type", "path", "role"}: one input per site-file field
FIELD_MSG_TYPE = "sh-field-msg"  # {"type", "path"}: the message beside that input
ACTION_TYPE = "sh-action"  # {"type", "action", "path"}: add / remove buttons
SPECTRUM_UPLOAD_TYPE = "sh-spectrum-upload"  # {"type", "path"}: per vibration source
SPECTRUM_MSG_TYPE = "sh-spectrum-msg"  # {"type", "path"}
GROUP_TYPE = "sh-group"  # {"type", "key"}: the foldable groups of the editor

# results
STATUS = "sh-status"
SUMMARY = "sh-summary"
CAUTIONS = "sh-cautions"
NOTES = "sh-notes"
CASE_PICKER = "sh-case-picker"
WEEK_PICKER = "sh-week-picker"
TABS = "sh-tabs"
FIG_SOURCES = "sh-fig-sources"
FIG_YEAR = "sh-fig-year"
FIG_CALENDAR = "sh-fig-calendar"
FIG_WEEK = "sh-fig-week"
WEEK_CAPTION = "sh-week-caption"
PORTFOLIO = "sh-portfolio"
PORTFOLIO_TABLE = "sh-portfolio-table"
LOAD_ERRORS = "sh-load-errors"

# what it takes (sizing) and weather risk
FIG_SIZING = "sh-fig-sizing"
SIZING_TEXT = "sh-sizing-text"
SIZING_TARGET = "sh-sizing-target"  # target deficit days to try (starts at the spot's own)
SIZING_TASK = "sh-sizing-task"  # the task whose interval the reporting search varies ("": the library's choice)
SIZING_KNOB = "sh-sizing-knob"  # the harvester size the map varies ("": the kind's default knob)
SIZING_TARGET_FROM = "sh-sizing-target-from"  # store: [spot key, its target] the input was last set from
RISK_YEARS = "sh-risk-years"
RISK_SEED = "sh-risk-seed"
RISK_OUTAGE_RATE = "sh-risk-outage-rate"
RISK_OUTAGE_DAYS = "sh-risk-outage-days"
RISK_OUTAGE_NOTE = "sh-risk-outage-note"
RISK_MSG = "sh-risk-msg"
RISK_TABLE = "sh-risk-table"
FIG_RISK = "sh-fig-risk"  # the chosen source
FIG_RISK_ALL = "sh-fig-risk-all"  # all sources together
RISK_ALL_WRAP = "sh-fig-risk-all-wrap"  # hidden when the chosen case is already all together

# tab values
TAB_SOURCES = "tab-sources"
TAB_YEAR = "tab-year"
TAB_CALENDAR = "tab-calendar"
TAB_WEEK = "tab-week"
TAB_SIZING = "tab-sizing"
TAB_RISK = "tab-risk"
TAB_PORTFOLIO = "tab-portfolio"


def field_id(path: str, role: str) -> dict[str, str]:
    """The id of the input for the site-file field at ``path`` (dotted, list indexes as numbers)."""
    return {"type": FIELD_TYPE, "path": path, "role": role}


def field_msg_id(path: str) -> dict[str, str]:
    return {"type": FIELD_MSG_TYPE, "path": path}


def group_id(key: str) -> dict[str, str]:
    return {"type": GROUP_TYPE, "key": key}


def action_id(action: str, path: str) -> dict[str, str]:
    return {"type": ACTION_TYPE, "action": action, "path": path}


def dom_id(component_id: dict[str, str] | str) -> str:
    """The DOM id Dash gives a component (dict ids become JSON with sorted keys)."""
    if isinstance(component_id, str):
        return component_id
    import json

    return "{" + ",".join(f"{json.dumps(k)}:{json.dumps(component_id[k])}" for k in sorted(component_id)) + "}"
PROBLEM = "sh-problem"  # a line at the foot of the window when a request fails unexpectedly
PROBLEM_CLOSE = "sh-problem-close"
NEW_SPOT_BUTTON = "sh-new-spot"
DUPLICATE_SPOT_BUTTON = "sh-duplicate-spot"
