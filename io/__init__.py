"""Reading stream, utility and cost tables; writing results, figures and reports (installed as heatloom.io)."""

__all__: list[str] = []
