"""sweepaudit: audit a trading strategy's parameter sweep before money is committed to it."""

__version__ = "0.1.0"
