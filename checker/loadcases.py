"""Load cases: the case file format and how a case changes the train, operation and options.

A load-cases TOML file names cases, each overriding what varies in practice (see
``load_cases/standard.toml``).
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from pathlib import Path

from .errors import InputError
from .operation import Lift, Operation
from .resources import standard_cases
from .ride import RideOptions
from .tomlfields import Fields, load_toml
from .train import Train

OCCUPANCY_WORDS = ("empty", "full", "front-half", "rear-half")
STANDARD_CASES = standard_cases()


@dataclass(frozen=True)
class LoadCase:
    """Overrides of one load case; None keeps the train's or operation's value.

    Attributes
    ----------
    name : str
        The case's name (unique within a file).
    occupancy : str or float or tuple of float or None
        Seats filled: a word of :data:`OCCUPANCY_WORDS` (``"empty"``, ``"full"``,
        ``"front-half"``, ``"rear-half"``; with an odd number of cars the half cases fill the
        larger half), a fraction 0..1 for every car (a Python ``float``), or one fraction per
        car, lead car first.
    rider_mass_kg : float or None
        Mass of one rider [kg].
    rolling_coefficient : float or None
        Rolling resistance coefficient [-], replacing the train's.
    rolling_coefficient_factor : float
        Factor on the rolling coefficient (the train's or the one above) [-]; default 1.
    drag_area_m2 : float or None
        Drag coefficient times frontal area [m^2].
    air_density_kg_m3 : float or None
        Air density [kg/m^3].
    head_wind_m_s : float or None
        Wind against the direction of travel [m/s] (negative: from behind); air speed is
        speed plus head wind.
    start_speed_m_s : float or None
        Speed at the start of the track [m/s].
    lift_speed_factor : float
        Factor on the speed of every lift section [-]; default 1.
    """

    name: str = "nominal"
    occupancy: str | float | tuple[float, ...] | None = None
    rider_mass_kg: float | None = None
    rolling_coefficient: float | None = None
    rolling_coefficient_factor: float = 1.0
    drag_area_m2: float | None = None
    air_density_kg_m3: float | None = None
    head_wind_m_s: float | None = None
    start_speed_m_s: float | None = None
    lift_speed_factor: float = 1.0

    def occupancy_by_car(self, cars: int) -> tuple[float, ...] | None:
        """The occupancy fraction of each car, or None to keep the train's.

        Parameters
        ----------
        cars : int
            Number of cars of the train.

        Returns
        -------
        tuple of float or None
            One fraction 0..1 per car; a tuple given per car is returned as is (its length is
            checked by :func:`apply_case`).
        """
        occ = self.occupancy
        if occ is None:
            return None
        if isinstance(occ, tuple):
            return occ
        if isinstance(occ, float):
            return (occ,) * cars
        front = (cars + 1) // 2
        return {"empty": (0.0,) * cars, "full": (1.0,) * cars,
                "front-half": (1.0,) * front + (0.0,) * (cars - front),
                "rear-half": (0.0,) * (cars - front) + (1.0,) * front}[occ]


def load_cases(path: str | Path) -> list[LoadCase]:
    """Read a load-cases TOML file: ``[[case]]`` tables, each with a ``name``.

    Keys of a case: ``name`` (required, unique), ``occupancy``, ``rider_mass_kg`` (above 0,
    at most 500), ``rolling_coefficient`` (0 to 0.5), ``rolling_coefficient_factor`` (0 to
    10), ``drag_area_m2`` (0 to 100), ``air_density_kg_m3`` (above 0, at most 5),
    ``head_wind_m_s`` (-60 to 60), ``start_speed_m_s`` (0 to 100) and ``lift_speed_factor``
    (above 0, at most 5); see :class:`LoadCase`.

    Parameters
    ----------
    path : str or pathlib.Path
        The TOML file (:data:`STANDARD_CASES` is the shipped one).

    Returns
    -------
    list of LoadCase
        The cases in file order.

    Raises
    ------
    InputError
        When the file cannot be read or parsed, a name is missing or repeated, a value is of
        the wrong type or out of range, an occupancy is not a known word, a fraction 0..1 or a
        non-empty list of fractions, a key is unknown, or the file holds no case.

    Examples
    --------
    >>> from checker.loadcases import STANDARD_CASES, load_cases
    >>> [case.name for case in load_cases(STANDARD_CASES)][:2]
    ['full-nominal', 'empty']
    """
    path = Path(path)
    doc = Fields(path, load_toml(path))
    cases = []
    names = set()
    for f in doc.table_list("case"):
        name = f.text("name")
        if name in names:
            raise f.error("name", f"case name '{name}' is used twice", "give each case its own")
        names.add(name)
        occ = f.raw("occupancy")
        if occ is not None:
            if isinstance(occ, str):
                if occ not in OCCUPANCY_WORDS:
                    raise f.error("occupancy", f"'{occ}' is not one of "
                                  f"{', '.join(OCCUPANCY_WORDS)}", "or give a fraction 0..1")
            elif isinstance(occ, list):
                if not occ or not all(isinstance(v, (int, float)) and not isinstance(v, bool)
                                      and 0 <= v <= 1 for v in occ):
                    raise f.error("occupancy", "a list must hold one fraction 0..1 per car")
                occ = tuple(float(v) for v in occ)
            elif isinstance(occ, (int, float)) and not isinstance(occ, bool) and 0 <= occ <= 1:
                occ = float(occ)
            else:
                raise f.error("occupancy", f"{occ!r} is not an occupancy",
                              "use a fraction 0..1, a word such as \"full\", or a list per car")
        opt = f.optional_number
        case = LoadCase(
            name=name, occupancy=occ,
            rider_mass_kg=opt("rider_mass_kg", positive=True, maximum=500),
            rolling_coefficient=opt("rolling_coefficient", minimum=0, maximum=0.5),
            rolling_coefficient_factor=f.number("rolling_coefficient_factor", 1.0,
                                                minimum=0, maximum=10),
            drag_area_m2=opt("drag_area_m2", minimum=0, maximum=100),
            air_density_kg_m3=opt("air_density_kg_m3", positive=True, maximum=5),
            head_wind_m_s=opt("head_wind_m_s", minimum=-60, maximum=60),
            start_speed_m_s=opt("start_speed_m_s", minimum=0, maximum=100),
            lift_speed_factor=f.number("lift_speed_factor", 1.0, positive=True, maximum=5))
        f.done()
        cases.append(case)
    doc.done()
    if not cases:
        raise InputError(path, "holds no load cases", "add [[case]] tables with a name")
    return cases


def apply_case(train: Train, operation: Operation, options: RideOptions,
               case: LoadCase) -> tuple[Train, Operation, RideOptions]:
    """The train, operation and options of one load case.

    Parameters
    ----------
    train : Train
        The train as loaded.
    operation : Operation
        The operation as loaded.
    options : RideOptions
        The ride options.
    case : LoadCase
        The overrides.

    Returns
    -------
    tuple of (Train, Operation, RideOptions)
        New objects (the inputs are not changed): occupancy, rider mass, rolling coefficient
        (times its factor), drag area and air density on the train; every lift's speed times
        ``lift_speed_factor`` and the start speed on the operation; the head wind on the
        options.

    Raises
    ------
    InputError
        When a per-car occupancy does not have one value per car (the error names no file).
    """
    occ = case.occupancy_by_car(train.car_count)
    if occ is not None and len(occ) != train.car_count:
        raise InputError(None, f"load case '{case.name}' gives occupancy for {len(occ)} cars; "
                         f"the train has {train.car_count}", "give one fraction per car")
    mu = case.rolling_coefficient if case.rolling_coefficient is not None \
        else train.rolling_coefficient
    train = replace(
        train, occupancy_by_car=occ if occ is not None else train.occupancy_by_car,
        rider_mass_kg=case.rider_mass_kg or train.rider_mass_kg,
        rolling_coefficient=mu * case.rolling_coefficient_factor,
        drag_area_m2=train.drag_area_m2 if case.drag_area_m2 is None else case.drag_area_m2,
        air_density_kg_m3=case.air_density_kg_m3 or train.air_density_kg_m3)
    sections = tuple(replace(s, speed_m_s=s.speed_m_s * case.lift_speed_factor)
                     if isinstance(s, Lift) else s for s in operation.sections)
    operation = replace(operation, sections=sections,
                        start_speed_m_s=operation.start_speed_m_s if case.start_speed_m_s is None
                        else case.start_speed_m_s)
    if case.head_wind_m_s is not None:
        options = replace(options, head_wind_m_s=case.head_wind_m_s)
    return train, operation, options
