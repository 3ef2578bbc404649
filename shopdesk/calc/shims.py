"""Shim stacks: stiffness, crossovers, preload, before/after comparison and a damping estimate.

A stack is listed from the piston face outward, each line a shim size (outer
diameter × thickness) and a count, all clamped at one clamp diameter. The
plate formulas are in :mod:`shopdesk.calc.plates` (Roark Table 11.2 case 1L,
from memory); this module puts plates together.

Model, and what it leaves out:

- Shims of one size next to each other act as one plate whose stiffness D is
  the sum of theirs (springs in parallel, ∝ Σt³): common practice, friction
  between the shims ignored. Equal-size stacks therefore add exactly.
- Shims of different sizes are plates in contact, all clamped at the one
  clamp diameter. Each bears on its neighbour outward at the edge of the
  shorter of the two, as a ring load, and the deflections of both agree
  there (Roark Table 11.2 case 1L with the load ring at r0 < a, from
  memory). A neighbour may also touch at the edge of any other shim of the
  stack that lies inside both: where a plate is held back, the one in front
  must not pass through it. Which contacts carry load, and how much, is
  solved as a linear complementarity problem (no contact pulls, no plate
  passes through the next) by non-negative least squares; see
  :func:`shopdesk.calc.plates.solve_stages`. No friction, small deflections,
  the shims' own thickness ignored in the geometry.
- A stack without a crossover is then exactly linear: one stiffness.
- A crossover is a small ring shim between the face shims and the rest of
  the stack (``crossover_position`` = how many lines of ``shims`` are face
  shims). Beyond the ring's edge it leaves a gap of its thickness between
  the last face shim and the first shim behind it. The face shims bend,
  bearing on the ring (which bears on the rest), until the gap closes; from
  then on they bear on the rest as well, ring by ring as they wrap onto a
  tapered rest: the second, stiffer stage. Lift against load is piecewise
  linear, solved event by event.
- Preload is the load on the face shim's edge before it lifts at all.
- A floating stack (not clamped, held by a spring) has the spring's rate as
  its only stiffness (common practice).
- Every stiffness here is at the face shim's outer edge, under a ring load on
  that edge: the lift is the face shim's edge deflection.

Figures are estimates to compare a stack before and after a revalve, not a
dyno result.
"""

from __future__ import annotations

import bisect
import math
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any, Literal

import numpy as np
from scipy.optimize import brentq

from shopdesk.calc.errors import CalcInputError
from shopdesk.calc.oil import Oil
from shopdesk.calc.plates import (
    STEEL_MODULUS,
    STEEL_POISSON,
    STIFFNESS,
    Contact,
    Plate,
    Segment,
    ShimStiffness,
    check_clamp,
    check_diameter,
    check_load,
    check_modulus,
    check_poisson,
    check_thickness,
    contacts_between,
    flexural_rigidity,
    shim_stiffness,
    small_deflection_warning,
    solve_stages,
)
from shopdesk.calc.units import Q_, Quantity, check_number, check_quantity, ureg

__all__ = [
    "Crossover",
    "DampingCurve",
    "Piston",
    "Shim",
    "ShimStack",
    "ShimStiffness",
    "StackComparison",
    "Stage",
    "compare",
    "damping_force",
    "orifice_flow",
    "shim_stiffness",
    "stack_stiffness",
]

MOST_SHIMS_PER_LINE = 50
MOST_LINES = 40
HIGHEST_SPRING_RATE = 1.0e6  # N/mm
# Sharp-edged orifice at high Reynolds number: Cd = π/(π + 2) (von Mises, as quoted in
# Merritt, Hydraulic Control Systems, 1967, from memory).
SHARP_EDGED_CD = math.pi / (math.pi + 2.0)
FASTEST_SHAFT = 10.0  # m/s: beyond any suspension damper
MOST_VELOCITY_POINTS = 10_000
DEFAULT_PRESSURE_LIMIT = Q_(1000.0, "bar")  # well past where seals and tubes give way
NO_PRELOAD = Q_(0.0, "N")
NO_BLEED = Q_(0.0, "mm")
ROOM_TEMPERATURE = Q_(20.0, "degC")
LOWEST_DENSITY = 500.0  # kg/m³
HIGHEST_DENSITY = 2000.0  # kg/m³


# --- Shims and stacks -----------------------------------------------------------------------------


