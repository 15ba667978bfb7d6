"""The demo study: who takes part, which sessions are simulated, and what happens in each.

Everything here is invented: the Alder Vale Rehabilitation Unit, the Alder-4 arm exoskeleton and participants
AV-P01 to AV-P03.  The protocol is the data file ``protocols/alder4-demo-study.yaml`` (the example protocol
with an unimpaired control participant added); this module only says which sessions the demo simulates from
it.  Across the study every scripted incident kind of the simulator (:data:`bracer.simulate.RECIPES`) occurs
at least once, and one session is clean; tests/e2e checks both.
"""

from __future__ import annotations

from dataclasses import dataclass

__all__ = ["PROTOCOL_FILE", "STUDY", "DemoParticipant", "DemoSession", "participant"]

#: The demo study's protocol, in bracer's ``protocols`` data folder.
PROTOCOL_FILE = "alder4-demo-study.yaml"


@dataclass(frozen=True, slots=True)
class DemoParticipant:
    """A participant of the demo study and the body the simulator gives them.

    Attributes
    ----------
    code : str
        Participant code in the protocol.
    description : str
        Who they are, in a few words (the protocol holds their cautions).
    body_mass : float
        kg.
    height : float
        m.
    """

    code: str
    description: str
    body_mass: float
    height: float


@dataclass(frozen=True, slots=True)
class DemoSession:
    """One simulated therapy session.

    Attributes
    ----------
    participant : str
        Participant code.
    session : str
        Session identifier, e.g. "S1".
    date : str
        Session date, ISO 8601 (for the report's title block).
    duration : float
        s.
    seed : int
        Random seed of the simulation (the same seed gives the same files).
    incidents : tuple of str
        Scripted incidents in playing order, ``NAME`` or ``NAME:SUBJECT`` (see ``bracer simulate
        --list-incidents``); empty for a clean session.
    """

    participant: str
    session: str
    date: str
    duration: float
    seed: int
    incidents: tuple[str, ...]

    @property
    def clean(self) -> bool:
        return not self.incidents


PARTICIPANTS: tuple[DemoParticipant, ...] = (
    DemoParticipant("AV-P01", "post-stroke, spasticity and shoulder subluxation", 78.0, 1.74),
    DemoParticipant("AV-P02", "spinal cord injury, low bone density", 64.0, 1.68),
    DemoParticipant("AV-P03", "unimpaired control", 70.0, 1.80),
)

#: The sessions, in the order the demo runs them.
STUDY: tuple[DemoSession, ...] = (
    DemoSession(
        "AV-P01", "S1", "2027-03-02", 180.0, 101, ("range_exceedance", "near_miss", "speed_exceedance")
    ),
    DemoSession("AV-P01", "S2", "2027-03-09", 150.0, 102, ()),
    DemoSession("AV-P02", "S1", "2027-03-03", 180.0, 201, ("force_peak", "sustained_pressure", "near_miss")),
    DemoSession("AV-P02", "S2", "2027-03-10", 150.0, 202, ("emergency_stop", "logging_gap")),
    DemoSession(
        "AV-P03", "S1", "2027-03-04", 180.0, 301, ("slow_stop", "range_exceedance", "speed_exceedance")
    ),
    DemoSession(
        "AV-P03",
        "S2",
        "2027-03-11",
        150.0,
        302,
        ("emergency_stop", "force_peak:forearm_cuff", "logging_gap:cuffs"),
    ),
)


def participant(code: str) -> DemoParticipant:
    """The demo participant with this code.

    Raises
    ------
    KeyError
        No such participant in the demo study.
    """
    for p in PARTICIPANTS:
        if p.code == code:
            return p
    raise KeyError(f"no demo participant '{code}' (participants: {', '.join(p.code for p in PARTICIPANTS)})")
