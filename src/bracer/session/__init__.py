"""Session logs: readers (one module per file format) and the in-memory session they produce."""
