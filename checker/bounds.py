"""Ranges of the numeric options and the memory a run may take.

Every numeric command-line option is read through :func:`number_option`, which refuses a
value outside a stated range with a hint (``--rate inf``, ``--workers -3``). The ranges are
wide: they keep out values no ride needs and that would break the numerics, they do not judge
a design.

:func:`check_memory` compares the estimated memory of the per-seat histories of a ride with a
cap: :data:`DEFAULT_MEMORY_FRACTION` of the machine's memory, or ``CHECKER_MAX_MEMORY_MB``.
"""

from __future__ import annotations

import argparse
import math
import os
from collections.abc import Callable

from .errors import InputError

RATE_HZ = (10.0, 5000.0)  # output sample rate [Hz]
START_SPEED_M_S = (0.0, 150.0)  # faster than any train runs (common practice, rough)
SMOOTHING_M = (0.0, 10.0)  # RMS tolerance of the smoothing spline [m]
STEP_M = (0.005, 5.0)  # station grid step [m]
WORKERS = (1, 512)
SCHEDULER_TIMEOUT_S = (1.0, 3600.0)
MIN_TRACK_M = 1.0  # shorter than this is a unit mistake, not a ride

MEMORY_ENV = "CHECKER_MAX_MEMORY_MB"
DEFAULT_MEMORY_FRACTION = 0.5
BYTES_PER_SEAT_SAMPLE = 256  # histories, filtered signals, exposure curves and tables
BYTES_PER_CAR_SAMPLE = 200  # station, speed and rider frame sampled for every car


def number_option(low: float, high: float, unit: str = "", hint: str = "",
                  integer: bool = False) -> Callable[[str], float]:
    """An argparse type: a finite number (whole if ``integer``) from ``low`` to ``high``.

    Parameters
    ----------
    low, high : float
        The accepted range, both ends included.
    unit : str, optional
        Appended to the range in the message (e.g. ``" Hz"``).
    hint : str, optional
        Added to the message after ``;``.
    integer : bool, optional
        Parse with ``int`` (a whole number) instead of ``float``.

    Returns
    -------
    callable
        ``parse(text) -> float`` (an ``int`` when ``integer``) for argparse's ``type=``; it
        raises :class:`argparse.ArgumentTypeError` for text that is not a number, not finite
        or outside the range.
    """
    kind = "a whole number" if integer else "a number"

    def parse(text: str) -> float:
        try:
            value = int(text) if integer else float(text)
        except ValueError:
            raise argparse.ArgumentTypeError(f"'{text[:40]}' is not {kind}") from None
        if not (math.isfinite(value) and low <= value <= high):
            extra = f"; {hint}" if hint else ""
            raise argparse.ArgumentTypeError(
                f"{text[:40]} is outside {low:g} to {high:g}{unit}{extra}")
        return value

    return parse


def name_option(max_chars: int = 200) -> Callable[[str], str]:
    """An argparse type: a name of at most ``max_chars`` characters (it titles figures).

    Parameters
    ----------
    max_chars : int, optional
        The longest name accepted (default 200).

    Returns
    -------
    callable
        ``parse(text) -> str`` for argparse's ``type=``; it raises
        :class:`argparse.ArgumentTypeError` for a longer name.
    """

    def parse(text: str) -> str:
        if len(text) > max_chars:
            raise argparse.ArgumentTypeError(
                f"is {len(text)} characters long; give at most {max_chars}")
        return text

    return parse


def megabytes_from_env(name: str, upper: float, example: int) -> float | None:
    """A size [MB] from an environment variable.

    Parameters
    ----------
    name : str
        The environment variable (also named as the "file" of the error).
    upper : float
        Values must be below this [MB].
    example : int
        A sensible value, quoted in the hint [MB].

    Returns
    -------
    float or None
        The size [MB]; None when the variable is unset or empty (blank).

    Raises
    ------
    InputError
        When the value is not a number above 0 and below ``upper``.
    """
    text = os.environ.get(name, "").strip()
    if not text:
        return None
    try:
        value = float(text)
    except ValueError:
        value = float("nan")
    if not 0 < value < upper:
        raise InputError(name, f"environment variable value {text[:20]!r} is not a size in "
                         "megabytes", f"set it to a number such as {example} or unset it")
    return value


