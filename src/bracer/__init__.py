"""bracer: safety limits, pre-trial review and post-session audit for human-robot interaction trials."""

from typing import Any

__version__ = "0.1.0"


def __getattr__(name: str) -> Any:
    # ``bracer.audit(protocol, logs, ...)`` for notebooks, loaded on first use so that ``import bracer`` stays
    # light (no numpy, pandas or pyarrow); the subpackage bracer.audit is itself callable.
    if name == "audit":
        import importlib

        return importlib.import_module("bracer.audit")
    raise AttributeError(f"module 'bracer' has no attribute '{name}'")