@dataclass(frozen=True)
class Shim:
    """One line of a stack: ``count`` shims of outer diameter ``od`` and ``thickness``.

    ``od`` a length (1–200 mm), ``thickness`` 0.05–0.50 mm, ``count`` 1–50.
    ``od_mm`` and ``thickness_mm`` hold the same in mm, set on creation.
    """

    od: Quantity
    thickness: Quantity
    count: int = 1
    od_mm: float = field(init=False, repr=False, compare=False)
    thickness_mm: float = field(init=False, repr=False, compare=False)

    def __post_init__(self) -> None:
        object.__setattr__(self, "od_mm", check_diameter(self.od, name="od"))
        object.__setattr__(self, "thickness_mm", check_thickness(self.thickness, name="thickness"))
        if isinstance(self.count, bool) or not isinstance(self.count, int):
            raise CalcInputError(f"count must be a whole number of shims, got {self.count!r}.")
        check_number(self.count, name="count", minimum=1, maximum=MOST_SHIMS_PER_LINE, allow_minimum=True)


@dataclass(frozen=True)
class Crossover:
    """The crossover ring: one small shim between the face shims and the rest of the stack.

    ``od`` a length, smaller than the shims on both sides of it and larger
    than the clamp; ``thickness`` 0.05–0.50 mm: the gap it leaves.
    """

    od: Quantity
    thickness: Quantity
    od_mm: float = field(init=False, repr=False, compare=False)
    thickness_mm: float = field(init=False, repr=False, compare=False)

    def __post_init__(self) -> None:
        object.__setattr__(self, "od_mm", check_diameter(self.od, name="crossover od"))
        object.__setattr__(self, "thickness_mm", check_thickness(self.thickness, name="crossover thickness"))


@dataclass(frozen=True)
class Stage:
    """One stage of a stack, as a technician names them (crossover gap open, gap closed, ...).

    It starts at ``start_load`` (N, preload included) and ``start_lift`` (mm of
    the face shim's edge). ``stiffness`` (N/mm): for every stage but the last,
    load gained over lift gained across the stage; for the last, the
    stiffness it settles to. A stage can hold several short linear pieces (as
    the face shims wrap onto a tapered stack behind a crossover, ring by
    ring); :meth:`ShimStack.lift` and :meth:`ShimStack.stiffness_at` follow the
    pieces exactly. ``description`` says which shims press on which.
    """

    start_load: Quantity
    start_lift: Quantity
    stiffness: Quantity
    description: str


