"""Many files: the one loop that ``check``, ``measure`` and the gate share."""
