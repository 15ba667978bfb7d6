"""bracer: safety limits, pre-trial review and post-session audit for human-robot interaction trials."""

__version__ = "0.1.0"
