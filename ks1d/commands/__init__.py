"""Sub-commands of the ``ks1d`` CLI; each module exposes ``register(subparsers)``."""
