"""The version and the schema names of every file sweepaudit writes, imported by whoever needs them."""

__all__ = ["__version__", "AUDIT_SCHEMA", "CALIBRATION_SCHEMA", "LEDGER_SCHEMA", "INSPECT_SCHEMA"]

__version__ = "0.1.0"

#: The audit JSON (``sweepaudit audit --json``); a baseline must carry the same schema.
AUDIT_SCHEMA = "sweepaudit.audit/1"
#: The calibration JSON (``sweepaudit calibrate --json``).
CALIBRATION_SCHEMA = "sweepaudit.calibration/1"
#: Each record of the trial ledger, and the tag that opens a sweep's fingerprint.
LEDGER_SCHEMA = "sweepaudit.ledger/1"
#: The inspection JSON (``sweepaudit inspect --json``): how an input was read, without an audit.
INSPECT_SCHEMA = "sweepaudit.inspect/1"
