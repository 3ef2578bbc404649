"""Microseconds per call of each public calculator (median over repeats, timeit). Not a test.

Run: .venv/bin/python bench/calc.py

Targets: a 101-point air-spring curve under 2 ms, pressure_for_sag under 5 ms.
"""

from __future__ import annotations

import datetime
import pathlib
import statistics
import sys
import timeit
from collections.abc import Callable
from functools import partial

sys.path.insert(0, str(pathlib.Path(__file__).resolve().parent.parent))

from shopdesk.calc import air_spring, damper, oil, schedule
from shopdesk.calc.units import Q_

REPEATS = 7
TARGETS_US = {"AirSpring.curve (101 points)": 2_000.0, "AirSpring.pressure_for_sag": 5_000.0}

CST = "mm**2/s"
OIL = oil.Oil(nu40=Q_(32, CST), nu100=Q_(5.4, CST), rho15=Q_(870, "kg/m**3"))
SPRING = air_spring.AirSpring(
    piston_diameter=Q_(32, "mm"),
    travel=Q_(160, "mm"),
    positive_volume=Q_(250, "cc"),
    negative_volume=Q_(60, "cc"),
    equalize_at=Q_(5, "mm"),
    spacer_volume=Q_(10, "cc"),
)
LOAD = Q_(300, "N")

# Inputs are built once, outside the timed calls: the figures are the calculators' own cost,
# input checks included, not pint's cost of parsing unit strings.
NU32, NU5_4, NU5, NU20, NU8 = (Q_(v, CST) for v in (32, 5.4, 5, 20, 8))
RHO = Q_(870, "kg/m**3")
WARM, HOT = Q_(20, "degC"), Q_(40, "degC")
MM = {v: Q_(v, "mm") for v in (5, 10, 16, 18, 20, 32, 40, 50, 100, 160)}
PSI_80 = Q_(80, "psi")
CC_250, CC_10 = Q_(250, "cc"), Q_(10, "cc")

CALLS: dict[str, Callable[[], object]] = {
    "Oil(...)": partial(oil.Oil, nu40=NU32, nu100=NU5_4, rho15=RHO),
    "viscosity_at": partial(oil.viscosity_at, nu40=NU32, nu100=NU5_4, temperature=WARM),
    "Oil.viscosity": partial(OIL.viscosity, WARM),
    "Oil.density": partial(OIL.density, WARM),
    "iso_vg_grade": partial(oil.iso_vg_grade, NU32),
    "blend_viscosity": partial(oil.blend_viscosity, [(NU5, 0.6), (NU20, 0.4)]),
    "blend_fraction": partial(oil.blend_fraction, nu_a=NU5, nu_b=NU20, nu_target=NU8),
    "density_at": partial(oil.density_at, rho15=RHO, temperature=HOT),
    "mass_for_volume": partial(oil.mass_for_volume, volume=Q_(100, "mL"), rho15=RHO, temperature=WARM),
    "volume_for_mass": partial(oil.volume_for_mass, mass=Q_(87, "g"), rho15=RHO, temperature=WARM),
    "shaft_displacement": partial(oil.shaft_displacement, shaft_diameter=MM[10], stroke=MM[100]),
    "level_volume": partial(oil.level_volume, bore_diameter=MM[32], level_change=MM[10], rod_diameter=MM[20]),
    "level_for_volume": partial(
        oil.level_for_volume, bore_diameter=MM[32], volume=Q_(5, "mL"), rod_diameter=MM[20]
    ),
    "AirSpring(...)": partial(
        air_spring.AirSpring, piston_diameter=MM[32], travel=MM[160], positive_volume=CC_250
    ),
    "AirSpring.force": partial(SPRING.force, position=MM[40], pressure=PSI_80),
    "AirSpring.curve (101 points)": partial(SPRING.curve, pressure=PSI_80, points=101),
    "AirSpring.pressure_for_sag": partial(SPRING.pressure_for_sag, load=LOAD, sag=0.2),
    "AirSpring.with_spacers": partial(SPRING.with_spacers, CC_10),
    "coil_rate_for_sag": partial(air_spring.coil_rate_for_sag, load=Q_(700, "N"), travel=MM[160], sag=0.25),
    "fork_load": partial(air_spring.fork_load, rider_mass=Q_(80, "kg"), share=0.35),
    "trapped_gas_pressure": partial(
        damper.trapped_gas_pressure,
        gas_volume=Q_(20, "mL"),
        initial_pressure=Q_(101.325, "kPa"),
        volume_change=Q_(7.854, "mL"),
    ),
    "ifp_pressure": partial(
        damper.ifp_pressure,
        ifp_diameter=MM[16],
        spring_rate=Q_(5, "N/mm"),
        spring_preload=MM[10],
        shaft_diameter=MM[10],
        stroke=MM[50],
    ),
    "friction_at_shaft": partial(
        damper.friction_at_shaft, ifp_friction=Q_(30, "N"), shaft_diameter=MM[10], ifp_diameter=MM[18]
    ),
    "cavitation_margin": partial(
        damper.cavitation_margin,
        static_pressure=Q_(3, "bar"),
        damping_force=Q_(100, "N"),
        piston_area=Q_(500, "mm**2"),
        threshold=Q_(30, "kPa"),
    ),
    "max_force_before_cavitation": partial(
        damper.max_force_before_cavitation,
        static_pressure=Q_(3, "bar"),
        piston_area=Q_(500, "mm**2"),
        threshold=Q_(30, "kPa"),
    ),
    "next_due_on": partial(
        schedule.next_due_on,
        last_service_on=datetime.date(2024, 1, 31),
        interval_hours=50,
        interval_months=12,
        hours_per_week=5,
    ),
    "due_status": partial(
        schedule.due_status, due_on=datetime.date(2024, 3, 1), today=datetime.date(2024, 2, 1)
    ),
}


def microseconds_per_call(call: Callable[[], object]) -> float:
    """Median over REPEATS of timeit's per-call time, each repeat running about 0.1 s."""
    timer = timeit.Timer(call)
    number, _ = timer.autorange()
    number = max(1, number // 2)
    return statistics.median(timer.repeat(repeat=REPEATS, number=number)) / number * 1e6


def main() -> int:
    width = max(len(name) for name in CALLS)
    print(f"{'function':<{width}}  {'µs/call':>10}  target")
    print(f"{'-' * width}  {'-' * 10}  ------")
    failed = False
    for name, call in CALLS.items():
        call()  # warm caches (pint's unit parsing) before timing
        micros = microseconds_per_call(call)
        target = TARGETS_US.get(name)
        verdict = ""
        if target is not None:
            passed = micros < target
            failed |= not passed
            verdict = f"{'PASS' if passed else 'FAIL'} (< {target:,.0f} µs)"
        print(f"{name:<{width}}  {micros:>10.1f}  {verdict}")
    print()
    print("Targets: 101-point air-spring curve under 2 ms; pressure_for_sag under 5 ms.")
    print("FAIL" if failed else "PASS")
    return 1 if failed else 0


if __name__ == "__main__":
    raise SystemExit(main())
