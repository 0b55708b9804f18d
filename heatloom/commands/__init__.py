"""One module per command of the ``heatloom`` command line; each has ``register(subparsers)``."""
