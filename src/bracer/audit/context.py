"""What every audit check receives."""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

from bracer.protocol.resolve import Resolution
from bracer.session.model import Session

if TYPE_CHECKING:
    from bracer.audit.quality.coverage import Coverage

__all__ = ["AuditContext"]


@dataclass(frozen=True, eq=False)
class AuditContext:
    """The effective limits for the participant, and the session with its data-quality masks applied.

    ``resolution.protocol`` is the protocol after the participant's cautions and overrides; checks read limits
    from it, never from the raw protocol.  ``coverage`` is the analysed coverage the data-quality pass
    measured (None while that pass is still running).
    """

    resolution: Resolution
    session: Session
    coverage: Coverage | None = None