@dataclass(frozen=True)
class ShimStack:
    """A shim stack listed from the piston face outward, clamped at ``clamp_diameter``.

    - ``shims``: the lines of the stack (:class:`Shim`), face shim first; 1–40 lines.
    - ``clamp_diameter``: a length, at least 1 mm and smaller than every shim.
    - ``crossover`` and ``crossover_position``: a :class:`Crossover` ring and
      the number of *lines* of ``shims`` in front of it (the face shims). A
      line with ``count=3`` is one line. Both or neither; 1 ≤ position <
      number of lines.
    - ``preload``: load on the face shim's edge before it lifts (force, ≥ 0,
      default 0 N).
    - ``floating_spring_rate``: for a stack that floats on a spring instead of
      being clamped, that spring's rate (N/mm); the stack's stiffness is then
      the spring's alone (common practice) and a crossover is refused.
    - ``youngs_modulus`` (50–400 GPa, steel 200) and ``poisson`` (steel 0.3).

    Raises :class:`CalcInputError` for any input the model cannot use,
    including a shim smaller than the shims on both sides of it that is not
    given as the crossover (a second crossover is not modelled).
    """

    shims: Sequence[Shim]
    clamp_diameter: Quantity
    crossover: Crossover | None = None
    preload: Quantity = NO_PRELOAD
    floating_spring_rate: Quantity | None = None
    crossover_position: int | None = None
    youngs_modulus: Quantity = STEEL_MODULUS
    poisson: float = STEEL_POISSON
    _segments: tuple[Segment, ...] = field(init=False, repr=False, compare=False)
    _starts: tuple[float, ...] = field(init=False, repr=False, compare=False)
    _gap_closing: float | None = field(init=False, repr=False, compare=False)

    def __post_init__(self) -> None:
        if isinstance(self.shims, (str, bytes)) or not isinstance(self.shims, Sequence):
            raise CalcInputError(f"shims must be a list of Shim, got {self.shims!r}.")
        shims = tuple(self.shims)
        object.__setattr__(self, "shims", shims)
        if not 1 <= len(shims) <= MOST_LINES:
            raise CalcInputError(f"shims must hold 1 to {MOST_LINES} lines, got {len(shims)}.")
        for number, shim in enumerate(shims, start=1):
            if not isinstance(shim, Shim):
                raise CalcInputError(f"shims line {number} must be a Shim, got {shim!r}.")
        clamp = check_diameter(self.clamp_diameter, name="clamp_diameter")
        self._check_crossover(shims)
        check_load(self.preload, name="preload")
        if self.floating_spring_rate is not None:
            rate = check_quantity(
                self.floating_spring_rate,
                name="floating_spring_rate",
                dimension=STIFFNESS,
                unit="N/mm",
                maximum=HIGHEST_SPRING_RATE,
            )
            if self.crossover is not None:
                raise CalcInputError(
                    "crossover: a floating stack takes its stiffness from its spring alone; "
                    "a crossover on a floating stack is not modelled."
                )
        modulus = check_modulus(self.youngs_modulus)
        nu = check_poisson(self.poisson)
        smallest = min(shim.od_mm for shim in shims)
        check_clamp(clamp, smallest)
        if self.crossover is not None:
            check_clamp(clamp, self.crossover.od_mm, smallest_name="the crossover")
        if self.floating_spring_rate is not None:
            segments: tuple[Segment, ...] = (Segment(0.0, 0.0, rate, "floating on its spring"),)
            gap_closing = None
        else:
            plates, contacts = self._plates_and_contacts(shims, modulus, nu)
            segments, gap_closing = solve_stages(plates, contacts, clamp_radius=clamp / 2.0, poisson=nu)
        object.__setattr__(self, "_segments", segments)
        object.__setattr__(self, "_starts", tuple(segment.start_load for segment in segments))
        object.__setattr__(self, "_gap_closing", gap_closing)

    def _check_crossover(self, shims: tuple[Shim, ...]) -> None:
        if self.crossover is None:
            if self.crossover_position is not None:
                raise CalcInputError("crossover_position is given but there is no crossover.")
            return
        if not isinstance(self.crossover, Crossover):
            raise CalcInputError(f"crossover must be a Crossover(od, thickness), got {self.crossover!r}.")
        position = self.crossover_position
        if position is None or isinstance(position, bool) or not isinstance(position, int):
            raise CalcInputError(
                "crossover_position must be the number of lines of shims in front of the crossover "
                f"(the face shims), got {position!r}."
            )
        check_number(
            position, name="crossover_position", minimum=1, maximum=len(shims) - 1, allow_minimum=True
        )
        ring = self.crossover.od_mm
        front, back = shims[position - 1].od_mm, shims[position].od_mm
        if not (ring < front and ring < back):
            raise CalcInputError(
                f"crossover od must be smaller than the shims on both sides of it ({front:g} mm and "
                f"{back:g} mm), got {ring:g} mm."
            )

    def _plates_and_contacts(
        self, shims: tuple[Shim, ...], modulus: float, nu: float
    ) -> tuple[list[Plate], list[Contact]]:
        position = self.crossover_position if self.crossover is not None else None
        groups: list[list[tuple[int, Shim]]] = []
        for number, shim in enumerate(shims, start=1):
            new_group = not groups or groups[-1][-1][1].od_mm != shim.od_mm or number - 1 == position
            if new_group:
                groups.append([])
            groups[-1].append((number, shim))
        plates = []
        for group in groups:
            rigidity = sum(
                shim.count
                * flexural_rigidity(modulus_mpa=modulus, thickness_mm=shim.thickness_mm, poisson=nu)
                for _, shim in group
            )
            first, last = group[0][0], group[-1][0]
            label = f"line {first}" if first == last else f"lines {first}–{last}"
            thinnest = min(shim.thickness_mm for _, shim in group)
            plates.append(Plate(group[0][1].od_mm / 2.0, rigidity, thinnest, label))
        face_count = 0
        if self.crossover is not None and position is not None:
            face_count = sum(1 for group in groups if group[0][0] <= position)
            ring = self.crossover
            ring_rigidity = flexural_rigidity(modulus_mpa=modulus, thickness_mm=ring.thickness_mm, poisson=nu)
            plates.insert(face_count, Plate(ring.od_mm / 2.0, ring_rigidity, ring.thickness_mm, "crossover"))
        for index in range(1, len(plates) - 1):
            here, before, after = plates[index], plates[index - 1], plates[index + 1]
            if here.label != "crossover" and here.radius < before.radius and here.radius < after.radius:
                raise CalcInputError(
                    f"shims {here.label} ({2 * here.radius:g} mm) is smaller than the shims on both sides of "
                    "it: that is a crossover. Give it as crossover=Crossover(...) with crossover_position; "
                    "a stack with more than one crossover is not modelled."
                )
        edges = sorted({plate.radius for plate in plates})
        contacts: list[Contact] = []
        for index in range(len(plates) - 1):
            pair = f"{plates[index].label} on {plates[index + 1].label}"
            contacts += contacts_between(index, index + 1, plates, edges, inner=0.0, gap=0.0, label=pair)
        if self.crossover is not None:
            face, rest = face_count - 1, face_count + 1
            contacts += contacts_between(
                face,
                rest,
                plates,
                edges,
                inner=plates[face_count].radius,
                gap=self.crossover.thickness_mm,
                label="crossover gap",
            )
        return plates, contacts

    # --- What the stack does -----------------------------------------------------------------------

    def stages(self) -> tuple[Stage, ...]:
        """The stages of the stack at the face shim's edge, in order of load (see :class:`Stage`).

        A plain stack (no crossover) is exactly linear: one stage. A crossover
        stack has the soft stage, exactly linear until the gap closes, then the
        stiff one.
        """
        groups: list[list[Segment]] = []
        for segment in self._segments:
            if groups and groups[-1][0].description == segment.description:
                groups[-1].append(segment)
            else:
                groups.append([segment])
        preload = self._preload_n
        stages = []
        for index, group in enumerate(groups):
            first = group[0]
            if index + 1 < len(groups):
                following = groups[index + 1][0]
                stiffness = (following.start_load - first.start_load) / (
                    following.start_lift - first.start_lift
                )
            else:
                stiffness = group[-1].stiffness
            stages.append(
                Stage(
                    Q_(preload + first.start_load, "N"),
                    Q_(first.start_lift, "mm"),
                    Q_(stiffness, "N/mm"),
                    first.description,
                )
            )
        return tuple(stages)

    def gap_closing_load(self) -> Quantity | None:
        """Load on the face shim's edge (N, preload included) at which the crossover gap closes.

        None without a crossover, or when the gap never closes under a growing load.
        """
        if self._gap_closing is None:
            return None
        return Q_(self._preload_n + self._gap_closing, "N")

    def lift(self, load: Quantity) -> Quantity:
        """Lift (mm) of the face shim's outer edge under ``load`` (a force, 0–100 kN) on that edge.

        Zero up to the preload, then piecewise linear through :meth:`stages`.
        """
        load_n = check_load(load, name="load")
        return Q_(self._lift_mm(load_n), "mm")

    def load_for_lift(self, lift: Quantity) -> Quantity:
        """Load on the face shim's edge (N, preload included) that lifts it by ``lift`` (0–10 mm).

        The inverse of :meth:`lift`; zero lift gives the preload.
        """
        lift_mm = check_quantity(
            lift, name="lift", dimension="[length]", unit="mm", minimum=0.0, maximum=10.0, allow_minimum=True
        )
        index = bisect.bisect_right([segment.start_lift for segment in self._segments], lift_mm) - 1
        segment = self._segments[max(index, 0)]
        load = segment.start_load + (lift_mm - segment.start_lift) * segment.stiffness
        return Q_(self._preload_n + load, "N")

    def stiffness_at(self, load: Quantity) -> Quantity:
        """Stiffness (N/mm) of the stage in force at ``load`` (a force, 0–100 kN, preload included).

        Below the preload, the first stage's: the stiffness the stack opens with.
        """
        load_n = check_load(load, name="load")
        return Q_(self._segment_at(load_n - self._preload_n).stiffness, "N/mm")

    @property
    def small_deflection_limit(self) -> Quantity:
        """Half the thinnest face shim's thickness (mm): lifts beyond it leave small-deflection theory."""
        face = [self.shims[0]]
        for shim in self.shims[1:]:
            if shim.od_mm != face[0].od_mm or len(face) == self.crossover_position:
                break
            face.append(shim)
        return Q_(min(shim.thickness_mm for shim in face) / 2.0, "mm")

    @property
    def face_radius_mm(self) -> float:
        return self.shims[0].od_mm / 2.0

    @property
    def _preload_n(self) -> float:
        return float(self.preload.to("N").magnitude)

    def _segment_at(self, excess_n: float) -> Segment:
        index = bisect.bisect_right(self._starts, excess_n) - 1
        return self._segments[max(index, 0)]

    def _lift_mm(self, load_n: float) -> float:
        excess = load_n - self._preload_n
        if excess <= 0.0:
            return 0.0
        current = self._segment_at(excess)
        return current.start_lift + (excess - current.start_load) / current.stiffness


