"""A302 protection-state: a protection (mode or safety-state column) not in an allowed state while the device
moves.

For each ``logging.protections`` entry, the column (as recorded, numeric or text) must hold one of its
``allowed`` values whenever the device moves -- any joint's speed above ``stop.standstill.speed`` -- and
whenever motion is unknown (some joint's speed sample not valid): data that were not analysed are not taken as
"at rest".  An empty or unreadable cell is not an allowed value.  Each run of such samples (minimum duration
from ``protocol.audit``) is one ``violation``, quantity ``protection``, with the values seen in the message
and ``extra``.  Samples whose time is not valid are not analysed (the data-quality pass reports them).
Severity error.  Not assessable: the column is missing (error); no standstill speed declared (warning).
"""

from __future__ import annotations

import numpy as np

from bracer.audit.checks._common import (
    Unavailable,
    finding,
    fmt_t,
    not_assessable,
    shown_values,
    span_text,
    text_variants,
)
from bracer.audit.checks._joint import Motion, motion
from bracer.audit.context import AuditContext
from bracer.audit.events import find_events
from bracer.findings import Check, Finding, Kind, Severity, register
from bracer.protocol.model import Protection

CHECK = register(
    Check(
        "A302",
        "protection-state",
        "A protection not in an allowed state while the device moves",
        Severity.ERROR,
        needs=("protections", "speed"),
    )
)


def allowed_mask(states: np.ndarray, allowed: list[object]) -> np.ndarray:
    """Samples holding an allowed value (numeric columns compare as numbers, text columns as text)."""
    if states.dtype.kind in "fiub":
        nums = []
        for v in allowed:
            try:
                nums.append(float(v))  # type: ignore[arg-type]
            except ValueError:
                continue
        return np.isin(states.astype(np.float64, copy=False), np.asarray(nums, dtype=np.float64))
    return np.isin(states.astype(str, copy=False), [s for v in allowed for s in text_variants(v)])


def run(ctx: AuditContext) -> list[Finding]:
    """Protection states of every declared protection while the device moves."""
    p = ctx.resolution.protocol
    out: list[Finding] = []
    for name, prot in p.logging.protections.items():
        stream = ctx.session.streams.get(prot.stream)
        states = None if stream is None else stream.states.get(prot.column, stream.channels.get(prot.column))
        if stream is None or states is None:
            where = (
                f"stream '{prot.stream}' is not in the log"
                if stream is None
                else f"column '{prot.column}' is not in the log (stream '{prot.stream}')"
            )
            out.append(
                not_assessable(
                    CHECK,
                    Unavailable(prot.column, where),
                    subject=name,
                    subject_kind="protection",
                    quantity="protection",
                    what=f"protection '{name}' ({prot.description})",
                )
            )
            continue
        if p.stop is None:
            why = Unavailable(
                None, "the protocol declares no stop.standstill.speed to tell when the device moves"
            )
            out.append(
                not_assessable(
                    CHECK,
                    why,
                    subject=name,
                    subject_kind="protection",
                    quantity="protection",
                    what=f"protection '{name}' ({prot.description})",
                    severity=Severity.WARNING,
                )
            )
            continue
        mot = motion(ctx, prot.stream, p.stop.standstill.speed.si)
        if isinstance(mot, Unavailable):
            out.append(
                not_assessable(
                    CHECK,
                    mot,
                    subject=name,
                    subject_kind="protection",
                    quantity="protection",
                    what=f"protection '{name}' ({prot.description})",
                )
            )
            continue
        out.extend(_events(ctx, name, prot, stream.time, states, mot))
    return out


def _events(
    ctx: AuditContext, name: str, prot: Protection, t: np.ndarray, states: np.ndarray, mot: Motion
) -> list[Finding]:
    bad = ~allowed_mask(states, list(prot.allowed))
    bad &= mot.moving | ~mot.known
    if not bad.any():
        return []
    tv = ctx.session.time_valid.get(prot.stream)
    valid = np.ones(t.shape[0], dtype=bool) if tv is None else tv
    out = []
    min_duration = ctx.resolution.protocol.audit.min_event_duration.si
    for ev in find_events(t, bad.view(np.int8), valid, 0, min_duration=min_duration):
        seen = shown_values(states[ev.i_start : ev.i_end + 1])
        unknown = bool((~mot.known[ev.i_start : ev.i_end + 1]).any())
        why = "while the device moved" + (" or its motion was not known (speed not valid)" if unknown else "")
        msg = (
            f"protection '{name}' ({prot.description}): column {prot.column} held "
            f"{', '.join(repr(s) for s in seen)}, not an allowed value "
            f"({', '.join(map(str, prot.allowed))}), "
            f"{why}: {span_text(ev.t_start, ev.t_end)}, from {fmt_t(ev.t_start)}."
        )
        out.append(
            finding(
                CHECK,
                Kind.VIOLATION,
                Severity.ERROR,
                msg,
                subject=name,
                subject_kind="protection",
                quantity="protection",
                channel=prot.column,
                t_start=ev.t_start,
                t_end=ev.t_end,
                i_start=ev.i_start,
                i_end=ev.i_end,
                extra=(
                    ("values_seen", seen),
                    ("allowed", tuple(str(a) for a in prot.allowed)),
                    ("motion_unknown", unknown),
                    ("duration_s", ev.duration),
                ),
            )
        )
    return out
