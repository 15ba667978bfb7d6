"""Synthetic therapy sessions with known ground truth, driven by a protocol file.

A session is planned from the protocol's effective limits for one participant
(:mod:`~bracer.simulate.envelope`): therapy repetitions of minimum-jerk movements
(:mod:`~bracer.simulate.minjerk`) with rests, and scripted incidents (:mod:`~bracer.simulate.recipes`) spaced
over it (:mod:`~bracer.simulate.planner`).  Joint torque comes from a rigid-body model of arm and device
(:mod:`~bracer.simulate.body`, :mod:`~bracer.simulate.dynamics`) with segment parameters from Winter's
anthropometric table; cuff forces from a spring–damper model of the soft tissue
(:mod:`~bracer.simulate.tissue`); stops from a reaction delay and constant deceleration
(:mod:`~bracer.simulate.stopping`).  Every channel passes through a sensor model (offset, noise,
quantisation). The logs are written one file per stream, with ``truth.json`` beside them
(:mod:`~bracer.simulate.truth`).

This package imports numpy; the command line imports it only inside ``bracer simulate``.
"""

from bracer.simulate.incidents import SimulationError
from bracer.simulate.params import DeviceLink, SensorModel, SensorSet, SimulationParameters
from bracer.simulate.recipes import RECIPES, ScenarioItem, lookup
from bracer.simulate.session import GroundTruth, SimulationOutput, default_scenario, simulate

__all__ = [
    "RECIPES",
    "DeviceLink",
    "GroundTruth",
    "ScenarioItem",
    "SensorModel",
    "SensorSet",
    "SimulationError",
    "SimulationOutput",
    "SimulationParameters",
    "default_scenario",
    "lookup",
    "simulate",
]
