"""How the ride is operated: start speed and powered sections along the track.

A TOML file::

    start_speed_m_s = 0.0
    [[sections]]
    kind = "lift"            # held at speed_m_s; engages at engage_accel_m_s2
    start_m = 12.0
    end_m = 70.0
    speed_m_s = 3.0
    [[sections]]
    kind = "launch"          # either force_n (with optional max_speed_m_s) or exit_speed_m_s
    start_m = 5.0
    end_m = 40.0
    exit_speed_m_s = 25.0
    [[sections]]
    kind = "brake"           # trims to speed_m_s (0 = stop) at no more than max_decel_m_s2
    start_m = -45.0          # negative stations count back from the track's end
    end_m = -5.0
    speed_m_s = 0.0
    max_decel_m_s2 = 3.0

A section acts on the train while any car's reference point is within [start_m, end_m].
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path
from typing import ClassVar, Union

from .errors import InputError
from .tomlfields import Fields, load_toml

SECTION_KINDS = ("lift", "launch", "brake")


@dataclass(frozen=True)
class _Span:
    """Where a powered section acts: stations as written (negative = from the track's end).

    Attributes
    ----------
    start_m : float
        Station where the section begins; negative counts back from the track's end [m].
    end_m : float
        Station where the section ends; negative counts back from the track's end [m].
    """

    start_m: float
    end_m: float

    def resolved(self, track_length_m: float) -> tuple[float, float]:
        """Start and end station on a track of the given length.

        Parameters
        ----------
        track_length_m : float
            Length of the track [m].

        Returns
        -------
        start_m, end_m : float
            The section's stations, negative ones counted back from the end [m].
        """
        def at(x: float) -> float:
            return x + track_length_m if x < 0 else x
        return at(self.start_m), at(self.end_m)


@dataclass(frozen=True)
class Lift(_Span):
    """A chain or cable lift: holds the train at ``speed_m_s`` at least, bringing a slower
    train up to it at ``engage_accel_m_s2``.

    Attributes
    ----------
    start_m, end_m : float
        Stations of the section (see ``_Span``) [m].
    speed_m_s : float
        Lift speed [m/s].
    engage_accel_m_s2 : float
        Acceleration that brings a slower train up to the lift speed [m/s^2].
    kind : str
        ``"lift"`` (class constant).
    """

    speed_m_s: float = 3.0
    engage_accel_m_s2: float = 1.0
    kind: ClassVar[str] = "lift"

    def describe(self) -> str:
        """The section's action in words, for the record.

        Returns
        -------
        text : str
            E.g. ``"speed 3 m/s"``, ``"exit 25 m/s"``, ``"to 0 m/s at <= 3 m/s^2"``.
        """
        return f"speed {self.speed_m_s:g} m/s"


@dataclass(frozen=True)
class Launch(_Span):
    """A launch: a tractive force, or controlled to reach an exit speed at its end.

    Exactly one of ``force_n`` and ``exit_speed_m_s`` is given.

    Attributes
    ----------
    start_m, end_m : float
        Stations of the section (see ``_Span``) [m].
    force_n : float or None
        Tractive force on the whole train [N].
    max_speed_m_s : float or None
        With ``force_n``: speed above which the launch no longer pushes [m/s].
    exit_speed_m_s : float or None
        Speed the train leaves the section at [m/s].
    kind : str
        ``"launch"`` (class constant).

    Raises
    ------
    ValueError
        When both or neither of ``force_n`` and ``exit_speed_m_s`` are given.
    """

    force_n: float | None = None
    max_speed_m_s: float | None = None
    exit_speed_m_s: float | None = None
    kind: ClassVar[str] = "launch"

    def __post_init__(self) -> None:
        if (self.force_n is None) == (self.exit_speed_m_s is None):
            raise ValueError("a launch needs exactly one of force_n or exit_speed_m_s")

    def describe(self) -> str:
        """The section's action in words, for the record.

        Returns
        -------
        text : str
            E.g. ``"speed 3 m/s"``, ``"exit 25 m/s"``, ``"to 0 m/s at <= 3 m/s^2"``.
        """
        if self.exit_speed_m_s is not None:
            return f"exit {self.exit_speed_m_s:g} m/s"
        cap = f" up to {self.max_speed_m_s:g} m/s" if self.max_speed_m_s is not None else ""
        return f"force {self.force_n:g} N{cap}"


@dataclass(frozen=True)
class Brake(_Span):
    """A trim or stopping brake: slows the train to ``speed_m_s`` (0 stops it) at no more
    than ``max_decel_m_s2``.

    Attributes
    ----------
    start_m, end_m : float
        Stations of the section (see ``_Span``) [m].
    speed_m_s : float
        Target speed; 0 makes a stopping brake [m/s].
    max_decel_m_s2 : float
        Largest deceleration the brake applies [m/s^2].
    kind : str
        ``"brake"`` (class constant).
    """

    speed_m_s: float = 0.0
    max_decel_m_s2: float = 3.0
    kind: ClassVar[str] = "brake"

    def describe(self) -> str:
        """The section's action in words, for the record.

        Returns
        -------
        text : str
            E.g. ``"speed 3 m/s"``, ``"exit 25 m/s"``, ``"to 0 m/s at <= 3 m/s^2"``.
        """
        return f"to {self.speed_m_s:g} m/s at <= {self.max_decel_m_s2:g} m/s^2"


Section = Union[Lift, Launch, Brake]  # noqa: UP007 - a runtime alias (3.10 has no `type`)


@dataclass(frozen=True)
class Operation:
    """Start speed and the powered sections of a ride, with the file they came from.

    Attributes
    ----------
    start_speed_m_s : float
        Speed of the train at the start of the track [m/s].
    sections : tuple of Lift, Launch or Brake
        The powered sections, in file order.
    source : str
        File the operation came from, for messages.
    """

    start_speed_m_s: float = 0.0
    sections: tuple[Section, ...] = ()
    source: str = "<none>"

    def check_against(self, track_length_m: float) -> None:
        """Check that the stations lie on the track and that sections do not overlap.

        Parameters
        ----------
        track_length_m : float
            Length of the track [m].

        Raises
        ------
        InputError
            A section outside [0, track length] or with start >= end, or two sections that
            overlap (naming the key ``sections[i]``).
        """
        spans = []
        for i, sec in enumerate(self.sections):
            a, b = sec.resolved(track_length_m)
            key = f"sections[{i + 1}]"
            if not (0 <= a < b <= track_length_m + 1e-9):
                raise InputError(self.source, f"runs from {a:.1f} m to {b:.1f} m, outside the "
                                 f"track (0 to {track_length_m:.1f} m) or backwards",
                                 "give start_m < end_m within the track length", key=key)
            spans.append((a, b, key))
        spans.sort()
        for (_a1, b1, k1), (a2, _b2, k2) in zip(spans, spans[1:]):
            if a2 < b1:
                raise InputError(self.source, f"overlaps {k1} (from {a2:.1f} m to {b1:.1f} m)",
                                 "sections must not overlap; shorten one of them", key=k2)


def load_operation(path: str | Path) -> Operation:
    """Load and validate an operation TOML file (format in the module docstring).

    Parameters
    ----------
    path : str or Path
        The operation file.

    Returns
    -------
    operation : Operation
        Start speed and sections as written (stations not yet resolved against a track).

    Raises
    ------
    InputError
        For a missing file, bad TOML, an unknown key or kind, or a value out of range
        (naming the key, e.g. ``sections[2].speed_m_s``).
    """
    path = Path(path)
    doc = Fields(path, load_toml(path))
    start = doc.number("start_speed_m_s", 0.0, minimum=0.0, maximum=100.0)
    sections = []
    for table in doc.table_list("sections"):
        kind = table.text("kind", choices=SECTION_KINDS)
        begin = table.number("start_m", minimum=-1e6, maximum=1e6)
        end = table.number("end_m", minimum=-1e6, maximum=1e6)
        sec: Section
        if kind == "lift":
            sec = Lift(begin, end, speed_m_s=table.number("speed_m_s", positive=True, maximum=30),
                       engage_accel_m_s2=table.number("engage_accel_m_s2", 1.0, positive=True,
                                                      maximum=20))
        elif kind == "launch":
            has_force, has_exit = table.has("force_n"), table.has("exit_speed_m_s")
            if has_force == has_exit:
                raise table.error("force_n", "a launch needs exactly one of force_n or "
                                  "exit_speed_m_s", "give the tractive force or the exit speed")
            cap = (table.number("max_speed_m_s", positive=True, maximum=100)
                   if table.has("max_speed_m_s") else None)
            sec = Launch(begin, end,
                         force_n=(table.number("force_n", positive=True, maximum=1e7)
                                  if has_force else None),
                         max_speed_m_s=cap,
                         exit_speed_m_s=(table.number("exit_speed_m_s", positive=True,
                                                      maximum=100) if has_exit else None))
        else:
            sec = Brake(begin, end,
                        speed_m_s=table.number("speed_m_s", minimum=0.0, maximum=100),
                        max_decel_m_s2=table.number("max_decel_m_s2", 3.0, positive=True,
                                                    maximum=50))
        table.done()
        sections.append(sec)
    doc.done()
    return Operation(start, tuple(sections), str(path))
