"""Annular plates clamped at the inner edge and free at the outer edge: damper shims, alone and in contact.

A shim is a thin steel washer clamped at its inner diameter (the clamp
diameter) and bent open at its outer edge. This module holds the plate
formulas and the solver for plates pressing on each other;
:mod:`shopdesk.calc.shims` builds stacks, crossovers and damping curves on
them.

Sources (all recalled from memory, as the project's reference list (REFERENCES.md) cites them):

- Roark's *Formulas for Stress and Strain*, 7th ed., Table 11.2, case 1L:
  annular plate, outer edge free, inner edge fixed, uniform line load ``w``
  on a ring of radius ``r0`` (``b < r0 <= a``). With ``r0 = a`` the
  load-ring constants L3, L6, L9 vanish and the edge deflection is
  ``y_a = K_y·w·a³/D`` with ``K_y = (a/b)(C3 − C2·C9/C8)``.
- Timoshenko & Woinowsky-Krieger, *Theory of Plates and Shells*, 2nd ed.,
  Table 3, as the independent check used in the tests.
- Plate stiffness ``D = E·t³ / (12(1 − ν²))`` (Kirchhoff plate theory).
- Plates in contact: a linear complementarity problem, solved by non-negative
  least squares (Lawson & Hanson, *Solving Least Squares Problems*, 1974, as
  scipy implements it).

Small-deflection theory holds while the deflection stays below about half the
thickness (Roark §11.11 treats large deflections); beyond that the result is
flagged, not corrected.

Lengths are in mm, forces in N, moduli in MPa (N/mm²) inside this module.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any, TypeAlias

import numpy as np
from scipy.linalg import solve_triangular
from scipy.optimize import nnls

from shopdesk.calc.errors import CalcInputError
from shopdesk.calc.units import Q_, Quantity, check_number, check_quantity

# Inputs a technician enters, with the ranges the model accepts.
THINNEST_SHIM = 0.05  # mm: the thinnest shim stock in use (common practice)
THICKEST_SHIM = 0.50  # mm: beyond this it is a washer, not a shim (common practice)
SMALLEST_CLAMP = 1.0  # mm: below this no shaft or bolt holds a stack
LARGEST_SHIM = 200.0  # mm: larger than any damper piston
# Spring steel is about 200-207 GPa (Callister, App. B: 207 GPa for carbon and low-alloy steels);
# the range also admits titanium (about 110 GPa, from memory) and leaves a margin either side.
LOWEST_MODULUS = 50.0  # GPa
HIGHEST_MODULUS = 400.0  # GPa
HIGHEST_POISSON = 0.5  # exclusive: ν = 0.5 is an incompressible solid, outside plate theory
HIGHEST_LOAD = 100_000.0  # N: far beyond any valve; a larger figure is a typing slip

STEEL_MODULUS = Q_(200.0, "GPa")  # REFERENCES.md: spring steel E ≈ 200-207 GPa
STEEL_POISSON = 0.3  # REFERENCES.md: spring steel ν ≈ 0.30

FloatOrArray: TypeAlias = "float | np.ndarray"

FORCE = "[force]"
STIFFNESS = "[mass] / [time] ** 2"  # N/mm and lbf/in have this dimension


# --- Input checks (all through shopdesk.calc.units) ---------------------------------------------


def check_thickness(value: Any, *, name: str) -> float:
    """Shim thickness in mm, 0.05–0.50 mm inclusive."""
    return check_quantity(
        value,
        name=name,
        dimension="[length]",
        unit="mm",
        minimum=THINNEST_SHIM,
        maximum=THICKEST_SHIM,
        allow_minimum=True,
    )


def check_diameter(value: Any, *, name: str, minimum: float = SMALLEST_CLAMP) -> float:
    """A shim or clamp diameter in mm, from ``minimum`` (inclusive) to 200 mm."""
    return check_quantity(
        value,
        name=name,
        dimension="[length]",
        unit="mm",
        minimum=minimum,
        maximum=LARGEST_SHIM,
        allow_minimum=True,
    )


def check_load(value: Any, *, name: str, allow_zero: bool = True) -> float:
    """A load on a shim's edge in N, 0 (or more than 0) to 100 kN."""
    return check_quantity(
        value,
        name=name,
        dimension=FORCE,
        unit="N",
        minimum=0.0,
        maximum=HIGHEST_LOAD,
        allow_minimum=allow_zero,
    )


