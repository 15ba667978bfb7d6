"""Runs of True in a boolean mask, and findings for them with a cap so that noise cannot flood a report."""

from __future__ import annotations

from collections.abc import Callable

import numpy as np

from bracer.audit.events import runs as event_runs
from bracer.findings import Finding

__all__ = ["MAX_FINDINGS_PER_CHANNEL", "capped", "runs"]

#: At most this many findings per check and channel; the rest are summarised in one more finding.
MAX_FINDINGS_PER_CHANNEL = 20


def runs(mask: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """First and last index (inclusive) of each run of True in ``mask`` (shape (n,)), from run boundaries."""
    count = int(np.count_nonzero(mask))
    if count == 0:
        empty = np.zeros(0, dtype=np.int64)
        return empty, empty
    if count < mask.size // 8:  # sparse: group the True indices (cheaper than a full-length diff)
        idx = np.flatnonzero(mask)
        breaks = np.flatnonzero(np.diff(idx) != 1)
        return idx[np.r_[0, breaks + 1]], idx[np.r_[breaks, idx.size - 1]]
    return event_runs(mask)  # dense: from the mask's change points


def capped(
    starts: np.ndarray,
    ends: np.ndarray,
    one: Callable[[int, int], Finding],
    rest: Callable[[np.ndarray, np.ndarray], Finding],
    limit: int = MAX_FINDINGS_PER_CHANNEL,
) -> list[Finding]:
    """``one(i0, i1)`` for the first ``limit`` runs, then ``rest(starts, ends)`` once for the runs left."""
    out = [one(int(a), int(b)) for a, b in zip(starts[:limit], ends[:limit], strict=True)]
    if starts.size > limit:
        out.append(rest(starts[limit:], ends[limit:]))
    return out


def mask_of(starts: np.ndarray, ends: np.ndarray, n: int) -> np.ndarray:
    """The boolean mask, shape (n,), that is True on the runs ``starts[k]..ends[k]`` (inclusive)."""
    edges = np.zeros(n + 1, dtype=np.int64)
    np.add.at(edges, starts, 1)
    np.add.at(edges, ends + 1, -1)
    return np.cumsum(edges[:-1]) > 0
