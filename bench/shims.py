"""Timing of the shim-stack model: a 12-shim tapered stack and a 50-point damping curve.

Run from the repository root: ``.venv/bin/python bench/shims.py``. Prints the median
over repeats and PASS when each is under its 50 ms target, FAIL otherwise (exit code 1).
"""

from __future__ import annotations

import statistics
import sys
import time
from collections.abc import Callable
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from shopdesk.calc.oil import Oil
from shopdesk.calc.shims import Crossover, Piston, Shim, ShimStack, damping_force, stack_stiffness
from shopdesk.calc.units import Q_

TARGET_MS = 50.0
REPEATS = 30


def mm(value: float) -> Q_:
    return Q_(value, "mm")


TAPER = [
    Shim(mm(od), mm(thickness))
    for od, thickness in [
        (24, 0.10), (23, 0.10), (22, 0.10), (21, 0.10), (20, 0.15), (19, 0.15),
        (18, 0.15), (17, 0.15), (16, 0.20), (15, 0.20), (14, 0.20), (12, 0.30),
    ]
]  # fmt: skip


def taper_stiffness() -> object:
    # Build the stack (its stages are solved on construction) and read its stiffness.
    return stack_stiffness(ShimStack(TAPER, mm(10)))


def crossover_taper_stiffness() -> object:
    stack = ShimStack(TAPER, mm(10), crossover=Crossover(mm(14), mm(0.10)), crossover_position=3)
    return stack.stages()


STACK = ShimStack(TAPER, mm(10), preload=Q_(20, "N"))
PISTON = Piston(
    diameter=mm(26), shaft_diameter=mm(10), port_area=Q_(60, "mm**2"), port_radius=mm(10.5),
    bleed_diameter=mm(1.2),
)  # fmt: skip
OIL = Oil(nu40=Q_(32.0, "mm**2/s"), nu100=Q_(5.4, "mm**2/s"), rho15=Q_(870.0, "kg/m**3"))
VELOCITIES = Q_(np.linspace(0.0, 4.0, 50), "m/s")


def damping_curve() -> object:
    return damping_force(stack=STACK, piston=PISTON, velocity=VELOCITIES, oil=OIL)


def median_ms(task: Callable[[], object]) -> float:
    task()  # warm caches and imports
    times = []
    for _ in range(REPEATS):
        start = time.perf_counter()
        task()
        times.append((time.perf_counter() - start) * 1000.0)
    return statistics.median(times)


def main() -> int:
    failed = False
    for name, task in [
        ("stack_stiffness, 12-shim tapered stack (built and solved)", taper_stiffness),
        ("12-shim tapered stack with a crossover, all stages", crossover_taper_stiffness),
        ("damping_force, 50-point curve", damping_curve),
    ]:
        elapsed = median_ms(task)
        verdict = "PASS" if elapsed < TARGET_MS else "FAIL"
        failed = failed or verdict == "FAIL"
        print(f"{verdict}  {name}: median {elapsed:.2f} ms over {REPEATS} runs (target < {TARGET_MS:g} ms)")
    print(f"  stiffness {taper_stiffness():.4g}; curve at 4 m/s: {damping_curve().forces[-1]:.4g}")
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