def stack_stiffness(stack: ShimStack) -> Quantity:
    """Stiffness (N/mm) at the face shim's outer edge in the stack's first stage.

    For a crossover stack that is the soft stage; :meth:`ShimStack.stages`
    gives every stage and the load where it starts. Same-size shims add
    exactly (Σ D ∝ Σ t³, common practice); a tapered stack is solved as
    plates in contact (Roark Table 11.2 case 1L, from memory); a floating
    stack returns its spring rate.
    """
    if not isinstance(stack, ShimStack):
        raise CalcInputError(f"stack must be a ShimStack, got {stack!r}.")
    return stack.stages()[0].stiffness


# --- Before and after ---------------------------------------------------------------------------


@dataclass(frozen=True)
class StackComparison:
    """``after`` against ``before``: ratios (after / before) and the same in words.

    ``initial_stiffness_ratio`` compares the stiffness each stack opens with
    (first stage); ``reference_stiffness_ratio`` the stiffness in force at the
    reference load (past a crossover, if it has closed by then);
    ``preload_ratio`` is None when the stack before had no preload;
    ``lift_ratio`` compares the lift at the reference load (None when the
    stack before does not lift there); ``lines`` are sentences for the job card.
    """

    initial_stiffness_ratio: float
    reference_stiffness_ratio: float
    preload_ratio: float | None
    lift_ratio: float | None
    lines: tuple[str, ...]


