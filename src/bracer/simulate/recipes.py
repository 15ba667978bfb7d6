"""Scripted incidents: named recipes, as data.

Each recipe is a frozen record of *what* happens (an excursion past a range end, a push at a cuff, a stop ...)
and its shape; the planner turns it into motion, force and trigger signals and the ground truth follows from
the same numbers.  A scenario is a list of recipes, each with an optional subject (the joint, contact, trigger
or stream it acts on; by default the first that fits).  Add an incident by adding a record here.
"""

from __future__ import annotations

import difflib
from dataclasses import dataclass
from typing import Literal

__all__ = [
    "RECIPES",
    "CuffPush",
    "Excursion",
    "FastMove",
    "LoggingGap",
    "Recipe",
    "ScenarioItem",
    "StopRequest",
    "lookup",
]

Direction = Literal["positive", "negative"]


@dataclass(frozen=True, slots=True)
class Excursion:
    """A movement of one joint out towards a range end and back.

    ``reach`` < 1 ends inside the near-miss band (at ``limit − (1 − reach)·band``); ``reach`` > 1 goes past
    the limit by ``(reach − 1)`` of the distance to the next layer's limit (kept two bands clear of it).
    """

    reach: float
    direction: Direction = "positive"
    speed_fraction: float = 0.5


@dataclass(frozen=True, slots=True)
class FastMove:
    """A movement whose minimum-jerk peak speed is ``factor`` times the joint's speed limit (kept two bands
    below the next layer's speed limit)."""

    factor: float = 1.2
    direction: Direction = "positive"


@dataclass(frozen=True, slots=True)
class CuffPush:
    """The limb presses into a cuff while the device holds still: the interaction displacement rises, holds
    and falls (each ramp a minimum-jerk profile), and the tissue force follows F = k·δ + c·δ̇.

    ``level`` sets the force held: ``transient`` → ``factor`` × the transient force limit (or × the
    quasi-static one when no transient limit is declared); ``sustained`` → between the sustained level and the
    quasi-static near-miss band, held for ``hold_factor`` × the sustained limit's duration.
    """

    level: Literal["transient", "sustained"]
    factor: float = 1.15
    rise: float = 0.06
    hold: float = 0.04
    hold_factor: float = 1.5


@dataclass(frozen=True, slots=True)
class StopRequest:
    """A stop request while the joints move at their peak speed: after a reaction delay every joint brakes at
    its stop_deceleration to standstill, then the actuators' torque is removed according to the stop category.

    ``latency_factor`` None keeps the protocol's reaction time; a number lengthens the reaction delay so that
    the stop takes that multiple of the latency budget.  ``triggers`` are tried in order.
    """

    triggers: tuple[str, ...] = ("emergency_stop",)
    latency_factor: float | None = None
    amplitude: float = 0.6


@dataclass(frozen=True, slots=True)
class LoggingGap:
    """Rows missing from one stream for ``duration`` seconds while the device holds still."""

    duration: float = 0.5


Spec = Excursion | FastMove | CuffPush | StopRequest | LoggingGap


@dataclass(frozen=True, slots=True)
class Recipe:
    name: str
    summary: str
    subject_kind: Literal["joint", "contact", "trigger", "stream"]
    spec: Spec


_ALL = (
    Recipe(
        "range_exceedance", "a joint goes past its range limit and comes back", "joint", Excursion(reach=1.5)
    ),
    Recipe(
        "near_miss",
        "a joint comes inside the near-miss band of its range limit without passing it",
        "joint",
        Excursion(reach=0.5),
    ),
    Recipe("speed_exceedance", "a movement faster than the joint's speed limit", "joint", FastMove()),
    Recipe(
        "force_peak",
        "a short push at a cuff above its transient force limit",
        "contact",
        CuffPush(level="transient"),
    ),
    Recipe(
        "sustained_pressure",
        "a cuff held above its sustained-force level for longer than allowed",
        "contact",
        CuffPush(level="sustained", rise=0.5, hold=0.0),
    ),
    Recipe(
        "emergency_stop",
        "an emergency stop during a movement, within its latency budget",
        "trigger",
        StopRequest(),
    ),
    Recipe(
        "slow_stop",
        "a stop whose reaction is so slow that it takes 1.3 times its latency budget",
        "trigger",
        StopRequest(triggers=("protective_stop", "emergency_stop"), latency_factor=1.3),
    ),
    Recipe("logging_gap", "rows missing from a stream", "stream", LoggingGap()),
)

#: Every incident by name, in the order a full scenario plays them.
RECIPES: dict[str, Recipe] = {r.name: r for r in _ALL}


@dataclass(frozen=True, slots=True)
class ScenarioItem:
    """One incident of a scenario: a recipe and, optionally, the subject it acts on."""

    recipe: Recipe
    subject: str | None = None


def lookup(text: str) -> ScenarioItem:
    """Read ``NAME`` or ``NAME:SUBJECT`` into a scenario item.

    Raises
    ------
    KeyError
        Unknown name; the message lists the known ones and suggests the closest.
    """
    name, _, subject = text.partition(":")
    name = name.strip().replace("-", "_")
    if name not in RECIPES:
        close = difflib.get_close_matches(name, list(RECIPES), n=1, cutoff=0.5)
        did = f"; did you mean '{close[0]}'?" if close else ""
        raise KeyError(f"unknown incident '{text}'{did} (incidents: {', '.join(RECIPES)})")
    return ScenarioItem(RECIPES[name], subject.strip() or None)