def check_modulus(value: Any) -> float:
    """Young's modulus, returned in MPa (N/mm²); accepted 50–400 GPa."""
    gigapascal = check_quantity(
        value,
        name="youngs_modulus",
        dimension="[pressure]",
        unit="GPa",
        minimum=LOWEST_MODULUS,
        maximum=HIGHEST_MODULUS,
        allow_minimum=True,
    )
    return gigapascal * 1000.0


def check_poisson(value: Any) -> float:
    """Poisson's ratio, 0 ≤ ν < 0.5."""
    return check_number(
        value, name="poisson", minimum=0.0, maximum=HIGHEST_POISSON, allow_minimum=True, allow_maximum=False
    )


def check_clamp(clamp_mm: float, smallest_od_mm: float, *, smallest_name: str = "the smallest shim") -> None:
    """The clamp must be smaller than every shim it holds, or nothing bends."""
    if not clamp_mm < smallest_od_mm:
        raise CalcInputError(
            f"clamp_diameter must be smaller than {smallest_name} ({smallest_od_mm:g} mm), "
            f"got {clamp_mm:g} mm: a shim clamped to its edge cannot bend."
        )


def flexural_rigidity(*, modulus_mpa: float, thickness_mm: float, poisson: float) -> float:
    """Plate stiffness D = E·t³ / (12(1 − ν²)) in N·mm (Kirchhoff plate theory)."""
    return modulus_mpa * thickness_mm**3 / (12.0 * (1.0 - poisson**2))


# --- Roark Table 11.2 case 1L -------------------------------------------------------------------


def edge_deflection_constant(*, outer_radius: float, clamp_radius: float, poisson: float) -> float:
    """K_y of Roark Table 11.2 case 1L with the load ring at the outer edge (r0 = a), as a positive number.

    ``y_a = K_y·w·a³/D`` with ``w = P/(2πa)``. Roark's sign convention makes
    K_y negative (deflection against the load axis); this returns its size.
    """
    a, b, nu = outer_radius, clamp_radius, poisson
    ratio = b / a
    log_ratio = math.log(a / b)
    c2 = 0.25 * (1.0 - ratio**2 * (1.0 + 2.0 * log_ratio))
    c3 = (ratio / 4.0) * ((ratio**2 + 1.0) * log_ratio + ratio**2 - 1.0)
    c8 = 0.5 * (1.0 + nu + (1.0 - nu) * ratio**2)
    c9 = ratio * ((1.0 + nu) / 2.0 * log_ratio + (1.0 - nu) / 4.0 * (1.0 - ratio**2))
    return -(a / b) * (c3 - c2 * c9 / c8)


def ring_load_influence(
    *,
    radius: FloatOrArray,
    load_radius: FloatOrArray,
    outer_radius: FloatOrArray,
    clamp_radius: float,
    poisson: float,
) -> FloatOrArray:
    """Deflection × D per unit ring load (mm³, so y = value · P / D), Roark Table 11.2 case 1L, general r0.

    Deflection at ``radius`` of an annular plate clamped at ``clamp_radius``
    and free at ``outer_radius`` under a total load P spread on a ring of
    ``load_radius`` (line load w = P/(2π·r0)), all in mm with
    b < r ≤ a and b < r0 ≤ a. Roark's case 1 expresses the deflection
    anywhere through the inner-edge values (y_b = θ_b = 0 for a fixed inner
    edge) and the functions F2, F3, G3:

        M_rb = −(w·a/C8)·(r0·C9/b − L9),  Q_b = w·r0/b,
        y(r) = M_rb·r²·F2/D + Q_b·r³·F3/D − w·r³·G3/D,

    with F2, F3 the C2, C3 of the edge written at r, G3 the L3 of the load ring
    written at r (zero inside the ring), and
    L9 = (r0/a){(1+ν)/2·ln(a/r0) + (1−ν)/4·[1 − (r0/a)²]}.
    The result is symmetric in ``radius`` and ``load_radius`` (Maxwell's
    reciprocal theorem); the tests check that, the r0 = a limit against
    :func:`edge_deflection_constant`, and a numerical solution of the plate
    equation. Returned positive in the direction of the load. Takes floats
    or numpy arrays of one shape (the stack solver builds its matrix at once).
    """
    a, b, nu = np.asarray(outer_radius, dtype=float), clamp_radius, poisson
    r, r0 = np.asarray(radius, dtype=float), np.asarray(load_radius, dtype=float)
    line_load = 1.0 / (2.0 * np.pi * r0)
    ratio = b / a
    log_ratio = np.log(a / b)
    c8 = 0.5 * (1.0 + nu + (1.0 - nu) * ratio**2)
    c9 = ratio * ((1.0 + nu) / 2.0 * log_ratio + (1.0 - nu) / 4.0 * (1.0 - ratio**2))
    load_ratio = r0 / a
    l9 = load_ratio * ((1.0 + nu) / 2.0 * np.log(a / r0) + (1.0 - nu) / 4.0 * (1.0 - load_ratio**2))
    clamp_moment = -(line_load * a / c8) * (r0 * c9 / b - l9)
    clamp_shear = line_load * r0 / b
    inner = b / r
    log_inner = np.log(r / b)
    f2 = 0.25 * (1.0 - inner**2 * (1.0 + 2.0 * log_inner))
    f3 = (inner / 4.0) * ((inner**2 + 1.0) * log_inner + inner**2 - 1.0)
    ring = r0 / r
    # G3 = L3 written at r, for r past the load ring only (Roark's <r − r0>⁰).
    g3 = np.where(r > r0, (ring / 4.0) * ((ring**2 + 1.0) * np.log(r / r0) + ring**2 - 1.0), 0.0)
    roark_y = clamp_moment * r**2 * f2 + clamp_shear * r**3 * f3 - line_load * r**3 * g3
    result = -roark_y
    if result.ndim == 0:
        return float(result)
    return result