def _in_words(ratio: float, more: str, less: str, *, as_much: str) -> str:
    """Words such as "about 35 % stiffer", "about the same (within 5 %)", "about 2.5 times as stiff"."""
    if abs(ratio - 1.0) <= 0.05:
        return "about the same (within 5 %)"
    if ratio >= 2.0:
        return f"about {ratio:.1f} times as {as_much}"
    if ratio > 1.0:
        return f"about {round((ratio - 1.0) * 100)} % {more}"
    return f"about {round((1.0 - ratio) * 100)} % {less}"


def compare(before: ShimStack, after: ShimStack, *, reference_load: Quantity) -> StackComparison:
    """Compare two stacks of one valve, in ratios and in the words a technician reads.

    Ratios are after / before: the stiffness each opens with, the stiffness at
    ``reference_load`` (a force on the face shim's edge, more than 0 and at
    most 100 kN, preload included), preload, and lift at the reference load.
    Stiffer means more force for the same lift. A change within 5 % reads "about the
    same (within 5 %)" (common practice: below what a rider or a shim
    tolerance tells apart).
    """
    for name, stack in (("before", before), ("after", after)):
        if not isinstance(stack, ShimStack):
            raise CalcInputError(f"{name} must be a ShimStack, got {stack!r}.")
    load_n = check_load(reference_load, name="reference_load", allow_zero=False)
    initial = after._segments[0].stiffness / before._segments[0].stiffness
    excess_before, excess_after = load_n - before._preload_n, load_n - after._preload_n
    at_load = after._segment_at(excess_after).stiffness / before._segment_at(excess_before).stiffness
    lines = [f"Stiffness as it opens: {_in_words(initial, 'stiffer', 'softer', as_much='stiff')}."]
    if before.crossover is not None or after.crossover is not None:
        lines.append(
            f"Stiffness at {load_n:.3g} N: {_in_words(at_load, 'stiffer', 'softer', as_much='stiff')}."
        )
        lines.append(
            f"Crossover closes: {_closing_words(before.gap_closing_load())} before, "
            f"{_closing_words(after.gap_closing_load())} after."
        )
    preload_before, preload_after = before._preload_n, after._preload_n
    preload_ratio: float | None = None
    if preload_before > 0.0:
        preload_ratio = preload_after / preload_before
        lines.append(f"Preload: {_in_words(preload_ratio, 'more', 'less', as_much='much')}.")
    elif preload_after > 0.0:
        lines.append(f"Preload: none before, {preload_after:.3g} N after.")
    lift_before, lift_after = before._lift_mm(load_n), after._lift_mm(load_n)
    lift_ratio: float | None = None
    if lift_before > 0.0 and lift_after == 0.0:
        lines.append(
            f"Lift at {load_n:.3g} N: {lift_before:.3f} mm before, shut after (preload not reached)."
        )
    elif lift_before > 0.0:
        lift_ratio = lift_after / lift_before
        lines.append(
            f"Lift at {load_n:.3g} N: {_in_words(lift_ratio, 'more', 'less', as_much='much')} "
            f"({lift_before:.3f} mm before, {lift_after:.3f} mm after)."
        )
    else:
        after_words = f"{lift_after:.3f} mm after" if lift_after > 0.0 else "shut after too"
        lines.append(f"Lift at {load_n:.3g} N: shut before (preload not reached), {after_words}.")
    return StackComparison(initial, at_load, preload_ratio, lift_ratio, tuple(lines))


def _closing_words(load: Quantity | None) -> str:
    return "no crossover" if load is None else f"at {load.to('N').magnitude:.3g} N"


# --- Flow through the valve ---------------------------------------------------------------------


