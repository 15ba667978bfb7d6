"""Closed-form physics the review uses: stopping after a reaction delay, and transient contact.

All functions take and return internal units (SI, angles in rad) and plain floats; the same formulas serve a
joint's angular motion (rad, rad/s, rad/s^2) and a linear one (m, m/s, m/s^2).  No numpy: the review handles a
few dozen numbers, and its start-up must stay fast.

Stopping with constant deceleration ``a`` after a reaction delay ``t_r`` (any kinematics text):

* distance ``d = v·t_r + v²/(2a)``, time ``t = t_r + v/a``;
* the largest speed that stops within a distance ``d``: ``v = a·(−t_r + √(t_r² + 2d/a))`` (the positive root
  of ``v²/(2a) + v·t_r − d = 0``), and within a time ``t``: ``v = a·(t − t_r)``.

Transient contact, two-body model of ISO/TS 15066:2016 Annex A: energy ``E = F²/(2k)``, reduced mass
``μ = (1/m_H + 1/m_R)⁻¹`` and the largest relative speed ``v = F/√(μ·k)``.
"""

from __future__ import annotations

import math

__all__ = [
    "largest_speed_within_distance",
    "largest_speed_within_time",
    "reduced_mass",
    "stopping_distance",
    "stopping_time",
    "transient_energy",
    "transient_speed_limit",
]


def _check_stop_inputs(speed: float, reaction_time: float, deceleration: float) -> None:
    if speed < 0 or reaction_time < 0 or deceleration <= 0:
        raise ValueError(
            f"expected speed >= 0, reaction time >= 0 and deceleration > 0, found speed {speed}, "
            f"reaction time {reaction_time}, deceleration {deceleration}"
        )


def stopping_distance(speed: float, reaction_time: float, deceleration: float) -> float:
    """Distance travelled from the stop signal to standstill: ``v·t_r + v²/(2a)``.

    Parameters
    ----------
    speed : float
        Speed when the stop is triggered (rad/s or m/s), >= 0.
    reaction_time : float
        Time from the trigger until braking starts (s), >= 0.
    deceleration : float
        Constant deceleration while braking (rad/s² or m/s²), > 0.

    Returns
    -------
    float
        Distance in rad (or m).
    """
    _check_stop_inputs(speed, reaction_time, deceleration)
    return speed * reaction_time + speed * speed / (2.0 * deceleration)


def stopping_time(speed: float, reaction_time: float, deceleration: float) -> float:
    """Time from the stop signal to standstill: ``t_r + v/a`` (s)."""
    _check_stop_inputs(speed, reaction_time, deceleration)
    return reaction_time + speed / deceleration


def largest_speed_within_distance(room: float, reaction_time: float, deceleration: float) -> float:
    """The largest speed from which a stop ends within ``room``: ``a·(−t_r + √(t_r² + 2·room/a))``.

    Parameters
    ----------
    room : float
        Distance available (rad or m), >= 0.
    reaction_time, deceleration : float
        As for :func:`stopping_distance`.

    Returns
    -------
    float
        Speed in rad/s (or m/s); 0 when there is no room.
    """
    if room < 0:
        raise ValueError(f"room must be >= 0, found {room}")
    _check_stop_inputs(0.0, reaction_time, deceleration)
    a, t = deceleration, reaction_time
    return a * (-t + math.sqrt(t * t + 2.0 * room / a))


def largest_speed_within_time(budget: float, reaction_time: float, deceleration: float) -> float:
    """The largest speed from which a stop ends within ``budget`` (s): ``a·(budget − t_r)``, at least 0."""
    _check_stop_inputs(0.0, reaction_time, deceleration)
    return max(0.0, deceleration * (budget - reaction_time))


def reduced_mass(body_mass: float, robot_mass: float) -> float:
    """Reduced mass of the two-body contact model, ``(1/m_H + 1/m_R)⁻¹`` (kg); both masses > 0."""
    if body_mass <= 0 or robot_mass <= 0:
        raise ValueError(f"masses must be above zero, found m_H {body_mass} kg, m_R {robot_mass} kg")
    return 1.0 / (1.0 / body_mass + 1.0 / robot_mass)


def transient_energy(force: float, stiffness: float) -> float:
    """Energy stored in the body region at a contact force: ``E = F²/(2k)``.

    Parameters
    ----------
    force : float
        Contact force (N).
    stiffness : float
        Effective spring constant of the body region (N/m), > 0.

    Returns
    -------
    float
        Energy in J.
    """
    if stiffness <= 0:
        raise ValueError(f"stiffness must be above zero, found {stiffness} N/m")
    return force * force / (2.0 * stiffness)


def transient_speed_limit(force: float, stiffness: float, body_mass: float, robot_mass: float) -> float:
    """Largest relative speed at which a transient contact stays at or below ``force``: ``F/√(μ·k)`` (m/s).

    Parameters
    ----------
    force : float
        Permissible transient contact force (N).
    stiffness : float
        Effective spring constant of the body region (N/m).
    body_mass : float
        Effective mass of the body region m_H (kg).
    robot_mass : float
        Effective mass of the robot m_R = M/2 + m_L (kg).
    """
    if stiffness <= 0:
        raise ValueError(f"stiffness must be above zero, found {stiffness} N/m")
    return force / math.sqrt(reduced_mass(body_mass, robot_mass) * stiffness)
