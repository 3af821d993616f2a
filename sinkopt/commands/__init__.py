"""One module per command; each exposes ``register(subparsers)``."""
