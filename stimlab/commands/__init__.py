"""Sub-commands of the ``stimlab`` command line, one module per group; each has ``register(subparsers, numbers)``."""