# --- One shim -----------------------------------------------------------------------------------


@dataclass(frozen=True)
class ShimStiffness:
    """The stiffness of one shim at its outer edge, and whether a load stays in small-deflection theory.

    ``stiffness`` in N/mm. ``deflection`` (mm) is the edge deflection under the
    ``load`` given to :func:`shim_stiffness`, or None without a load.
    ``beyond_small_deflection`` is True when that deflection passes half the
    thickness (Roark §11.11); ``warning`` then says so in words, else it is "".
    """

    stiffness: Quantity
    deflection: Quantity | None
    beyond_small_deflection: bool
    warning: str


def shim_stiffness(
    *,
    od: Quantity,
    thickness: Quantity,
    clamp_diameter: Quantity,
    youngs_modulus: Quantity = STEEL_MODULUS,
    poisson: float = STEEL_POISSON,
    load: Quantity | None = None,
) -> ShimStiffness:
    """Stiffness (N/mm) at the outer edge of one shim under a line load on that edge.

    Annular plate clamped at ``clamp_diameter``, free at ``od``: Roark's
    *Formulas for Stress and Strain*, 7th ed., Table 11.2 case 1L with r0 = a
    (from memory): k = P / y_a = 2π·D / (K_y·a²), D = E·t³/(12(1 − ν²)).
    Equivalent to Timoshenko & Woinowsky-Krieger Table 3, y = k1·P·a²/(E·t³),
    with k1 = 6(1 − ν²)·K_y/π.

    ``od`` and ``clamp_diameter`` are lengths (1–200 mm, clamp smaller than
    the shim), ``thickness`` 0.05–0.50 mm, ``youngs_modulus`` 50–400 GPa
    (steel 200 GPa), ``poisson`` 0 ≤ ν < 0.5 (steel 0.3), ``load`` an
    optional force ≥ 0 (at most 100 kN) used only to flag deflections beyond
    half the thickness.
    """
    od_mm = check_diameter(od, name="od")
    thickness_mm = check_thickness(thickness, name="thickness")
    clamp_mm = check_diameter(clamp_diameter, name="clamp_diameter")
    check_clamp(clamp_mm, od_mm, smallest_name="the shim's od")
    modulus = check_modulus(youngs_modulus)
    nu = check_poisson(poisson)
    load_n = None
    if load is not None:
        load_n = check_load(load, name="load")
    rigidity = flexural_rigidity(modulus_mpa=modulus, thickness_mm=thickness_mm, poisson=nu)
    outer = od_mm / 2.0
    constant = edge_deflection_constant(outer_radius=outer, clamp_radius=clamp_mm / 2.0, poisson=nu)
    stiffness = 2.0 * math.pi * rigidity / (constant * outer**2)
    if load_n is None:
        return ShimStiffness(Q_(stiffness, "N/mm"), None, False, "")
    deflection = load_n / stiffness
    beyond = deflection > thickness_mm / 2.0
    warning = small_deflection_warning(deflection, thickness_mm) if beyond else ""
    return ShimStiffness(Q_(stiffness, "N/mm"), Q_(deflection, "mm"), beyond, warning)


def small_deflection_warning(deflection_mm: float, thickness_mm: float) -> str:
    """The words shown when a deflection passes half a shim's thickness."""
    return (
        f"Deflection {deflection_mm:.3g} mm is more than half the shim thickness ({thickness_mm:g} mm): "
        "outside small-deflection plate theory (Roark §11.11); the real shim is stiffer than this figure."
    )