@dataclass(frozen=True)
class Piston:
    """A damper piston (or base valve) under one shim stack.

    - ``diameter``: piston diameter (5–200 mm); ``shaft_diameter``: the shaft
      through it (smaller than the piston).
    - ``port_area``: total area of the ports this stack covers (mm², less than
      the annulus between piston and shaft).
    - ``port_radius``: radius of the ports' outer edge, where the face shim
      seals; the face shim must reach past it. The curtain through which oil
      leaves is at the face shim's outer radius, not here.
    - ``bleed_diameter``: the orifice that bypasses the stack (0 = no bleed).
    - ``displacing``: which area pushes oil through this valve per unit of
      shaft speed. ``"annulus"`` (default): piston area − shaft area, as for a
      rebound or mid-valve piston moving in a full cartridge. ``"shaft"``: the
      shaft's area, as for a base valve that passes only the oil the entering
      shaft displaces.
    """

    diameter: Quantity
    shaft_diameter: Quantity
    port_area: Quantity
    port_radius: Quantity
    bleed_diameter: Quantity = NO_BLEED
    displacing: Literal["annulus", "shaft"] = "annulus"

    def __post_init__(self) -> None:
        def length(value: Any, name: str, low: float, high: float, *, allow_ends: bool = False) -> float:
            size = check_quantity(
                value,
                name=name,
                dimension="[length]",
                unit="mm",
                minimum=low,
                maximum=high,
                allow_minimum=allow_ends,
            )
            if size >= high and not allow_ends:
                raise CalcInputError(f"{name} must be less than {high:g} mm, got {size:g} mm.")
            return size

        diameter = length(self.diameter, "diameter", 5.0, 200.0, allow_ends=True)
        shaft = length(self.shaft_diameter, "shaft_diameter", 0.0, diameter)
        annulus = math.pi / 4.0 * (diameter**2 - shaft**2)  # mm²
        ports = check_quantity(self.port_area, name="port_area", dimension="[area]", unit="mm**2")
        if ports >= annulus:
            raise CalcInputError(
                f"port_area must be less than the annulus round the shaft ({annulus:.4g} mm²)."
            )
        length(self.port_radius, "port_radius", shaft / 2.0, diameter / 2.0)
        bleed = length(self.bleed_diameter, "bleed_diameter", 0.0, diameter, allow_ends=True)
        if math.pi / 4.0 * bleed**2 >= annulus:
            raise CalcInputError(
                f"bleed_diameter must leave a piston: its area must be under {annulus:.4g} mm²."
            )
        if self.displacing not in ("annulus", "shaft"):
            raise CalcInputError(f'displacing must be "annulus" or "shaft", got {self.displacing!r}.')

    @property
    def displacing_area(self) -> Quantity:
        """The area (mm²) whose motion pushes oil through this valve; see ``displacing``."""
        diameter = self.diameter.to("mm").magnitude
        shaft = self.shaft_diameter.to("mm").magnitude
        if self.displacing == "shaft":
            return Q_(math.pi / 4.0 * shaft**2, "mm**2")
        return Q_(math.pi / 4.0 * (diameter**2 - shaft**2), "mm**2")

    @property
    def bleed_area(self) -> Quantity:
        return Q_(math.pi / 4.0 * self.bleed_diameter.to("mm").magnitude ** 2, "mm**2")


def _check_cd(value: Any) -> float:
    return check_number(value, name="discharge_coefficient", minimum=0.0, maximum=1.0)


def _check_density(value: Any) -> float:
    return check_quantity(
        value,
        name="density",
        dimension="[mass] / [length] ** 3",
        unit="kg/m**3",
        minimum=LOWEST_DENSITY,
        maximum=HIGHEST_DENSITY,
        allow_minimum=True,
    )


def orifice_flow(
    *,
    pressure_drop: Quantity,
    density: Quantity,
    diameter: Quantity | None = None,
    area: Quantity | None = None,
    discharge_coefficient: float = SHARP_EDGED_CD,
) -> Quantity:
    """Flow (m³/s) through an orifice: Q = Cd·A·√(2Δp/ρ).

    Give ``diameter`` or ``area``, not both. ``pressure_drop`` ≥ 0 (at most
    10 000 bar), ``density`` 500–2000 kg/m³, ``discharge_coefficient`` in
    (0, 1], default π/(π + 2) ≈ 0.611 for a sharp-edged orifice at high
    Reynolds number (von Mises, as quoted in Merritt, *Hydraulic Control
    Systems*, 1967, from memory; practical range 0.6–0.7).
    """
    if (diameter is None) == (area is None):
        raise CalcInputError("Give the orifice's diameter or its area, not both and not neither.")
    if diameter is not None:
        size = check_quantity(diameter, name="diameter", dimension="[length]", unit="m", maximum=1.0)
        area_m2 = math.pi / 4.0 * size**2
    else:
        area_m2 = check_quantity(area, name="area", dimension="[area]", unit="m**2", maximum=1.0)
    drop = check_quantity(
        pressure_drop,
        name="pressure_drop",
        dimension="[pressure]",
        unit="Pa",
        minimum=0.0,
        maximum=1.0e9,
        allow_minimum=True,
    )
    rho = _check_density(density)
    cd = _check_cd(discharge_coefficient)
    return Q_(cd * area_m2 * math.sqrt(2.0 * drop / rho), "m**3/s")


