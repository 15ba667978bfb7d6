"""The session's signals for the report's plots, read the way the audit reads them.

The plots draw what the audit analysed: the same effective limits (the participant's cautions and overrides
applied), the same channels with the same data-quality masks (samples not fit to analyse are not drawn), and
the same derived speeds.  The signals come from the audit's own channel functions, so a plotted peak is the
peak the findings report.
"""

from __future__ import annotations

from collections.abc import Sequence
from pathlib import Path
from typing import TYPE_CHECKING

if TYPE_CHECKING:
    from bracer.audit.context import AuditContext
    from bracer.protocol.model import Protocol

__all__ = ["session_context"]


def session_context(protocol: Protocol, logs: Sequence[str | Path], participant: str | None) -> AuditContext:
    """Read ``logs`` on the protocol's channel map and apply the data-quality masks, as the audit does.

    Raises
    ------
    InputError
        A log cannot be read (the audit of the same logs fails the same way).
    """
    from bracer.audit.context import AuditContext
    from bracer.audit.quality import run_quality
    from bracer.protocol.resolve import resolve
    from bracer.session.read import read_session

    resolution = resolve(protocol, participant)
    session = read_session(resolution.protocol, list(logs))
    quality = run_quality(resolution, session)
    return AuditContext(resolution, quality.session, coverage=quality.coverage)