# --- Plates in contact: the stack solver --------------------------------------------------------

MOST_STAGES = 12  # with 10 per contact: the changes of contact followed before giving up


@dataclass(frozen=True)
class Plate:
    """Shims of one size next to each other, as one plate (their D added: common practice)."""

    radius: float  # mm
    rigidity: float  # N·mm, summed over the shims of one size
    thinnest: float  # mm
    label: str


@dataclass(frozen=True)
class Contact:
    """A ring where plate ``front`` may press on plate ``back``, across ``gap`` (mm)."""

    front: int  # plate nearer the piston, which pushes
    back: int
    radius: float  # mm
    gap: float  # mm; 0 for shims that touch at rest
    label: str


@dataclass(frozen=True)
class Segment:
    """One linear piece of the stack's lift against load on the face shim's edge."""

    start_load: float  # N above preload
    start_lift: float  # mm
    stiffness: float  # N/mm
    description: str


def contacts_between(
    front: int, back: int, plates: list[Plate], edges: list[float], *, inner: float, gap: float, label: str
) -> list[Contact]:
    """Where two neighbouring plates may touch: at the edge of the shorter one, and at the edge of any
    other shim of the stack that lies inside both (where a plate is held back and may be pressed on).
    ``inner``: radii at or inside it are taken by a shim between the two (the crossover ring)."""
    outer = min(plates[front].radius, plates[back].radius)
    radii = [radius for radius in edges if inner < radius < outer * (1.0 - 1e-9)]
    # Two contact rings closer than this cannot be told apart and make the system ill-conditioned.
    merged: list[float] = []
    for radius in [*radii, outer]:
        if merged and radius - merged[-1] < 1e-6 * outer:
            merged[-1] = radius
        else:
            merged.append(radius)
    return [Contact(front, back, radius, gap, label) for radius in merged]


