"""Candidate incidents for the clinician, derived from the audit's exceedances.

In the vocabulary of ISO 14155:2020 (clinical investigation of medical devices): an *adverse event* is an
untoward medical occurrence in a participant, whether or not related to the device; a *device deficiency* is
an inadequacy of a device with respect to its identity, quality, durability, reliability, safety or
performance, including malfunction and use error.  bracer cannot know whether a participant was harmed, nor
how serious an event was or whether it is related to the device or the procedure: it lists the findings that
may be reportable and suggests which category to consider; seriousness and relatedness are left blank for the
clinician.

Rules (one candidate per exceedance finding; near misses and data-quality findings are not candidates):

* a contact force, pressure or sustained force over its limit: a load on the participant's tissue beyond what
  the protocol allows -- consider an adverse event, and a device deficiency (the device applied it);
* a range of motion beyond the participant's own range: consider an adverse event and a device deficiency;
* any other joint limit exceeded (range, speed, torque, acceleration), a locked joint that moved, a protection
  off while the device moved: the device did not keep a declared limit -- consider a device deficiency;
* a stop slower than its budget, a required stop that never came, torque not removed in time, a stop that did
  not behave as its declared category: consider a device deficiency.
"""

from __future__ import annotations

from collections.abc import Sequence

from bracer.report.document import FindingRow, Incident
from bracer.report.wording import value

__all__ = ["ADVERSE_EVENT", "DEVICE_DEFICIENCY", "candidate_incidents"]

ADVERSE_EVENT = "adverse event"
DEVICE_DEFICIENCY = "device deficiency"

_CONTACT = {"A111": "contact force", "A112": "contact pressure", "A113": "sustained force"}
_JOINT = {
    "A101": "range of motion",
    "A102": "joint speed",
    "A103": "joint torque",
    "A104": "joint acceleration",
}
_STOP = {
    "A201": "stop latency",
    "A202": "torque off after a stop",
    "A203": "stop distance",
    "A204": "stop category",
}


def _where(f: FindingRow) -> str:
    return f" on {f.subject}" if f.subject else ""


def _over(f: FindingRow) -> str:
    if f.peak is None or f.limit is None:
        return ""
    return f" (peak {value(f.peak, f.unit)}, limit {value(f.limit, f.unit)})"


def _candidate(f: FindingRow) -> tuple[str, tuple[str, ...], str] | None:
    """(event, categories, basis) for one finding, or None when it is not a candidate."""
    if f.kind != "violation":
        return None
    if f.code in _CONTACT:
        return (
            f"{_CONTACT[f.code]} over its limit{_where(f)}{_over(f)}",
            (ADVERSE_EVENT, DEVICE_DEFICIENCY),
            "a load on the participant beyond the protocol's limit; whether it caused harm is for the "
            "clinician "
            "to assess",
        )
    if f.code == "A101" and f.layer == "participant":
        return (
            f"joint moved beyond the participant's range of motion{_where(f)}{_over(f)}",
            (ADVERSE_EVENT, DEVICE_DEFICIENCY),
            "motion beyond the participant's measured (or reference) range; whether it caused harm is for "
            "the "
            "clinician to assess",
        )
    if f.code in _JOINT:
        layer = f"{f.layer} " if f.layer else ""
        return (
            f"{layer}{_JOINT[f.code]} limit exceeded{_where(f)}{_over(f)}",
            (DEVICE_DEFICIENCY,),
            "the device did not keep a declared limit",
        )
    if f.code in _STOP:
        if f.code == "A201" and f.peak is None:
            event = "no standstill after a stop request before the log ended"
        elif f.code == "A201":
            event = f"stop slower than its latency budget{_over(f)}"
        elif f.code == "A202":
            event = "torque not removed within its budget after a stop" + _over(f)
        elif f.code == "A204":
            event = "stop did not behave as its declared category"
        else:
            event = f"{_STOP[f.code]}{_where(f)} beyond what the declared stop predicts{_over(f)}"
        return event, (DEVICE_DEFICIENCY,), "the stop function did not perform as the protocol declares"
    if f.code == "A301":
        return (
            f"locked joint moved{_where(f)}{_over(f)}",
            (DEVICE_DEFICIENCY,),
            "a joint the protocol locks moved beyond its tolerance",
        )
    if f.code == "A302":
        return (
            f"protection not in an allowed state while the device moved{_where(f)}",
            (DEVICE_DEFICIENCY,),
            "a protection the protocol requires was not active (malfunction or use error)",
        )
    return None


def candidate_incidents(findings: Sequence[FindingRow]) -> tuple[Incident, ...]:
    """Candidate incidents I1, I2, … in the order of the findings (time order)."""
    out: list[Incident] = []
    for f in findings:
        cand = _candidate(f)
        if cand is None:
            continue
        event, categories, basis = cand
        out.append(Incident(f"I{len(out) + 1}", f.t_start, f.ref, event, categories, basis))
    return tuple(out)
