"""Physical constants shared by the rooms (SI units).

``G0`` is also the unit of specific force in every rider signal ([g0]).
"""

G0 = 9.80665  # standard gravity [m/s^2], 3rd CGPM (1901); ISO 80000-3
SEA_LEVEL_AIR_DENSITY = 1.225  # [kg/m^3], ICAO Standard Atmosphere (ISO 2533)
