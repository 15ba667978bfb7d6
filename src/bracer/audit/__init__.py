"""The post-session audit: replay a session log against the protocol's effective limits.

The package is callable: ``bracer.audit(protocol, log_paths, participant=None, session_id=None)`` runs
:func:`bracer.audit.run.audit` and returns its :class:`~bracer.audit.run.AuditResult`, whose
``to_dataframe()`` gives the findings as a pandas DataFrame.  (A package and a function cannot share the
name ``bracer.audit`` otherwise: importing any ``bracer.audit.*`` module binds the package to that name.)
"""

import sys
import types
from typing import Any


class _CallableAudit(types.ModuleType):
    def __call__(self, *args: Any, **kwargs: Any) -> Any:
        from bracer.audit.run import audit

        return audit(*args, **kwargs)


sys.modules[__name__].__class__ = _CallableAudit