@dataclass(frozen=True)
class DampingCurve:
    """Damping force against shaft velocity for one valve (see :func:`damping_force`).

    Arrays of one length: ``velocities`` (m/s), ``forces`` (N), ``pressures``
    (pressure drop across the valve, bar), ``lifts`` (face shim edge, mm),
    ``bleed_share`` (fraction of the flow through the bleed, 0–1),
    ``beyond_small_deflection`` (True where the lift passes half the face
    shim's thickness). ``warnings`` are sentences for the technician.
    """

    velocities: Quantity
    forces: Quantity
    pressures: Quantity
    lifts: Quantity
    bleed_share: np.ndarray
    beyond_small_deflection: np.ndarray
    warnings: tuple[str, ...]


def _check_velocities(value: Any) -> np.ndarray:
    name = "velocity"
    if not isinstance(value, ureg.Quantity) or value._REGISTRY is not ureg:
        raise CalcInputError(f"{name} must be a speed with a unit (for example m/s or mm/s), got {value!r}.")
    if not value.check("[length] / [time]"):
        raise CalcInputError(f"{name} must be a speed (m/s or mm/s), got {value:~P}.")
    try:
        speeds = np.asarray(value.to("m/s").magnitude, dtype=float)
    except (TypeError, ValueError) as error:
        raise CalcInputError(
            f"{name} must be a number or a list of numbers with a speed unit: {error}"
        ) from None
    if speeds.ndim > 1 or not 1 <= speeds.size <= MOST_VELOCITY_POINTS:
        raise CalcInputError(f"{name} must be one speed or a list of 1 to {MOST_VELOCITY_POINTS} speeds.")
    speeds = np.atleast_1d(speeds)
    for speed in speeds:
        check_number(
            float(speed), name=name, unit="m/s", minimum=0.0, maximum=FASTEST_SHAFT, allow_minimum=True
        )
    return speeds


