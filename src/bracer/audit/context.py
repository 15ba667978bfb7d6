"""What every audit check receives."""

from __future__ import annotations

from dataclasses import dataclass

from bracer.protocol.resolve import Resolution
from bracer.session.model import Session

__all__ = ["AuditContext"]


@dataclass(frozen=True, eq=False)
class AuditContext:
    """The effective limits for the participant, and the session with its data-quality masks applied.

    ``resolution.protocol`` is the protocol after the participant's cautions and overrides; checks read limits
    from it, never from the raw protocol.
    """

    resolution: Resolution
    session: Session
