"""The summary per limit class: counts of exceedances and near misses, and one careful sentence per class.

The sentence states what the analysed data show and how much of the session was analysed, e.g. "no exceedance
found in the analysed data (analysed: 99.7 % of session time)"; it never calls a device, a session or a
participant safe, and it never says a check was passed.  What was not analysed is named with its reason:
a channel missing from the log, a channel with no sample fit to analyse, a limit the protocol does not
declare, a check that could not run.

The analysed share of a class is that of its least-covered channel (each channel of the class was analysed for
at least that share of the session's time); channels with no analysed time at all are listed apart.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

from bracer.report.document import ClassSummary, FindingRow
from bracer.report.wording import percent, plural

__all__ = ["CLASSES", "LimitClass", "class_of", "summarise_classes"]


@dataclass(frozen=True, slots=True)
class LimitClass:
    key: str
    label: str
    codes: frozenset[str]
    #: near-miss quantities (A121) that belong to this class
    near: frozenset[str]
    #: channel roles whose coverage this class depends on
    roles: tuple[str, ...]
    #: the class is listed only when the protocol declares it or a finding names it
    optional: bool = False


CLASSES: tuple[LimitClass, ...] = (
    LimitClass(
        "range", "Range of motion", frozenset({"A101", "A122"}), frozenset({"position"}), ("position",)
    ),
    LimitClass("speed", "Joint speed", frozenset({"A102"}), frozenset({"speed"}), ("velocity",)),
    LimitClass(
        "acceleration",
        "Joint acceleration",
        frozenset({"A104"}),
        frozenset({"acceleration"}),
        ("velocity",),
        optional=True,
    ),
    LimitClass("torque", "Joint torque", frozenset({"A103"}), frozenset({"torque"}), ("torque",)),
    LimitClass("force", "Contact force", frozenset({"A111"}), frozenset({"force"}), ("force",)),
    LimitClass("pressure", "Contact pressure", frozenset({"A112"}), frozenset({"pressure"}), ("force",)),
    LimitClass("sustained", "Sustained force", frozenset({"A113"}), frozenset(), ("force",)),
    LimitClass("stops", "Stops", frozenset({"A201", "A202", "A203", "A204"}), frozenset(), ("trigger",)),
    LimitClass("locked", "Locked joints", frozenset({"A301"}), frozenset(), ("position",)),
    LimitClass("protections", "Protections", frozenset({"A302"}), frozenset(), ("protection",)),
    LimitClass("data_quality", "Data quality", frozenset(), frozenset(), ()),
)
_BY_KEY = {c.key: c for c in CLASSES}
_BY_CODE = {code: c.key for c in CLASSES for code in c.codes}


def class_of(f: FindingRow) -> str:
    """The limit class a finding belongs to (data quality for every Q code except a failed check's)."""
    if f.code == "A121":
        return next((c.key for c in CLASSES if f.quantity in c.near), "data_quality")
    if f.code == "Q199":  # a limit check that failed: its class is not assessable
        failed = f.get("check")
        if isinstance(failed, str) and failed in _BY_CODE:
            return _BY_CODE[failed]
    return _BY_CODE.get(f.code, "data_quality")


@dataclass(frozen=True, slots=True)
class Declared:
    """Which classes the protocol declares limits for (None: the protocol was not available to the report)."""

    classes: frozenset[str] | None
    locked_joints: frozenset[str] | None
    derived_speed: frozenset[str]  # joints whose speed is derived from position


def _channels(coverage: dict[str, Any], lc: LimitClass, declared: Declared) -> list[dict[str, Any]]:
    rows: list[dict[str, Any]] = list(coverage.get("channels") or [])
    if lc.key == "data_quality":
        return rows
    chosen = [r for r in rows if r.get("role") in lc.roles]
    if lc.key in ("speed", "acceleration"):
        chosen += [
            r for r in rows if r.get("role") == "position" and r.get("subject") in declared.derived_speed
        ]
    if lc.key == "locked" and declared.locked_joints is not None:
        chosen = [r for r in chosen if r.get("subject") in declared.locked_joints]
    if lc.key == "stops":
        chosen += [r for r in rows if r.get("role") == "velocity"]
    return chosen


def _not_analysed(rows: Sequence[dict[str, Any]]) -> tuple[list[str], float | None]:
    """Channels with no analysed time (with the reason) and the least analysed share of the others."""
    missing: list[str] = []
    shares: list[float] = []
    for r in rows:
        what = f"column '{r.get('column')}' ({_role_words(r)}, stream '{r.get('stream')}')"
        if not r.get("present"):
            missing.append(f"{what}: not in the log")
        elif (r.get("analysed_s") or 0.0) <= 0:
            missing.append(f"{what}: no sample fit to analyse (see the data-quality findings)")
        else:
            shares.append(float(r.get("fraction") or 0.0))
    return missing, (min(shares) if shares else None)


def _role_words(r: dict[str, Any]) -> str:
    role, subject = r.get("role"), r.get("subject")
    if role in ("position", "velocity", "torque"):
        return f"joint '{subject}' {role}"
    if role == "force":
        return f"contact '{subject}' force"
    if role == "trigger":
        return f"stop trigger '{subject}'"
    if role == "protection":
        return f"protection '{subject}'"
    return str(role)


def summarise_classes(
    findings: Sequence[FindingRow], audit: dict[str, Any], declared: Declared
) -> tuple[ClassSummary, ...]:
    """One :class:`ClassSummary` per limit class, in the order of :data:`CLASSES`."""
    coverage = audit.get("coverage") or {}
    checks = audit.get("checks") or {}
    limit_checks = bool(checks.get("limit_checks_available", True))
    by_class: dict[str, list[FindingRow]] = {c.key: [] for c in CLASSES}
    for f in findings:
        by_class[class_of(f)].append(f)
    out: list[ClassSummary] = []
    for lc in CLASSES:
        rows = by_class[lc.key]
        is_declared = declared.classes is None or lc.key in declared.classes or lc.key == "data_quality"
        if lc.optional and not rows and not (declared.classes and lc.key in declared.classes):
            continue
        missing, share = _not_analysed(_channels(coverage, lc, declared))
        out.append(_summary(lc, rows, missing, share, is_declared, limit_checks, coverage))
    return tuple(out)


def _summary(
    lc: LimitClass,
    rows: list[FindingRow],
    missing: list[str],
    share: float | None,
    is_declared: bool,
    limit_checks: bool,
    coverage: dict[str, Any],
) -> ClassSummary:
    violations = sum(f.kind == "violation" for f in rows)
    near = sum(f.kind == "near_miss" for f in rows)
    na = [f for f in rows if f.kind == "not_assessable"]
    refs = tuple(f.ref for f in rows)
    not_analysed = list(missing)
    not_analysed += [f"{f.ref}: {f.message}" for f in na]
    events = 0
    if lc.key == "data_quality":
        dq = [f for f in rows if f.kind in ("data_quality", "not_assessable")]
        events = len(dq)
        frac = coverage.get("fraction")
        n_err = sum(f.severity == "error" for f in dq)
        n_warn = sum(f.severity == "warning" for f in dq)
        head = (
            f"{plural(len(dq), 'data-quality finding')} ({n_err} error, {n_warn} warning); "
            f"analysed: {percent(frac)} of session time with every analysed channel covered"
            if dq
            else f"no data-quality finding; analysed: {percent(frac)} of session time with every "
            "analysed channel covered"
        )
        return ClassSummary(lc.key, lc.label, 0, 0, len(na), events, head, tuple(missing), refs)
    if not is_declared:
        text = "not analysed: the protocol declares no limit of this class"
        return ClassSummary(
            lc.key, lc.label, violations, near, len(na), 0, text, (text.split(": ", 1)[1],), refs
        )
    if not limit_checks:
        text = "not analysed: the limit checks did not run (see the data-quality findings)"
        return ClassSummary(lc.key, lc.label, violations, near, len(na), 0, text, tuple(not_analysed), refs)
    analysed = f"analysed: {percent(share)} of session time" if share is not None else None
    if lc.key == "stops":
        stops = {f.t_start for f in rows if f.code == "A201" and f.kind in ("stop", "violation")}
        events = len(stops)
        head = _stops_sentence(rows, events, analysed)
    elif share is None:
        head = "not analysed: no channel of this class could be analysed"
    elif violations:
        head = f"{plural(violations, 'exceedance')} found in the analysed data ({analysed})"
    else:
        head = f"no exceedance found in the analysed data ({analysed})"
    if near:
        head += f"; {plural(near, 'near miss', 'near misses')}"
    warned = [
        f
        for f in rows
        if f.kind not in ("violation", "near_miss", "not_assessable") and f.severity in ("warning", "error")
    ]
    if warned:
        head += f"; {plural(len(warned), 'further warning')} ({', '.join(f.ref for f in warned)})"
    if na:
        head += f"; {len(na)} part(s) not assessable ({', '.join(f.ref for f in na)})"
    elif missing and share is not None:
        head += f"; {plural(len(missing), 'channel')} not analysed"
    return ClassSummary(lc.key, lc.label, violations, near, len(na), events, head, tuple(not_analysed), refs)


def _stops_sentence(rows: list[FindingRow], stops: int, analysed: str | None) -> str:
    if analysed is None:
        return "not analysed: no stop trigger channel could be analysed"
    outside = [f for f in rows if f.kind == "violation"]
    if stops == 0:
        return f"no stop requested in the analysed data ({analysed})"
    if not outside:
        return (
            f"{plural(stops, 'stop')} analysed; no finding outside the latency budget, the torque-off budget "
            f"or the declared stop category ({analysed})"
        )
    return (
        f"{plural(stops, 'stop')} analysed; {plural(len(outside), 'finding')} outside the declared stop "
        f"behaviour ({', '.join(f.ref for f in outside)}) ({analysed})"
    )
