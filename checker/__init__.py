"""Acceleration-envelope compliance self-check for roller coaster layouts.

A self-check, not a certification (see :mod:`checker.caution`).

The operations load on first use, so that ``import checker`` (and ``checker --help``) stays
fast: :func:`check_layout`, :func:`check_history`, :func:`compare_layouts`, :func:`run_demo`,
:func:`simulate_ride` (from :mod:`checker.application`) and :func:`simulate` (a DataFrame of
every seat's history, from :mod:`checker.ride`).
"""

from __future__ import annotations

import importlib

__version__ = "0.1.0"

from .errors import InputError, TrainStalled  # noqa: E402

_LAZY = {"check_layout": "application", "check_history": "application",
         "compare_layouts": "application", "run_demo": "application",
         "simulate_ride": "application", "advise_bank_angle": "application",
         "correlate_ride": "application", "simulate": "ride"}

__all__ = ["InputError", "TrainStalled", "__version__", *_LAZY]


def __getattr__(name: str):
    """Load an operation's module on first use (PEP 562)."""
    if name in _LAZY:
        return getattr(importlib.import_module(f".{_LAZY[name]}", __name__), name)
    raise AttributeError(f"module 'checker' has no attribute {name!r}")