def damping_force(
    *,
    stack: ShimStack,
    piston: Piston,
    velocity: Quantity,
    oil: Oil,
    temperature: Quantity = ROOM_TEMPERATURE,
    discharge_coefficient: float = SHARP_EDGED_CD,
    pressure_limit: Quantity = DEFAULT_PRESSURE_LIMIT,
) -> DampingCurve:
    """Estimated damping force (N) against shaft velocity for one valve: a stack on a piston.

    For each shaft velocity v (m/s, 0–10; one value or an array):

    1. The flow through the valve is Q = A·v, A the piston's displacing area
       (``Piston.displacing``).
    2. It splits between the bleed and the curtain under the face shim, both
       at the same pressure drop Δp, each by the orifice equation
       Q = Cd·A·√(2Δp/ρ) (:func:`orifice_flow`; Cd = π/(π + 2) ≈ 0.611, von
       Mises as quoted in Merritt 1967, from memory). One Cd for both.
    3. The curtain area is 2π·r·h, r the face shim's outer radius and h its
       lift, capped at the port area (common practice).
    4. The lift is :meth:`ShimStack.lift` of the load Δp × port area, taken as
       acting on the face shim's edge (an overestimate of the lift: the
       pressure really acts over the ports, nearer the clamp). No lift up to
       the preload.
    5. Δp solves flow balance, by :func:`scipy.optimize.brentq` between 0 and
       the pressure at which the bleed alone passes the flow (or
       ``pressure_limit``, default 1000 bar, when that is lower or there is
       no bleed).
    6. The force is Δp × A.

    Left out: viscous (laminar) losses, which matter at low speed; inertia of
    the oil and the shims; the compliance of oil and hoses; the large
    deflection of thin shims (flagged where the lift passes half the face
    shim's thickness); cavitation (see :mod:`shopdesk.calc.damper`); gas or
    spring pressure behind the piston. Oil density is ``oil.density(temperature)``
    (API MPMS 11.1); viscosity does not enter the orifice equation.

    A valve with no bleed whose stack cannot open below ``pressure_limit``
    is hydraulically locked: that raises :class:`CalcInputError` naming the
    velocity, as does any flow that needs more than ``pressure_limit``.

    The result is an estimate to compare a stack before and after, not a
    dyno result.
    """
    if not isinstance(stack, ShimStack):
        raise CalcInputError(f"stack must be a ShimStack, got {stack!r}.")
    if not isinstance(piston, Piston):
        raise CalcInputError(f"piston must be a Piston, got {piston!r}.")
    if not isinstance(oil, Oil):
        raise CalcInputError(f"oil must be an Oil, got {oil!r}.")
    speeds = _check_velocities(velocity)
    check_quantity(temperature, name="temperature", dimension="[temperature]", unit="degC", minimum=None)
    rho = _check_density(oil.density(temperature))
    cd = _check_cd(discharge_coefficient)
    limit_pa = check_quantity(
        pressure_limit, name="pressure_limit", dimension="[pressure]", unit="Pa", maximum=1.0e9
    )
    _check_fit(stack, piston)

    area = piston.displacing_area.to("m**2").magnitude
    bleed = piston.bleed_area.to("m**2").magnitude
    ports = piston.port_area.to("m**2").magnitude
    curtain_per_lift = 2.0 * math.pi * stack.face_radius_mm * 1e-3  # m² per m of lift
    lift_mm = stack._lift_mm  # of the load in N on the face shim's edge

    def open_area(drop: float) -> float:
        return min(curtain_per_lift * lift_mm(drop * ports) * 1e-3, ports)

    def excess_flow(drop: float, flow: float) -> float:
        return cd * (bleed + open_area(drop)) * math.sqrt(2.0 * drop / rho) - flow

    drops = np.zeros(speeds.size)
    for index, speed in enumerate(speeds):
        flow = area * speed
        if flow == 0.0:
            continue
        # The bleed alone passes the flow at ρ/2·(Q/(Cd·A_bleed))²: Δp lies below that, and just
        # above it the flow balance is surely positive (rounding aside).
        bleed_bound = rho / 2.0 * (flow / (cd * bleed)) ** 2 * (1.0 + 1e-9) if bleed > 0.0 else math.inf
        upper = min(bleed_bound, limit_pa)
        if upper == limit_pa and excess_flow(upper, flow) <= 0.0:
            cause = (
                "no bleed and the stack does not open (hydraulic lock)"
                if bleed == 0.0
                else "the bleed and the stack cannot pass that flow"
            )
            raise CalcInputError(
                f"velocity {speed:g} m/s needs more than pressure_limit ({limit_pa / 1e5:g} bar) across "
                f"the valve: {cause}."
            )
        drops[index] = brentq(excess_flow, 0.0, upper, args=(flow,), xtol=1e-6, rtol=1e-12, maxiter=200)

    lifts = np.array([stack._lift_mm(drop * ports) for drop in drops])
    opened = np.array([open_area(drop) for drop in drops])
    total = bleed + opened
    bleed_share = np.divide(bleed, total, out=np.ones_like(total), where=total > 0.0)
    limit = stack.small_deflection_limit.to("mm").magnitude
    beyond = lifts > limit
    warnings = []
    if beyond.any():
        first = int(np.argmax(beyond))
        warnings.append(
            f"From {speeds[first]:.3g} m/s: " + small_deflection_warning(float(lifts[first]), 2.0 * limit)
        )
    capped = opened >= ports
    if capped.any():
        warnings.append(
            f"From {speeds[int(np.argmax(capped))]:.3g} m/s the curtain under the face shim is wider than "
            "the ports: the ports set the flow, and more lift changes nothing (common practice)."
        )
    if (speeds > 0.0).any() and not (lifts > 0.0).any():
        warnings.append("The stack stays shut over this range: all the flow goes through the bleed.")
    return DampingCurve(
        velocities=Q_(speeds, "m/s"),
        forces=Q_(drops * area, "N"),
        pressures=Q_(drops / 1e5, "bar"),
        lifts=Q_(lifts, "mm"),
        bleed_share=bleed_share,
        beyond_small_deflection=beyond,
        warnings=tuple(warnings),
    )


def _check_fit(stack: ShimStack, piston: Piston) -> None:
    """The stack must fit the piston and cover its ports, with the ports outside the clamp."""
    piston_mm = piston.diameter.to("mm").magnitude
    for number, shim in enumerate(stack.shims, start=1):
        if shim.od_mm > piston_mm:
            raise CalcInputError(
                f"shims line {number}: od {shim.od_mm:g} mm is larger than the piston ({piston_mm:g} mm)."
            )
    port_radius = piston.port_radius.to("mm").magnitude
    if not stack.face_radius_mm > port_radius:
        raise CalcInputError(
            f"the face shim (od {2 * stack.face_radius_mm:g} mm) must reach past the ports' outer edge "
            f"(port_radius {port_radius:g} mm) to seal them."
        )
    clamp_radius = stack.clamp_diameter.to("mm").magnitude / 2.0
    if not port_radius > clamp_radius:
        raise CalcInputError(
            f"port_radius ({port_radius:g} mm) must be larger than the clamp radius ({clamp_radius:g} mm): "
            "ports under the clamp cannot be covered by a bending shim."
        )
