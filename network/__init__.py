"""Network synthesis, sizing, costing and retrofit (installed as heatloom.network)."""

__all__: list[str] = []
