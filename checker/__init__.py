"""Acceleration-envelope compliance self-check for roller coaster layouts.

A self-check, not a certification: the governing code, the authority having jurisdiction and
licensed engineering review decide.
"""

__version__ = "0.1.0"

from .errors import InputError, TrainStalled  # noqa: E402
from .ride import simulate  # noqa: E402

__all__ = ["InputError", "TrainStalled", "simulate", "__version__"]
