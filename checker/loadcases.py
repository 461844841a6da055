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
    """Overrides of one load case; None keeps the train's or operation's value."""

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
    """The train, operation and options of one load case."""
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
