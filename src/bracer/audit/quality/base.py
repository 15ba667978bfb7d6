"""What a data-quality check returns, and the helpers every check uses to build its findings."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from bracer.findings import Check, Finding, Kind, Severity

__all__ = ["Invalidation", "QualityResult", "StreamTiming", "fmt_s", "make_finding"]


@dataclass(frozen=True, eq=False)
class Invalidation:
    """Samples a check found unfit to analyse.

    ``column`` None means the stream's time base (every channel of the stream); otherwise one channel.
    ``bad`` has the stream's shape (n,), True where the sample must be treated as not analysed.
    """

    stream: str
    column: str | None
    bad: np.ndarray


@dataclass(frozen=True, slots=True)
class StreamTiming:
    """A stream's clock as measured: for the record and the terminal summary.

    ``rate`` and ``jitter`` come from the regular steps (positive, at most gap-tolerance × the declared
    period or the median step, whichever is longer); None when the stream has fewer than two such steps.
    """

    stream: str
    path: str
    samples: int
    t_first: float | None  # s, first and last valid time
    t_last: float | None
    declared_rate: float  # Hz
    rate: float | None  # Hz
    jitter: float | None  # s, standard deviation of the regular steps


@dataclass(frozen=True, eq=False)
class QualityResult:
    findings: tuple[Finding, ...] = ()
    invalid: tuple[Invalidation, ...] = ()
    timings: tuple[StreamTiming, ...] = ()


def make_finding(
    check: Check,
    message: str,
    *,
    severity: Severity | None = None,
    kind: Kind = Kind.DATA_QUALITY,
    stream: str | None = None,
    extra: tuple[tuple[str, Any], ...] = (),
    **fields: Any,
) -> Finding:
    """A finding of ``check`` (its code, name and default severity), with plain Python numbers.

    ``stream`` goes into ``extra`` as ``("stream", name)`` so that reports can say which clock a time is on.
    """
    clean = {k: _plain(v) for k, v in fields.items()}
    pairs = ((("stream", stream),) if stream is not None else ()) + tuple((k, _plain(v)) for k, v in extra)
    return Finding(check.code, check.name, severity or check.severity, kind, message, extra=pairs, **clean)


def _plain(value: Any) -> Any:
    if isinstance(value, np.generic):
        return value.item()
    if isinstance(value, tuple):
        return tuple(_plain(v) for v in value)
    return value


def fmt_s(t: float) -> str:
    """A time on the log's clock for a message: seconds to the millisecond (or finer when needed)."""
    if t == 0 or abs(t) >= 0.01:
        return f"{t:.3f} s"
    return f"{t * 1e3:.3g} ms"
