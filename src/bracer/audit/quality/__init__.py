"""The audit's data-quality pass: the log's time base and values are checked before any limit.

Each check is a module with a registered :class:`~bracer.findings.Check` (codes ``Q1xx``) and a
``run(ctx) -> QualityResult``: its findings, and the samples it found unfit to analyse.  :func:`run_quality`
runs them in :data:`ORDER` -- each sees the masks of those before it -- then sets the session's
``time_valid`` and ``channel_valid`` masks that the limit checks read through ``Session.signal``, and
measures the analysed coverage.

=====  ==================  ============================================================================
code   name                what it finds (default severity; what it marks not analysed)
=====  ==================  ============================================================================
Q101   missing-column      a column the protocol names is in no file (error, not assessable)
Q102   dropped-row         a malformed last row was left out, e.g. a truncated last line (warning)
Q103   time-order          time steps back (error), repeats or is missing (warning); those samples
Q104   time-gap            a step longer than ``audit.gap_tolerance`` × the declared period (warning)
Q105   sample-rate         measured rate > 1 % off the declared one, or jitter > 25 % of the period
Q106   missing-values      NaN / empty runs: info within the gap tolerance, else warning; a channel with
                           no value at all is not assessable (error)
Q107   constant-channel    one value for the whole session (warning); the whole channel
Q108   saturation          flat at the channel's largest/smallest value ≥ 10 samples and 20 ms (warning)
Q109   force-offset        force at rest above ``audit.force_offset_tolerance`` (warning)
Q110   unit-suspect        values that do not fit the declared unit (error or warning); the channel, or
                           the stream for a time unit
Q111   empty-stream        fewer than two samples (error, not assessable)
=====  ==================  ============================================================================

The orchestrator (:mod:`bracer.audit.run`) adds Q197 limit-not-resolved, Q198 limit-checks-unavailable and
Q199 check-failed.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from bracer.audit.context import AuditContext
from bracer.audit.quality import (
    constant,
    dropped_rows,
    empty_stream,
    force_offset,
    gaps,
    missing_columns,
    missing_values,
    sample_rate,
    saturation,
    time_order,
    unit_suspect,
)
from bracer.audit.quality.base import QualityResult, StreamTiming
from bracer.audit.quality.coverage import Coverage, coverage
from bracer.findings import Finding
from bracer.protocol.resolve import Resolution
from bracer.session.channelmap import channel_map
from bracer.session.model import Session

__all__ = ["ORDER", "QualityOutcome", "run_quality"]

#: The checks in the order they run: reading problems, then the clock, then the values.
ORDER = (
    missing_columns,
    dropped_rows,
    empty_stream,
    time_order,
    unit_suspect,
    sample_rate,
    gaps,
    missing_values,
    constant,
    saturation,
    force_offset,
)


@dataclass(frozen=True, eq=False)
class QualityOutcome:
    """The session with its masks set, what the pass found, each stream's clock, and the coverage."""

    session: Session
    findings: tuple[Finding, ...]
    timings: tuple[StreamTiming, ...]
    coverage: Coverage
    codes: tuple[str, ...]  # the checks that ran


class _Masks:
    """Masks gathered over the pass: per stream (time base) and per channel (True = not analysed).

    Every session the pass hands to a check carries the valid mask of every channel, so that no check (nor
    ``Session.signal``) derives it again from the values: a channel's NaNs are looked for once, here, and an
    unflagged channel without NaNs shares its stream's time mask (no copy).
    """

    def __init__(self, session: Session) -> None:
        self.session = session
        self.time: dict[str, np.ndarray] = {n: np.isfinite(s.time) for n, s in session.streams.items()}
        self.flags: dict[str, dict[str, np.ndarray]] = {}
        #: per stream and channel: None when every value is finite, else the mask of finite values
        self.finite: dict[str, dict[str, np.ndarray | None]] = {
            n: {c: _finite(x) for c, x in s.channels.items()} for n, s in session.streams.items()
        }

    def add(self, result: QualityResult) -> None:
        for inv in result.invalid:
            if inv.column is None:
                self.time[inv.stream] = self.time[inv.stream] & ~inv.bad
            else:
                per = self.flags.setdefault(inv.stream, {})
                per[inv.column] = per[inv.column] | inv.bad if inv.column in per else inv.bad.copy()

    def channel_valid(self) -> dict[str, dict[str, np.ndarray]]:
        """Valid masks of every channel: time valid, finite, and not flagged by a check."""
        out: dict[str, dict[str, np.ndarray]] = {}
        for name, stream in self.session.streams.items():
            tv = self.time[name]
            flags = self.flags.get(name, {})
            finite = self.finite[name]
            per: dict[str, np.ndarray] = {}
            for column in stream.channels:
                ok = finite[column]
                valid = tv if ok is None else tv & ok
                if column in flags:
                    valid = valid & ~flags[column]
                per[column] = valid
            out[name] = per
        return out

    def apply(self) -> Session:
        s = self.session
        return Session(s.streams, s.inputs, dict(self.time), self.channel_valid(), s.missing, s.dropped)


def _finite(x: np.ndarray) -> np.ndarray | None:
    """None when every value of ``x`` is finite, else ``np.isfinite(x)``.

    A finite sum means every term is finite (a NaN or an infinity makes it NaN or infinite); only when the
    sum is not finite -- a missing value, or an overflow -- is the mask built.
    """
    if np.isfinite(np.add.reduce(x)):
        return None
    finite = np.isfinite(x)
    return None if finite.all() else finite


def run_quality(resolution: Resolution, session: Session) -> QualityOutcome:
    """Run every data-quality check on ``session`` against the effective protocol in ``resolution``."""
    masks = _Masks(session)
    findings: list[Finding] = []
    timings: tuple[StreamTiming, ...] = ()
    current = masks.apply()
    for module in ORDER:
        result = module.run(AuditContext(resolution, current))
        findings.extend(result.findings)
        timings = timings or result.timings
        if result.invalid:
            masks.add(result)
            current = masks.apply()
    final = masks.apply()
    protocol = resolution.protocol
    cov = coverage(final, channel_map(protocol), protocol.audit.gap_tolerance)
    return QualityOutcome(final, tuple(findings), timings, cov, tuple(m.CHECK.code for m in ORDER))
