"""Error types a user can cause (bad files, bad values).

Every error a user can cause derives from :class:`CoveryieldError`, so the command line can answer
it with one readable message and exit status 2 instead of a traceback.
"""

from __future__ import annotations


class CoveryieldError(Exception):
    """Base class for problems caused by the user's input, reported without a traceback."""


class ClimateFileError(CoveryieldError, ValueError):
    """A climate record is malformed or implausible; the message lists every problem found."""


class PlanFileError(CoveryieldError, ValueError):
    """A plan file is malformed; the message names the key path, the value and what was expected."""


class OutputError(CoveryieldError, OSError):
    """An output could not be written (for example the target exists and would be overwritten)."""


class MissingExtraError(CoveryieldError, ImportError):
    """An optional part of coveryield is used without its extra packages installed."""


class BatchError(CoveryieldError, ValueError):
    """A batch cannot start: no plan files, an unsuitable output folder, no reachable cluster."""


class ObservedFlowError(CoveryieldError, ValueError):
    """An observed-flow record is malformed, or does not fit the climate record it is set beside."""


class CalibrationError(CoveryieldError, ValueError):
    """A calibration cannot be set up (e.g. too few observed days in a period)."""


class SettingError(CoveryieldError, ValueError):
    """An environment variable of coveryield has a value it cannot use."""
