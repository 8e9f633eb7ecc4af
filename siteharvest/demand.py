"""The node's demand: hourly energy drawn from the store.

Method: the node draws its sleep current all the time and, for each task, ``current_ma`` for
``duration_ms`` every ``every_s`` seconds during the task's active hours and days. Energy at the
supply rail is divided by the output regulator's efficiency to give energy drawn from the store.
Tasks whose period does not divide an hour are spread evenly (fractional counts per hour).
"""

from __future__ import annotations

import numpy as np
from pydantic import Field, model_validator

from .fields import Section, quantity
from .schedule import WeeklySchedule
from .timegrid import HOURS_PER_YEAR, SECONDS_PER_HOUR


class NodeTask(Section):
    """One recurring task of the node (read a sensor, send a report, ...)."""

    name: str = Field(..., min_length=1, max_length=60, description="what the task does")
    current_ma: float = quantity(..., "mA", "current at the supply rail while the task runs", gt=0, le=1000)
    duration_ms: float = quantity(..., "ms", "how long one run of the task lasts", gt=0, le=600_000)
    every_s: float = quantity(..., "s", "period between runs", gt=0, le=31_536_000)
    hours: str = Field("all", description="active hours of the day, e.g. '06-22' or 'all'")
    days: str = Field("every day", description="active days, e.g. 'weekdays' or 'every day'")

    @model_validator(mode="after")
    def _fits_period(self) -> NodeTask:
        if self.duration_ms / 1000.0 > self.every_s:
            raise ValueError("duration_ms must not exceed every_s (a task cannot run longer than its period)")
        WeeklySchedule(hours=self.hours, days=self.days)
        return self

    @property
    def energy_per_run_j(self) -> float:
        """Energy of one run at the rail [J] for a given rail voltage of 1 V (multiply by supply_v)."""
        return self.current_ma * 1e-3 * self.duration_ms * 1e-3


class NodeSpec(Section):
    """The sensor node as a load on the store."""

    supply_v: float = quantity(3.0, "V", "supply rail voltage of the node", gt=0.5, le=24, step=0.1)
    sleep_current_ua: float = quantity(1.5, "uA", "current at the rail between tasks", ge=0, le=100_000)
    regulator_efficiency: float = quantity(0.9, "-", "efficiency of the regulator between store and rail",
                                           gt=0, le=1, step=0.01)
    regulator_min_input_v: float = quantity(1.8, "V", "lowest store voltage at which the regulator still "
                                            "holds the rail (checked against ESR sag)", ge=0, le=24)
    task: list[NodeTask] = Field(default_factory=list, description="the node's recurring tasks")

    def task_mask(self, task: NodeTask) -> np.ndarray:
        return WeeklySchedule(hours=task.hours, days=task.days).mask()

    @property
    def largest_task_current_ma(self) -> float:
        return max((t.current_ma for t in self.task), default=0.0)


def demand_energy_j(node: NodeSpec) -> np.ndarray:
    """Hourly energy drawn from the store by the node when it runs [J], shape (8760,).

    Parameters
    ----------
    node : NodeSpec
        Rail voltage [V], sleep current [uA], tasks (current [mA], duration [ms], period [s],
        schedule) and regulator efficiency [-].

    Returns
    -------
    ndarray
        Energy per hour at the store side [J].
    """
    rail_j = np.full(HOURS_PER_YEAR, node.sleep_current_ua * 1e-6 * node.supply_v * SECONDS_PER_HOUR)
    for task in node.task:
        runs_per_hour = SECONDS_PER_HOUR / task.every_s
        rail_j = rail_j + node.task_mask(task) * runs_per_hour * task.energy_per_run_j * node.supply_v
    return rail_j / node.regulator_efficiency


def mean_power_w(node: NodeSpec) -> float:
    """Mean power drawn from the store over the year [W]."""
    return float(demand_energy_j(node).mean() / SECONDS_PER_HOUR)
