"""The train: cars, masses, seats and resistances, loaded from a TOML file.

Example (all keys shown; see README for the meaning of each)::

    name = "Six-car family train"
    [cars]
    count = 6
    spacing_m = 2.4          # between car reference points along the track
    empty_mass_kg = 520
    [[seats]]                # repeated per seat, offsets from the car reference point
    name = "1L"
    forward_m = 0.45
    left_m = 0.25
    up_m = 1.1               # rider's heart height above the rails
    [riders]
    mass_kg = 75
    occupancy = 1.0          # fraction of seats filled (0..1)
    [resistance]
    rolling_coefficient = 0.015
    drag_area_m2 = 1.2       # CdA of the whole train
    air_density_kg_m3 = 1.225
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np

from .constants import SEA_LEVEL_AIR_DENSITY
from .errors import InputError
from .tomlfields import Fields, load_toml


@dataclass(frozen=True)
class Seat:
    """A rider position: offsets from the car reference point, in the car's frame.

    The car's frame is the rider frame of the track at the car reference point (ISO 8855:
    x forward, y left, z up from seat to head).

    Attributes
    ----------
    name : str
        Seat name, unique within a car (e.g. ``"1L"``).
    forward_m : float
        Offset along the track tangent, positive forward [m].
    left_m : float
        Offset to the rider's left [m].
    up_m : float
        Offset along the car's up axis; for the rider's heart, its height above the
        reference point [m].
    """

    name: str
    forward_m: float = 0.0
    left_m: float = 0.0
    up_m: float = 0.0

    @property
    def offset(self) -> np.ndarray:
        """The offsets (forward, left, up) as a (3,) array [m]."""
        return np.array([self.forward_m, self.left_m, self.up_m])


@dataclass(frozen=True)
class Train:
    """A chain of identical cars at fixed spacing; the lead car is car 1.

    ``occupancy_by_car`` (fraction 0..1 per car), when given, overrides ``occupancy``.

    Attributes
    ----------
    car_count : int
        Number of cars [-].
    spacing_m : float
        Distance between successive car reference points along the track [m].
    empty_mass_kg : float
        Mass of one empty car [kg].
    seats : tuple of Seat
        The seats of one car (every car alike).
    rider_mass_kg : float
        Mass of one rider [kg].
    occupancy : float
        Fraction of seats filled, 0..1 [-].
    rolling_coefficient : float
        Rolling resistance coefficient: resistance = coefficient * normal force [-].
    drag_area_m2 : float
        Drag coefficient times frontal area (CdA) of the whole train [m^2].
    air_density_kg_m3 : float
        Air density for the drag [kg/m^3].
    name : str
        Name of the train, for the record.
    occupancy_by_car : tuple of float or None
        Fraction of seats filled in each car, lead car first, 0..1 [-]; None to use
        ``occupancy`` for every car.
    """

    car_count: int = 1
    spacing_m: float = 0.0
    empty_mass_kg: float = 500.0
    seats: tuple[Seat, ...] = (Seat("rider"),)
    rider_mass_kg: float = 75.0
    occupancy: float = 1.0
    rolling_coefficient: float = 0.0
    drag_area_m2: float = 0.0
    air_density_kg_m3: float = SEA_LEVEL_AIR_DENSITY
    name: str = "train"
    occupancy_by_car: tuple[float, ...] | None = None

    @property
    def length_m(self) -> float:
        """Distance from the lead car's reference point to the last car's [m]."""
        return (self.car_count - 1) * self.spacing_m

    def car_masses(self) -> np.ndarray:
        """Mass of each car with its riders.

        Returns
        -------
        masses : (car_count,) ndarray
            Empty mass plus filled fraction * seats * rider mass, lead car first [kg].
        """
        fill = (np.asarray(self.occupancy_by_car, dtype=float) if self.occupancy_by_car
                else np.full(self.car_count, self.occupancy))
        return self.empty_mass_kg + fill * len(self.seats) * self.rider_mass_kg



def ideal_rider() -> Train:
    """A single rider on the centerline with no rolling resistance and no drag.

    Returns
    -------
    train : Train
        One car of one seat at zero offset, default masses (500 kg car, 75 kg rider).
    """
    return Train(name="ideal point rider on the centerline")


def load_train(path: str | Path) -> Train:
    """Load and validate a train TOML file (format in the module docstring).

    Parameters
    ----------
    path : str or Path
        The train file.

    Returns
    -------
    train : Train
        The validated train, SI units.

    Raises
    ------
    InputError
        For a missing file, bad TOML, an unknown key, a value out of range, zero spacing for a
        train of several cars, a seat name used twice, or no seats (naming the key).
    """
    path = Path(path)
    doc = Fields(path, load_toml(path))
    name = doc.text("name", "train")
    cars = doc.sub("cars", required=True)
    count = cars.integer("count", minimum=1, maximum=200)
    spacing = cars.number("spacing_m", 0.0 if count == 1 else None, minimum=0.0,
                          maximum=50.0, unit=" [m]")
    if count > 1 and spacing <= 0:
        raise cars.error("spacing_m", "must be greater than zero for a train of several cars",
                         "give the distance between car reference points in metres")
    empty = cars.number("empty_mass_kg", positive=True, maximum=1e5, unit=" [kg]")
    cars.done()
    seats = []
    names = set()
    for table in doc.table_list("seats"):
        seat_name = table.text("name", f"seat{len(seats) + 1}")
        if seat_name in names:
            raise table.error("name", f"seat name '{seat_name}' is used twice",
                              "give every seat of a car its own name")
        names.add(seat_name)
        seats.append(Seat(seat_name,
                          table.number("forward_m", 0.0, minimum=-10, maximum=10),
                          table.number("left_m", 0.0, minimum=-5, maximum=5),
                          table.number("up_m", 0.0, minimum=-5, maximum=5)))
        table.done()
    if not seats:
        raise InputError(path, "has no seats", "add at least one [[seats]] table", key="seats")
    riders = doc.sub("riders")
    rider_mass = riders.number("mass_kg", 75.0, positive=True, maximum=500)
    occupancy = riders.number("occupancy", 1.0, minimum=0.0, maximum=1.0)
    riders.done()
    res = doc.sub("resistance")
    mu = res.number("rolling_coefficient", 0.0, minimum=0.0, maximum=0.5)
    cda = res.number("drag_area_m2", 0.0, minimum=0.0, maximum=100.0)
    rho = res.number("air_density_kg_m3", SEA_LEVEL_AIR_DENSITY, positive=True, maximum=5.0)
    res.done()
    doc.done()
    return Train(count, spacing, empty, tuple(seats), rider_mass, occupancy, mu, cda, rho, name)
