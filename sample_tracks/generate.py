"""Generator of the demo scenario's layouts (an invented park and an invented ride).

Marrowvale Pleasure Gardens is a fictional park; "Thistle Comet" is its fictional family-thrill
coaster. Two revisions of the layout are built from parametric elements: station straight,
lift hill, first drop, a parabolic airtime hill, a vertical loop, a banked turn, a helix and a
brake run back to the station. Revision A has a circular loop; revision B replaces it with a
teardrop loop of the same height, shaped step by step for a target Gz at the estimated speed.

Run from the project root:  python sample_tracks/generate.py [FOLDER]
It rewrites the CSV and operation files beside it (or in FOLDER), byte for byte the same
each time.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from checker.geometry import build_geometry

G0 = 9.80665  # [m/s^2]
STEP = 0.5  # sample spacing along the track [m], like a CAD export
LOSS = 0.008  # lumped rolling and air losses for the speed estimate [g per metre travelled]
HERE = Path(__file__).resolve().parent
HEART_M = 1.05  # heart height above the rails of the demo train's seats [m]
LOOP_OFFSET_M = 2.4  # sideways offset of a loop's exit from its entry [m] (train width + gap)


@dataclass
class Builder:
    """Steps a centerline forward from pitch and heading rates [rad/m]; records bank."""

    x: float = 0.0
    y: float = 0.0
    z: float = 1.0
    heading: float = 0.0
    pitch: float = 0.0
    distance: float = 0.0
    crest_z: float = 0.0
    crest_speed: float = 3.0
    crest_distance: float = 0.0
    rows: list = field(default_factory=list)
    marks: dict = field(default_factory=dict)

    def __post_init__(self) -> None:
        self.rows.append((self.x, self.y, self.z, 0.0))

    def speed(self, z: float | None = None) -> float:
        """Estimated speed [m/s] from energy since the lift crest, with lumped losses."""
        z = self.z if z is None else z
        v2 = (self.crest_speed**2 + 2 * G0 * (self.crest_z - z)
              - 2 * LOSS * G0 * (self.distance - self.crest_distance))
        return math.sqrt(max(v2, 0.25))

    def step(self, pitch_rate: float, yaw_rate: float = 0.0, roll_deg: float = 0.0) -> None:
        mid_pitch = self.pitch + 0.5 * STEP * pitch_rate
        mid_heading = self.heading + 0.5 * STEP * yaw_rate
        self.x += STEP * math.cos(mid_pitch) * math.cos(mid_heading)
        self.y += STEP * math.cos(mid_pitch) * math.sin(mid_heading)
        self.z += STEP * math.sin(mid_pitch)
        self.pitch += STEP * pitch_rate
        self.heading += STEP * yaw_rate
        self.distance += STEP
        self.rows.append((self.x, self.y, self.z, roll_deg))

    def mark(self, name: str) -> None:
        self.marks[name] = self.distance

    def straight(self, length: float) -> None:
        for _ in range(int(round(length / STEP))):
            self.step(0.0)

    def _ramped(self, angle: float, radius: float, ramp: float):
        """Curvature profile with linear (clothoid) ramps turning through ``angle``."""
        kmax = 1.0 / radius
        if abs(angle) < kmax * ramp:
            kmax = abs(angle) / ramp
        hold = abs(angle) / kmax - ramp
        total = ramp + hold  # each ramp turns kmax * ramp / 2
        n = max(1, int(round(total / STEP)))
        sign = 1.0 if angle >= 0 else -1.0
        rates = []
        for i in range(n):
            s = (i + 0.5) * total / n
            u = min(1.0, s / (ramp / 2), (total - s) / (ramp / 2)) if ramp > 0 else 1.0
            rates.append(sign * kmax * u * u * (3 - 2 * u))  # smooth ramp: roll rate continuous
        scale = angle / (sum(rates) * STEP)  # close the angle exactly on the sample grid
        return [r * scale for r in rates]

    def pitch_to(self, target_deg: float, radius: float, ramp: float = 8.0) -> None:
        for rate in self._ramped(math.radians(target_deg) - self.pitch, radius, ramp):
            self.step(rate)
        self.pitch = math.radians(target_deg)

    def turn(self, angle_deg: float, radius: float, ramp: float, pitch_deg: float = 0.0,
             bank: bool = True) -> None:
        """Horizontal turn (positive = left) banked for the estimated speed at each sample."""
        for rate in self._ramped(math.radians(angle_deg), radius, ramp):
            curvature = rate * math.cos(self.pitch)
            v = self.speed()
            # design bank: tan(phi) = v^2 k / g; a right turn (rate < 0) has positive roll
            roll = -math.degrees(math.atan(v * v * curvature / G0)) if bank else 0.0
            target = math.radians(pitch_deg)
            self.step(0.15 * (target - self.pitch), rate, roll)

    def parabola(self, angle_deg: float, effective_g: float) -> None:
        """Trajectory of a body thrown at the current speed and pitch under effective_g."""
        a = math.radians(angle_deg)
        v0 = self.speed()
        self.pitch = a
        x = 0.0
        while True:
            slope = math.tan(a) - effective_g * x / (v0**2 * math.cos(a) ** 2)
            nxt_slope = math.tan(a) - effective_g * (x + STEP * math.cos(math.atan(slope))) / (
                v0**2 * math.cos(a) ** 2)
            new_pitch = math.atan(0.5 * (slope + nxt_slope))
            if new_pitch < -a:
                break
            self.step((math.atan(nxt_slope) - self.pitch) / STEP)
            x += STEP * math.cos(new_pitch)
        self.pitch = math.atan(math.tan(a) - effective_g * x / (v0**2 * math.cos(a) ** 2))

    def loop(self, shape: str, height: float, top_gz: float = 0.8,
             jog_deg: float = 3.0) -> None:
        """A vertical loop; ``circular`` of diameter ``height`` or ``teardrop`` shaped for a
        target Gz at the estimated speed. A small yaw near the bottom offsets the exit."""
        jog = math.radians(jog_deg)
        if shape == "circular":
            radius = height / 2
            n = int(round(2 * math.pi * radius / STEP))
            rate = 2 * math.pi / (n * STEP)
            for i in range(n):
                theta = i * STEP * rate
                yaw = 0.0
                if theta < 0.35:
                    yaw = jog / (0.35 / rate)
                elif theta > 2 * math.pi - 0.35:
                    yaw = -jog / (0.35 / rate)
                self.step(rate, yaw)
            self.pitch -= 2 * math.pi  # a full turn in pitch: level again
            return
        rates = self._teardrop_half(height, top_gz)
        rates = rates + rates[::-1]  # the second half mirrors the first
        climb = 0.0
        for rate in rates:
            theta = climb
            yaw = 0.0
            if theta < 0.35:
                yaw = jog * rate / 0.35
            elif theta > 2 * math.pi - 0.35:
                yaw = -jog * rate / 0.35
            self.step(rate, yaw)
            climb += rate * STEP
        self.pitch -= 2 * math.pi
    def offset_sideways(self, first: int, offset_m: float) -> None:
        """Move the rows from ``first`` on sideways (to the left of the entry heading) by a
        smooth fraction of ``offset_m`` that follows the turn through the element, f(u) =
        u - sin(2 pi u) / (2 pi) with u the element's share of its length: the entry and exit
        of a loop pass beside each other instead of through each other, with no kink."""
        last = len(self.rows) - 1
        left = (-math.sin(self.heading), math.cos(self.heading))
        for i in range(first, len(self.rows)):
            u = min(1.0, (i - first + 1) / (last - first + 1))
            shift = offset_m * (u - math.sin(2 * math.pi * u) / (2 * math.pi))
            x, y, z, roll = self.rows[i]
            self.rows[i] = (x + shift * left[0], y + shift * left[1], z, roll)
        self.x, self.y = self.rows[-1][0], self.rows[-1][1]

    def _half_rates(self, peak_gz: float, top_gz: float, ramp_m: float = 14.0):
        """Pitch rates [rad/m] for the rising half of a loop shaped so that the rider feels
        a target Gz at the estimated speed: dtheta/ds = g (Gz - cos theta) / v^2. Returns the
        rates and the height reached."""
        theta, s, z, rates = 0.0, 0.0, self.z, []
        while theta < math.pi - 1e-12:
            v = self.speed(z)
            blend = min(1.0, s / ramp_m)
            blend = blend * blend * (3 - 2 * blend)
            shape_gz = top_gz + (peak_gz - top_gz) * ((1 + math.cos(theta)) / 2)
            target = 1.0 + (shape_gz - 1.0) * blend
            rate = max(G0 * (target - math.cos(theta)) / (v * v), 1e-4)
            z += STEP * math.sin(theta + 0.5 * rate * STEP)
            theta += rate * STEP
            s += STEP
            rates.append(rate)
        # close exactly half a turn: spread the overshoot over all steps (no kink at the top)
        rates = [r * math.pi / (sum(rates) * STEP) for r in rates]
        return rates, z - self.z

    def _teardrop_half(self, height: float, top_gz: float):
        """Bisect the peak Gz so that the teardrop reaches ``height``."""
        lo, hi = 1.5, 9.0
        for _ in range(50):
            mid = 0.5 * (lo + hi)
            _, reached = self._half_rates(mid, top_gz)
            lo, hi = (mid, hi) if reached > height else (lo, mid)
        rates, _ = self._half_rates(0.5 * (lo + hi), top_gz)
        return rates


def build(shape: str) -> Builder:
    b = Builder()
    b.mark("station")
    b.straight(24.0)  # station platform
    b.mark("lift_start")
    b.pitch_to(30.0, radius=25.0, ramp=8.0)
    while b.z < 31.0:
        b.step(0.0)
    b.pitch_to(0.0, radius=18.0, ramp=6.0)
    b.mark("lift_end")
    b.crest_z, b.crest_speed, b.crest_distance = b.z, 3.0, b.distance
    b.straight(2.0)
    b.mark("drop")
    b.pitch_to(-50.0, radius=20.0, ramp=10.0)  # first drop
    while b.z > 12.0:
        b.step(0.0)
    b.pitch_to(0.0, radius=26.0, ramp=14.0)
    b.straight(6.0)
    b.mark("airtime_hill")
    b.pitch_to(32.0, radius=30.0, ramp=12.0)  # into the airtime hill
    b.parabola(32.0, effective_g=0.75 * G0)
    b.pitch_to(0.0, radius=34.0, ramp=18.0)
    b.straight(12.0)
    b.mark("loop_start")
    first = len(b.rows)
    b.loop(shape, height=23.0)
    b.mark("loop_end")
    b.offset_sideways(first, LOOP_OFFSET_M)
    b.straight(10.0)
    b.mark("turn")
    b.turn(-180.0, radius=30.0, ramp=36.0)  # banked right-hand turn
    b.straight(8.0)
    b.mark("helix")
    b.pitch_to(5.0, radius=60.0, ramp=8.0)
    b.turn(-360.0, radius=18.0, ramp=40.0, pitch_deg=5.0)  # climbing helix
    b.pitch_to(0.0, radius=60.0, ramp=8.0)
    b.straight(10.0)
    b.mark("descent")
    b.pitch_to(-7.0, radius=120.0, ramp=12.0)  # gentle descent to the station's level
    while b.z > 3.4:
        b.step(0.0)
    b.pitch_to(0.0, radius=120.0, ramp=12.0)
    b.mark("brake_start")
    b.straight(110.0)  # brake run back to the station
    b.mark("end")
    return b


HEADER = """# Marrowvale Pleasure Gardens (a fictional park) - "Thistle Comet", revision {rev}
# Invented demo layout made by sample_tracks/generate.py; not a real ride. {what}
# Rail centerline; the elements were laid out on the riders' heartline 1.05 m above it.
# Columns: x, y, z [m] (z up), roll_deg (ISO 8855: positive = right side down).
x,y,z,roll_deg
"""

OPERATION = """# Operation of "Thistle Comet" revision {rev} (fictional demo), made by generate.py.
start_speed_m_s = 0.0