def solve_stages(
    plates: list[Plate], contacts: list[Contact], *, clamp_radius: float, poisson: float
) -> tuple[tuple[Segment, ...], float | None]:
    """Follow the stack from zero load, stage by stage, as contacts open and gaps close.

    Unknowns are the contact forces F (N, ≥ 0). ``rel[k]`` is how far the front
    plate of contact k has moved towards the back plate at the contact radius;
    a contact keeps rel ≤ gap (no plate passes through the next) and carries
    force only where rel = gap. That is a linear complementarity problem with a
    symmetric positive definite compliance (Maxwell's reciprocal theorem),
    solved at each change of contact as a non-negative least-squares problem
    (Lawson & Hanson's NNLS, scipy); between changes everything is linear in
    the load. Deflections come from the ring-load influence of Roark Table 11.2
    case 1L (see :func:`ring_load_influence`).
    """
    face_radius = plates[0].radius
    count = len(contacts)
    plate_radius = np.array([plate.radius for plate in plates])
    rigidity = np.array([plate.rigidity for plate in plates])
    front = np.array([contact.front for contact in contacts], dtype=int)
    back = np.array([contact.back for contact in contacts], dtype=int)
    radius = np.array([contact.radius for contact in contacts], dtype=float)
    gaps = np.array([contact.gap for contact in contacts], dtype=float)

    def flexibility(plate: np.ndarray, at: np.ndarray, load_at: np.ndarray) -> np.ndarray:  # mm/N
        outer = plate_radius[plate]
        # Where a plate carries no such load the value is masked out below; keep the arguments in range.
        shape = ring_load_influence(
            radius=np.minimum(at, outer),
            load_radius=np.minimum(load_at, outer),
            outer_radius=outer,
            clamp_radius=clamp_radius,
            poisson=poisson,
        )
        return np.asarray(shape) / rigidity[plate]

    # influence[k, l]: change of rel[k] per newton of F[l]. A contact force pushes its back plate
    # outward (+) and its front plate back (−).
    rows, columns = np.meshgrid(np.arange(count), np.arange(count), indexing="ij")
    on_front = flexibility(front[rows], radius[rows], radius[columns])
    on_back = flexibility(back[rows], radius[rows], radius[columns])
    influence = (
        (front[rows] == back[columns]) * on_front
        - (front[rows] == front[columns]) * on_front
        - (back[rows] == back[columns]) * on_back
        + (back[rows] == front[columns]) * on_back
    )
    compliance = -influence  # symmetric, positive definite
    face = np.zeros(count, dtype=int)
    from_load = np.where(front == 0, flexibility(face, radius, np.full(count, face_radius)), 0.0)
    lift_per_force = np.where(front == 0, -flexibility(face, np.full(count, face_radius), radius), 0.0)
    lift_per_load = float(
        flexibility(np.zeros(1, dtype=int), np.array([face_radius]), np.array([face_radius]))[0]
    )

    def increment(carrying: np.ndarray, touching: np.ndarray) -> np.ndarray:
        """Contact force per newton of load: ``carrying`` contacts stay shut (any sign of change),
        ``touching`` ones (shut, no force) may take load or open, whichever keeps rel ≤ gap."""
        d_force = np.zeros(count)
        fixed, free = np.flatnonzero(carrying), np.flatnonzero(touching)
        try:
            if fixed.size:
                base = np.linalg.solve(compliance[np.ix_(fixed, fixed)], from_load[fixed])
                coupling = np.linalg.solve(compliance[np.ix_(fixed, fixed)], compliance[np.ix_(fixed, free)])
            else:
                base = np.zeros(0)
                coupling = np.zeros((0, free.size))
            if free.size:
                schur = compliance[np.ix_(free, free)] - compliance[np.ix_(free, fixed)] @ coupling
                target = from_load[free] - compliance[np.ix_(free, fixed)] @ base
                # min ½zᵀSz − zᵀc over z ≥ 0, as NNLS on the Cholesky factor S = LLᵀ.
                factor = np.linalg.cholesky(0.5 * (schur + schur.T))
                pushed, _ = nnls(
                    factor.T, solve_triangular(factor, target, lower=True), maxiter=50 * free.size
                )
                d_force[free] = pushed
                base = base - coupling @ pushed
            d_force[fixed] = base
        except np.linalg.LinAlgError:
            raise CalcInputError(
                "This stack is a case the shim model cannot represent (its contact problem is singular)."
            ) from None
        return d_force

    forces = np.zeros(count)
    rel = np.zeros(count)
    load = lift = 0.0
    segments: list[Segment] = []
    gap_closing: float | None = None
    carrying = np.zeros(count, dtype=bool)
    touching = gaps == 0.0
    # Past a lift as large as the face shim's free width (outer radius − clamp radius) plate theory
    # means nothing: stop following contacts there and let the last stage run on.
    furthest_lift = face_radius - clamp_radius
    for _ in range(MOST_STAGES + 10 * count):
        d_force = increment(carrying, touching)
        carrying = carrying | (touching & (d_force > 0.0))
        d_rel = from_load + influence @ d_force
        d_lift = lift_per_load + float(lift_per_force @ d_force)
        if not (math.isfinite(d_lift) and d_lift > 0.0):
            raise CalcInputError(
                "This stack is a case the shim model cannot represent (no finite stiffness)."
            )
        if segments and segments[-1].start_load == load:
            segments.pop()  # two changes at one load: keep the later stage only
        segments.append(Segment(load, lift, 1.0 / d_lift, describe_contacts(contacts, carrying)))
        steps = []
        for k in range(count):
            if carrying[k] and d_force[k] < 0.0:
                steps.append((forces[k] / -d_force[k], k))
            elif not carrying[k] and d_rel[k] > 1e-9 * d_lift:
                steps.append((max(gaps[k] - rel[k], 0.0) / d_rel[k], k))
        if not steps:
            return tuple(segments), gap_closing
        step, changed = min(steps)
        if lift + d_lift * step > furthest_lift:
            return tuple(segments), gap_closing
        load += step
        lift += d_lift * step
        forces += d_force * step
        rel += d_rel * step
        # Contacts shut at this load, with or without force, are re-decided by the next increment.
        shut = carrying | (np.abs(gaps - rel) <= 1e-9 * max(lift, 1e-9))
        shut[changed] = True
        rel[shut] = gaps[shut]
        forces[~carrying] = 0.0
        carrying = shut & (forces > 1e-12 * max(load, 1.0))
        touching = shut & ~carrying
        if gaps[changed] > 0.0 and gap_closing is None:
            gap_closing = load
    raise CalcInputError(
        f"This stack changes contact more than {MOST_STAGES + 10 * count} times as it opens: "
        "a case the shim model cannot represent."
    )


def describe_contacts(contacts: list[Contact], carrying: np.ndarray) -> str:
    """Which pairs of shims press on each other, in words (a pair may touch at several radii)."""
    pairs: dict[str, bool] = {}
    for contact, pressed in zip(contacts, carrying, strict=True):
        pairs[contact.label] = pairs.get(contact.label, False) or bool(pressed)
    words = []
    for label, pressed in pairs.items():
        if label == "crossover gap":
            words.append("crossover gap closed" if pressed else "crossover gap open")
        elif not pressed:
            words.append(label.replace(" on ", " lifted off "))
    return "; ".join(words) if words else "all shims in contact"
