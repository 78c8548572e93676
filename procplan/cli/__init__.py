"""The ``procplan`` command: :mod:`procplan.cli.main` builds the parser; one module per group of sub-commands."""

from procplan.cli.main import main

__all__ = ["main"]