[[sections]]
kind = "lift"            # station drive tyres
start_m = 0.0
end_m = {station_end:.1f}
speed_m_s = 1.5
engage_accel_m_s2 = 0.8

[[sections]]
kind = "lift"            # chain lift
start_m = {lift_start:.1f}
end_m = {lift_end:.1f}
speed_m_s = 3.0

[[sections]]
kind = "brake"           # trim on the brake run
start_m = -108.0
end_m = -36.0
speed_m_s = 5.0
max_decel_m_s2 = 3.5

[[sections]]
kind = "brake"           # final stop
start_m = -30.0
end_m = -2.0
speed_m_s = 0.0
max_decel_m_s2 = 3.0
"""


def rails_from_heartline(rows: list) -> tuple[np.ndarray, np.ndarray]:
    """The elements above describe the riders' heartline; the rails run HEART_M below it
    along the rider's up vector. Returns rail points and their roll [deg]."""
    heart = np.array([r[:3] for r in rows])
    roll = np.array([r[3] for r in rows])
    geo = build_geometry(heart, roll_deg=roll, step_m=0.1)
    (up,) = geo.sample(geo.sample_stations, "up")
    rails = heart - HEART_M * up
    rail_geo = build_geometry(rails, up=up, step_m=0.1)
    (rail_roll,) = rail_geo.sample(rail_geo.sample_stations, "roll_deg")
    return rails, rail_roll


