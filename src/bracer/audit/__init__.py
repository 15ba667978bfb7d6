"""The post-session audit: replay a session log against the protocol's effective limits."""
