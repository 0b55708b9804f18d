"""Pinch targeting: problem table, composite curves, utility placement (installed as heatloom.pinch)."""

__all__: list[str] = []
