"""Acceleration-envelope compliance self-check for roller coaster layouts.

A self-check, not a certification: the governing code, the authority having jurisdiction and
licensed engineering review decide.
"""

__version__ = "0.1.0"

from .errors import InputError, TrainStalled  # noqa: E402

__all__ = ["InputError", "TrainStalled", "simulate", "__version__"]


def __getattr__(name: str):
    # `simulate` pulls in the geometry and dynamics (scipy.interpolate): load it on first use
    # so that commands which do not simulate (check-history) start faster.
    if name == "simulate":
        from .ride import simulate

        return simulate
    raise AttributeError(f"module 'checker' has no attribute {name!r}")
