"""Writes for clients, sessions and plans, one module per subject; each write is one transaction
with its audit entry.  Reads are in ``fittings.selectors``."""


class ConcurrentEdit(Exception):
    """Someone else saved this first; nothing was overwritten."""
