"""Safety cautions shown beside a spot's results, chosen from what is fitted where.

The wording is general guidance only; every caution defers to local codes and licensed practice.
"""

from __future__ import annotations

from dataclasses import dataclass

DEFER = ("Follow the site's permit-to-work system, the local codes and the equipment makers' "
         "instructions; where they call for a licensed or certified person, use one.")

CAUTIONS: dict[str, tuple[str, str]] = {
    "hot_surface": (
        "Hot surfaces",
        "Pipes, casings and heat sinks can burn on contact. Fit thermal harvesters only with the process "
        "cooled or with heat-resistant gloves, keep insulation intact around the module, and label the spot."),
    "rotating_machinery": (
        "Rotating machinery",
        "Mount on machines only while they are stopped and locked out; keep clear of couplings, shafts and "
        "belts; make sure the harvester and its fixings cannot work loose into moving parts."),
    "work_at_height": (
        "Work at height",
        "This spot is at or above 2 m, or on a roof or facade. Plan access (platform, ladder rules, fall "
        "protection) before fitting and for every later visit."),
    "electrical_enclosure": (
        "Electrical enclosures and wiring",
        "Do not open panels or run cables near live conductors unless qualified and authorised; keep the "
        "node's wiring separate from mains circuits."),
    "explosive_atmosphere": (
        "Explosive atmosphere",
        "The spot lies in a classified hazardous area. Only equipment certified for that zone may be fitted, "
        "including the store and the harvester; stored energy and hot surfaces are ignition sources."),
    "lithium_cell": (
        "Lithium cells",
        "Lithium cells can vent or burn if crushed, short-circuited, overheated or charged outside their "
        "temperature window. Use cells with protection, respect the charge limits, and follow the transport "
        "and disposal rules."),
    "rf_exposure": (
        "Radio-frequency exposure",
        "A dedicated transmitter must stay within the licence-free band limits, and people must be kept "
        "outside the exposure limits near its antenna."),
}


@dataclass(frozen=True)
class Caution:
    key: str
    title: str
    text: str


def cautions_for(keys: set[str]) -> list[Caution]:
    """The cautions for ``keys``, in a fixed order, each ending with the deferral to local practice."""
    return [Caution(k, CAUTIONS[k][0], f"{CAUTIONS[k][1]} {DEFER}") for k in CAUTIONS if k in keys]