def machine_memory_bytes() -> int | None:
    """The machine's physical memory [bytes], from ``os.sysconf``.

    Returns
    -------
    int or None
        Page size times the number of physical pages; None where ``sysconf`` cannot tell
        (e.g. Windows).
    """
    try:
        return os.sysconf("SC_PAGE_SIZE") * os.sysconf("SC_PHYS_PAGES")
    except (AttributeError, ValueError, OSError):
        return None


_parallel = {"runs": 1}  # rides running at once in this machine (a sweep's local workers)


def share_memory(runs: int) -> None:
    """Set how many rides run at once; each gets that share of the cap (worker initializer).

    Parameters
    ----------
    runs : int
        Rides running at once in this machine; values below 1 count as 1.
    """
    _parallel["runs"] = max(1, int(runs))


def memory_cap_bytes() -> int | None:
    """The memory one ride may take.

    Returns
    -------
    int or None
        ``CHECKER_MAX_MEMORY_MB`` megabytes, else :data:`DEFAULT_MEMORY_FRACTION` of the
        machine's memory, divided by the rides running at once (:func:`share_memory`)
        [bytes]; None when no cap is set and the machine's memory is unknown.

    Raises
    ------
    InputError
        When ``CHECKER_MAX_MEMORY_MB`` is not a number above 0 and below 1e9.
    """
    megabytes = megabytes_from_env(MEMORY_ENV, 1e9, example=4000)
    if megabytes is not None:
        return int(megabytes * 1e6 / _parallel["runs"])
    total = machine_memory_bytes()
    return int(total * DEFAULT_MEMORY_FRACTION / _parallel["runs"]) if total else None


def ride_memory_bytes(seats: int, cars: int, duration_s: float, rate_hz: float) -> float:
    """Estimated memory of one ride's histories and their evaluation [bytes].

    Parameters
    ----------
    seats : int
        Seats simulated.
    cars : int
        Cars of the train.
    duration_s : float
        Ride duration [s].
    rate_hz : float
        Output sample rate [Hz].

    Returns
    -------
    float
        ``(duration_s * rate_hz + 1) * (seats * BYTES_PER_SEAT_SAMPLE + cars *
        BYTES_PER_CAR_SAMPLE)`` [bytes].
    """
    samples = duration_s * rate_hz + 1
    return samples * (seats * BYTES_PER_SEAT_SAMPLE + cars * BYTES_PER_CAR_SAMPLE)


def check_memory(seats: int, cars: int, duration_s: float, rate_hz: float,
                 source=None) -> None:
    """Refuse, before the per-seat work, a ride whose estimate exceeds the memory cap.

    Parameters
    ----------
    seats, cars : int
        Seats and cars of the ride.
    duration_s : float
        Ride duration [s].
    rate_hz : float
        Output sample rate [Hz].
    source : str or pathlib.Path or None, optional
        What to name as the error's file (e.g. the layout).

    Raises
    ------
    InputError
        When :func:`ride_memory_bytes` exceeds :func:`memory_cap_bytes` (no cap: never),
        or when ``CHECKER_MAX_MEMORY_MB`` is malformed.
    """
    need = ride_memory_bytes(seats, cars, duration_s, rate_hz)
    cap = memory_cap_bytes()
    if cap is not None and need > cap:
        raise InputError(source, f"this ride needs about {need / 1e6:,.0f} MB of memory "
                         f"({seats} seats x {duration_s:.0f} s x {rate_hz:g} Hz), more than "
                         f"the cap of {cap / 1e6:,.0f} MB"
                         + (f" (the share of one of {_parallel['runs']} parallel workers)"
                            if _parallel["runs"] > 1 else ""),
                         "lower --rate, the number of seats or --workers, or raise the cap "
                         f"with the environment variable {MEMORY_ENV}")
