"""``python -m sweepaudit``: the command line."""

from .cli import main

if __name__ == "__main__":  # Dask's worker processes import this module again: run only as the program
    main()
