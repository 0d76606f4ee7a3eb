"""``python -m sweepaudit``: the command line."""

from .cli import main

main()
