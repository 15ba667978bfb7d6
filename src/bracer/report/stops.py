"""The stops table: one row per stop episode, from the audit's stop findings.

A stop episode is opened by its stop-latency finding (A201, kind ``stop`` or ``violation``); the torque-off
(A202), stop-distance (A203, one per joint that moved) and stop-category (A204) findings of the same trigger
-- same trigger source and same trigger time -- complete the row.  Everything comes from the record's
findings, so a report built from a JSON record has the same stops table as one built by running the audit.
"""

from __future__ import annotations

from collections.abc import Sequence

from bracer.report.document import FindingRow, StopJointRow, StopRow
from bracer.report.wording import value

__all__ = ["stop_rows"]

_SAME_TIME = 1e-9


def _same(a: FindingRow, b: FindingRow) -> bool:
    return (
        a.t_start is not None
        and b.t_start is not None
        and abs(a.t_start - b.t_start) <= _SAME_TIME
        and a.get("trigger") == b.get("trigger")
    )


def _latency(f: FindingRow) -> str:
    if f.kind == "stop":
        return "within budget"
    if f.peak is None:
        return "no standstill before the log ended"
    return f"over budget by {value(-(f.margin or 0.0), f.unit)}"


def _torque(f: FindingRow | None, category: int | None) -> str:
    if f is None:
        if category == 2:
            return "not timed: a category 2 stop keeps power by design"
        return "not assessed (no torque-off finding for this stop)"
    if f.kind == "stop":
        return "within budget" if f.limit is not None else "off (no budget declared)"
    if f.kind == "not_assessable":
        return "not assessable"
    if f.peak is None:
        return "not off on every joint before the log ended"
    return f"over budget by {value(-(f.margin or 0.0), f.unit)}"


def _category(f: FindingRow | None) -> tuple[int | None, str]:
    if f is None:
        return None, "not assessed (no stop-category finding for this stop)"
    cat = f.get("category")
    category = int(cat) if isinstance(cat, int | float) else None
    words = f"category {category}" if category is not None else "the declared category"
    if f.kind == "stop":
        return category, f"consistent with {words}"
    if f.kind == "violation":
        return category, f"not consistent with {words} ({f.ref})"
    return category, f"not assessable ({f.ref})"


def stop_rows(findings: Sequence[FindingRow]) -> tuple[StopRow, ...]:
    """The stop episodes in time order, numbered S1, S2, …"""
    openers = [
        f
        for f in findings
        if f.code == "A201" and f.kind in ("stop", "violation") and f.t_start is not None and f.get("trigger")
    ]
    openers.sort(key=lambda f: (f.t_start or 0.0, f.ref))
    rows: list[StopRow] = []
    for k, lat in enumerate(openers, start=1):
        mates = [f for f in findings if f is not lat and f.code in ("A202", "A203", "A204") and _same(f, lat)]
        torque = next((f for f in mates if f.code == "A202"), None)
        cat_f = next((f for f in mates if f.code == "A204"), None)
        category, category_status = _category(cat_f)
        joints = tuple(
            StopJointRow(
                joint=f.subject or "–",
                distance=f.peak,
                predicted=f.limit,
                unit=f.unit,
                speed_at_trigger=f.get("speed_at_trigger"),
                speed_unit=f.get("speed_unit"),
                ref=f.ref,
            )
            for f in mates
            if f.code == "A203"
        )
        label = str(lat.get("trigger_label") or lat.get("trigger"))
        rows.append(
            StopRow(
                ref=f"S{k}",
                trigger=str(lat.get("trigger")),
                label=label,
                t_trigger=float(lat.t_start or 0.0),
                t_standstill=lat.t_end if lat.peak is not None else None,
                latency=lat.peak,
                latency_budget=lat.limit,
                latency_unit=lat.unit,
                latency_status=_latency(lat),
                torque_off=torque.peak if torque is not None else None,
                torque_budget=torque.limit if torque is not None else None,
                torque_unit=torque.unit if torque is not None else None,
                torque_status=_torque(torque, category),
                category=category,
                category_status=category_status,
                joints=joints,
                refs=(lat.ref, *(f.ref for f in mates)),
                outside=any(f.kind == "violation" for f in (lat, *mates)),
            )
        )
    return tuple(rows)