def _fixed(value: float, digits: int) -> str:
    """Fixed-point text with no negative zero (a last-bit sign must not change the file)."""
    text = f"{value:.{digits}f}"
    return text[1:] if text.startswith("-") and float(text) == 0.0 else text


def write(shape: str, rev: str, what: str, out: Path = HERE) -> None:
    b = build(shape)
    rails, roll = rails_from_heartline(b.rows)
    lines = [HEADER.format(rev=rev, what=what)]
    lines += [f"{_fixed(x, 4)},{_fixed(y, 4)},{_fixed(z, 4)},{_fixed(r, 3)}\n"
              for (x, y, z), r in zip(rails, roll)]
    (out / f"thistle_comet_rev{rev}.csv").write_text("".join(lines))
    (out / f"thistle_comet_rev{rev}.operation.toml").write_text(OPERATION.format(
        rev=rev, station_end=b.marks["lift_start"] - 2.0, lift_start=b.marks["lift_start"],
        lift_end=b.marks["lift_end"]))


def main(out: Path = HERE) -> None:
    write("circular", "A", "Circular vertical loop.", out)
    write("teardrop", "B", "Teardrop vertical loop of the same height.", out)
    write_recorded_sample(out)


def write_recorded_sample(out: Path = HERE) -> None:
    """A SYNTHETIC 'recorded' history: the simulator's front-left seat on revision B with
    seeded noise and a 14 Hz structural buzz added, at 200 Hz, for check-history."""
    from checker.ride import RideOptions, load_inputs, run_ride

    line, train, ops = load_inputs(out / "thistle_comet_revB.csv",
                                   HERE / "thistle_comet_train.toml",
                                   operation=out / "thistle_comet_revB.operation.toml")
    result = run_ride(line, train, ops, RideOptions(rate_hz=100.0, step_m=0.2))
    rng = np.random.default_rng(20261201)
    lines = ["# SYNTHETIC test-ride record for the fictional ride \"Thistle Comet\" rev B: "
             "made by\n# sample_tracks/generate.py from the simulator plus seeded noise; not "
             "measured data.\n# Columns: seat, t [s], gx, gy, gz [g].\n", "seat,t,gx,gy,gz\n"]
    for h in result.histories[:1]:
        noise = rng.normal(0.0, 0.04, h.g.shape)
        buzz = 0.08 * np.sin(2 * np.pi * 14.0 * h.t)[:, None] * np.array([0.3, 0.5, 1.0])
        g = h.g + noise + buzz
        lines += [f"{h.seat},{_fixed(t, 3)},{_fixed(a, 4)},{_fixed(b, 4)},{_fixed(c, 4)}\n"
                  for t, (a, b, c) in zip(h.t, g)]
    (out / "thistle_comet_revB_recorded_synthetic.csv").write_text("".join(lines))


if __name__ == "__main__":
    import sys

    main(Path(sys.argv[1]) if len(sys.argv) > 1 else HERE)
