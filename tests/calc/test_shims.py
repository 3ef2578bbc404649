"""Shims and stacks: Roark Table 11.2 case 1L, plates in contact, crossovers, preload, comparison.

The checks stand on three legs: the published table of Timoshenko & Woinowsky-Krieger
(Table 3, as REFERENCES.md gives it), a numerical solution of the plate equation built
here with scipy (independent of the library's closed form), and exact scalings of plate
theory. Rules of thumb are marked common practice.
"""

from __future__ import annotations

import itertools
import math

import numpy as np
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st
from scipy.integrate import solve_ivp
from scipy.optimize import brentq

from shopdesk.calc.errors import CalcInputError
from shopdesk.calc.plates import ring_load_influence
from shopdesk.calc.shims import (
    Crossover,
    Shim,
    ShimStack,
    compare,
    shim_stiffness,
    stack_stiffness,
)
from shopdesk.calc.units import Q_

pytestmark = pytest.mark.filterwarnings("error")

QUICK = settings(max_examples=40, deadline=None)
E_STEEL = 200_000.0  # N/mm², the library's default (REFERENCES.md: spring steel 200-207 GPa)
NU_STEEL = 0.3


def mm(value: float) -> Q_:
    return Q_(value, "mm")


def newtons(value: float) -> Q_:
    return Q_(value, "N")


def shim(od: float, thickness: float, count: int = 1) -> Shim:
    return Shim(mm(od), mm(thickness), count)


def rigidity(thickness: float, modulus: float = E_STEEL, poisson: float = NU_STEEL) -> float:
    return modulus * thickness**3 / (12.0 * (1.0 - poisson**2))


def k_n_per_mm(quantity) -> float:
    return quantity.to("N/mm").magnitude


# --- An independent numerical plate: shooting on the axisymmetric plate equation ---------------


def numerical_deflection(*, outer, clamp, plate_rigidity, poisson, loads, at):
    """Deflections (mm) at radii ``at`` of an annular plate clamped at ``clamp`` and free at ``outer``.

    ``loads``: (radius, force N) ring loads, positive away from the piston. The slope φ = w'
    obeys φ'' + φ'/r − φ/r² = −V(r)/(2πD·r), V(r) the load outside radius r (the plate's
    shear); w(b) = φ(b) = 0 and M_r(a) ∝ φ'(a) + ν·φ(a)/a = 0 close the problem. Linear,
    so two shots from the clamp (φ'(b) = 0 and 1) combine to meet the free edge. No use of
    Roark's constants: an independent check of the library.
    """
    stops = sorted({clamp, outer, *[radius for radius, _ in loads], *at})

    def piece(r, state, outside):
        _, phi, dphi = state
        return [phi, dphi, -dphi / r + phi / r**2 - outside / (2.0 * math.pi * plate_rigidity * r)]

    def shoot(start_curvature):
        state = np.array([0.0, 0.0, start_curvature])
        values = {}
        for low, high in itertools.pairwise(stops):
            # The shear is constant between stops: the load outside this piece.
            outside = sum(force for radius, force in loads if radius >= high)
            solution = solve_ivp(piece, (low, high), state, args=(outside,), rtol=1e-11, atol=1e-15)
            state = solution.y[:, -1]
            values[high] = state.copy()
        return values

    zero, one = shoot(0.0), shoot(1.0)
    moment = lambda values: values[outer][2] + poisson * values[outer][1] / outer  # noqa: E731
    curvature = -moment(zero) / (moment(one) - moment(zero))
    return [zero[r][0] + curvature * (one[r][0] - zero[r][0]) for r in at]


def numerical_influence(*, outer, clamp, thickness, at, load_at, poisson=NU_STEEL):
    """Deflection (mm) at ``at`` per newton on a ring at ``load_at``, numerically."""
    return numerical_deflection(
        outer=outer,
        clamp=clamp,
        plate_rigidity=rigidity(thickness, poisson=poisson),
        poisson=poisson,
        loads=[(load_at, 1.0)],
        at=[at],
    )[0]


# --- One shim ------------------------------------------------------------------------------------


# Timoshenko & Woinowsky-Krieger, Theory of Plates and Shells, 2nd ed., Table 3 (as REFERENCES.md
# reproduces it): y_max = k1·P·a²/(E·t³), ν = 0.3. The table has 3 significant figures and its
# a/b = 4 entry (0.293) sits 0.26 % under the closed form (0.29376): tolerance 0.5 %.
TIMOSHENKO_K1 = [(1.25, 0.00510), (1.5, 0.0249), (2.0, 0.0877), (3.0, 0.209), (4.0, 0.293), (5.0, 0.350)]


@pytest.mark.parametrize(("a_over_b", "k1"), TIMOSHENKO_K1)
def test_one_shim_matches_the_timoshenko_table(a_over_b, k1):
    clamp, thickness = 8.0, 0.15
    outer = a_over_b * clamp / 2.0
    result = shim_stiffness(od=mm(2 * outer), thickness=mm(thickness), clamp_diameter=mm(clamp))
    # y = P/k, so k1 = E·t³ / (k·a²).
    model_k1 = E_STEEL * thickness**3 / (k_n_per_mm(result.stiffness) * outer**2)
    assert model_k1 == pytest.approx(k1, rel=5e-3)


@pytest.mark.parametrize(
    ("od", "clamp", "thickness", "poisson"),
    [
        (17.0, 8.0, 0.10, 0.30),
        (24.0, 10.0, 0.20, 0.30),
        (30.0, 6.0, 0.05, 0.27),
        (12.0, 11.0, 0.50, 0.33),
    ],
)
def test_one_shim_matches_a_numerical_solution_of_the_plate_equation(od, clamp, thickness, poisson):
    result = shim_stiffness(od=mm(od), thickness=mm(thickness), clamp_diameter=mm(clamp), poisson=poisson)
    deflection = numerical_influence(
        outer=od / 2, clamp=clamp / 2, thickness=thickness, at=od / 2, load_at=od / 2, poisson=poisson
    )
    # Shooting at rtol 1e-11 agrees with the closed form to far better than 1e-6.
    assert 1.0 / k_n_per_mm(result.stiffness) == pytest.approx(deflection, rel=1e-6)


def test_stiffness_grows_with_the_cube_of_thickness_and_with_modulus():
    # Plate theory: D = E·t³/(12(1 − ν²)), so k ∝ t³ and ∝ E (REFERENCES.md).
    base = k_n_per_mm(shim_stiffness(od=mm(20), thickness=mm(0.1), clamp_diameter=mm(10)).stiffness)
    doubled = k_n_per_mm(shim_stiffness(od=mm(20), thickness=mm(0.2), clamp_diameter=mm(10)).stiffness)
    titanium = k_n_per_mm(
        shim_stiffness(
            od=mm(20), thickness=mm(0.1), clamp_diameter=mm(10), youngs_modulus=Q_(110, "GPa")
        ).stiffness
    )
    assert doubled / base == pytest.approx(8.0, rel=1e-12)
    assert titanium / base == pytest.approx(110.0 / 200.0, rel=1e-12)


def test_a_known_shim_has_its_stiffness_by_hand():
    # 17 × 0.10 mm on an 8 mm clamp, E = 200 GPa, ν = 0.3: a/b = 2.125. The formula of REFERENCES.md
    # (Roark 11.2 case 1L, from memory), k = 2πD/(K_y·a²), written out here afresh, gives
    # C2 = 0.11117, C3 = 0.016724, C8 = 0.72751, C9 = 0.29468, |K_y| = 0.060155, D = 18.315 N·mm,
    # k = 26.478 N/mm.
    ratio = 4.0 / 8.5
    log_ratio = math.log(8.5 / 4.0)
    c2 = 0.25 * (1 - ratio**2 * (1 + 2 * log_ratio))
    c3 = ratio / 4 * ((ratio**2 + 1) * log_ratio + ratio**2 - 1)
    c8 = 0.5 * (1.3 + 0.7 * ratio**2)
    c9 = ratio * (0.65 * log_ratio + 0.175 * (1 - ratio**2))
    k_y = (1 / ratio) * (c3 - c2 * c9 / c8)
    assert k_y == pytest.approx(-0.060155, rel=1e-4)  # negative in Roark's sign convention
    expected = 2 * math.pi * rigidity(0.1) / (-k_y * 8.5**2)
    assert expected == pytest.approx(26.478, rel=1e-4)
    result = shim_stiffness(od=mm(17), thickness=mm(0.1), clamp_diameter=mm(8))
    assert k_n_per_mm(result.stiffness) == pytest.approx(expected, rel=1e-12)


def test_a_deflection_past_half_the_thickness_is_flagged():
    # Small-deflection theory holds below about half the thickness (Roark §11.11, REFERENCES.md).
    stiffness = k_n_per_mm(shim_stiffness(od=mm(17), thickness=mm(0.1), clamp_diameter=mm(8)).stiffness)
    inside = shim_stiffness(
        od=mm(17), thickness=mm(0.1), clamp_diameter=mm(8), load=newtons(0.04 * stiffness)
    )
    outside = shim_stiffness(
        od=mm(17), thickness=mm(0.1), clamp_diameter=mm(8), load=newtons(0.06 * stiffness)
    )
    assert inside.deflection.to("mm").magnitude == pytest.approx(0.04)
    assert not inside.beyond_small_deflection and inside.warning == ""
    assert outside.beyond_small_deflection and "half the shim thickness" in outside.warning


# --- The ring-load influence (Roark's case 1L with r0 < a) ----------------------------------------


@pytest.mark.parametrize(("at", "load_at"), [(5.0, 8.5), (7.0, 6.5), (8.5, 5.5), (6.0, 6.0), (4.5, 7.0)])
def test_the_ring_load_influence_matches_the_plate_equation_and_is_reciprocal(at, load_at):
    outer, clamp, thickness = 8.5, 4.0, 0.1
    closed = ring_load_influence(
        radius=at, load_radius=load_at, outer_radius=outer, clamp_radius=clamp, poisson=NU_STEEL
    ) / rigidity(thickness)
    swapped = ring_load_influence(
        radius=load_at, load_radius=at, outer_radius=outer, clamp_radius=clamp, poisson=NU_STEEL
    ) / rigidity(thickness)
    numeric = numerical_influence(outer=outer, clamp=clamp, thickness=thickness, at=at, load_at=load_at)
    assert closed == pytest.approx(numeric, rel=1e-6)
    assert closed == pytest.approx(swapped, rel=1e-12)  # Maxwell's reciprocal theorem


# --- Stacks ------------------------------------------------------------------------------------


def test_same_size_shims_add_like_springs_in_parallel():
    # Common practice (REFERENCES.md): same-size shims add, stiffness ∝ Σt³, friction ignored.
    single = k_n_per_mm(shim_stiffness(od=mm(17), thickness=mm(0.1), clamp_diameter=mm(8)).stiffness)
    thick = k_n_per_mm(shim_stiffness(od=mm(17), thickness=mm(0.15), clamp_diameter=mm(8)).stiffness)
    by_count = k_n_per_mm(stack_stiffness(ShimStack([shim(17, 0.1, 3)], mm(8))))
    by_lines = k_n_per_mm(stack_stiffness(ShimStack([shim(17, 0.1), shim(17, 0.15), shim(17, 0.1)], mm(8))))
    assert by_count == pytest.approx(3 * single, rel=1e-12)
    assert by_lines == pytest.approx(2 * single + thick, rel=1e-12)


def test_one_thick_shim_equals_eight_of_half_its_thickness():
    # DOMAIN.md: one 0.20 mm shim is about as stiff as eight 0.10 mm shims (0.2³ = 8 × 0.1³).
    one = k_n_per_mm(stack_stiffness(ShimStack([shim(20, 0.2)], mm(10))))
    eight = k_n_per_mm(stack_stiffness(ShimStack([shim(20, 0.1, 8)], mm(10))))
    assert one == pytest.approx(eight, rel=1e-12)


@pytest.mark.parametrize(
    ("face", "back", "clamp"),
    [
        ((20.0, 0.10), (16.0, 0.15), 8.0),
        ((17.0, 0.10), (16.0, 0.10), 8.0),
        ((24.0, 0.15), (12.0, 0.30), 10.0),
        ((16.0, 0.10), (20.0, 0.10), 8.0),  # a larger shim behind: the face shim's edge bears on it
    ],
)
def test_a_two_shim_taper_matches_two_numerical_plates_in_contact(face, back, clamp):
    (face_od, face_t), (back_od, back_t) = face, back
    a1, a2, b = face_od / 2, back_od / 2, clamp / 2
    contact = min(a1, a2)
    load = 1.0

    def gap_at_contact(force):
        front = numerical_deflection(
            outer=a1,
            clamp=b,
            plate_rigidity=rigidity(face_t),
            poisson=NU_STEEL,
            loads=[(a1, load), (contact, -force)],
            at=[contact],
        )[0]
        behind = numerical_deflection(
            outer=a2,
            clamp=b,
            plate_rigidity=rigidity(back_t),
            poisson=NU_STEEL,
            loads=[(contact, force)],
            at=[contact],
        )[0]
        return front - behind

    force = brentq(gap_at_contact, 0.0, 10.0 * load, xtol=1e-14)
    edge = numerical_deflection(
        outer=a1,
        clamp=b,
        plate_rigidity=rigidity(face_t),
        poisson=NU_STEEL,
        loads=[(a1, load), (contact, -force)],
        at=[a1],
    )[0]
    stack = ShimStack([shim(face_od, face_t), shim(back_od, back_t)], mm(clamp))
    assert k_n_per_mm(stack_stiffness(stack)) == pytest.approx(load / edge, rel=1e-6)
    assert force > 0.0  # the back shim is pressed, not pulled


def test_a_taper_is_stiffer_than_its_face_shim_and_softer_than_all_shims_at_the_face_diameter():
    # Plates in contact: the back shims help, but less than if they reached the face shim's edge.
    taper = ShimStack([shim(od, 0.1) for od in (20, 18, 16, 14, 12)], mm(8))
    face_alone = ShimStack([shim(20, 0.1)], mm(8))
    all_at_face = ShimStack([shim(20, 0.1, 5)], mm(8))
    k = k_n_per_mm(stack_stiffness(taper))
    assert k_n_per_mm(stack_stiffness(face_alone)) < k < k_n_per_mm(stack_stiffness(all_at_face))


tapered_stack = st.lists(
    st.tuples(st.floats(13.0, 30.0), st.sampled_from([0.05, 0.08, 0.1, 0.15, 0.2, 0.3, 0.5])),
    min_size=1,
    max_size=6,
).map(lambda lines: sorted(lines, key=lambda line: -line[0]))


@QUICK
@given(lines=tapered_stack, small=st.floats(4.0, 8.0), large=st.floats(4.0, 12.5))
def test_a_smaller_clamp_is_always_softer(lines, small, large):
    # DOMAIN.md: a smaller clamp diameter makes a softer stack.
    assume(small < large - 0.01)
    shims = [shim(od, t) for od, t in lines]
    softer = k_n_per_mm(stack_stiffness(ShimStack(shims, mm(small))))
    stiffer = k_n_per_mm(stack_stiffness(ShimStack(shims, mm(large))))
    assert softer < stiffer


@QUICK
@given(
    lines=tapered_stack,
    added=st.tuples(st.floats(13.0, 30.0), st.sampled_from([0.05, 0.1, 0.2, 0.5])),
    where=st.integers(1, 6),
)
def test_adding_a_shim_behind_the_face_shim_is_never_softer(lines, added, where):
    # More steel in contact can only add stiffness (minimum energy: the new stack's admissible
    # shapes are a subset of the old one's). Anywhere behind the face shim, any size that the
    # model accepts (not a second crossover).
    shims = [shim(od, t) for od, t in lines]
    where = min(where, len(shims))
    new = [*shims[:where], shim(*added), *shims[where:]]
    try:
        more = ShimStack(new, mm(10))
    except CalcInputError:
        assume(False)
    before = k_n_per_mm(stack_stiffness(ShimStack(shims, mm(10))))
    assert k_n_per_mm(stack_stiffness(more)) >= before * (1.0 - 1e-9)


def test_a_shim_smaller_than_both_its_neighbours_must_be_the_crossover():
    with pytest.raises(CalcInputError, match="crossover"):
        ShimStack([shim(20, 0.1), shim(12, 0.1), shim(18, 0.1)], mm(8))


# --- Crossover ---------------------------------------------------------------------------------


def crossover_stack(**extra) -> ShimStack:
    return ShimStack(
        [shim(20, 0.1), shim(18, 0.2)],
        mm(8),
        crossover=Crossover(mm(12), mm(0.1)),
        crossover_position=1,
        **extra,
    )


def test_a_crossover_gives_two_slopes():
    stack = crossover_stack()
    stages = stack.stages()
    closing = stack.gap_closing_load().to("N").magnitude
    soft, stiff = k_n_per_mm(stages[0].stiffness), k_n_per_mm(stages[1].stiffness)
    assert stages[1].start_load.to("N").magnitude == pytest.approx(closing)
    assert stiff > 2.0 * soft  # DOMAIN.md: soft until the face shims touch the rest, then stiff
    # Lift follows the first slope up to the closing load, then the second; it is continuous.
    half = stack.lift(newtons(closing / 2)).to("mm").magnitude
    at_close = stack.lift(newtons(closing)).to("mm").magnitude
    past = stack.lift(newtons(closing + 5.0)).to("mm").magnitude
    assert half == pytest.approx(closing / 2 / soft, rel=1e-12)
    assert at_close == pytest.approx(closing / soft, rel=1e-12)
    assert past == pytest.approx(at_close + 5.0 / stiff, rel=1e-12)


def test_the_crossover_stages_match_numerical_plates_in_contact():
    # Face 20 × 0.10, ring 12 × 0.10, rest 18 × 0.20 on an 8 mm clamp. Stage 1: the face shim
    # bears on the ring at 6 mm, the ring on the rest at 6 mm. The gap (0.10 mm) closes at the
    # rest shim's edge, 9 mm. Stage 2 adds that contact. Flexibilities by shooting (above).
    face_a, ring_a, rest_a, b, gap = 10.0, 6.0, 9.0, 4.0, 0.1

    def g(outer, thickness, at, load_at):
        return numerical_influence(outer=outer, clamp=b, thickness=thickness, at=at, load_at=load_at)

    radii = (ring_a, rest_a, face_a)
    f = {(at, on): g(face_a, 0.1, at, on) for at in radii for on in radii}  # the face shim
    ring = g(ring_a, 0.1, ring_a, ring_a)
    r = {(at, on): g(rest_a, 0.2, at, on) for at in radii[:2] for on in radii[:2]}  # the rest
    # Stage 1, unit load: unknowns f1 (face on ring), f2 (ring on rest).
    matrix = np.array([[f[ring_a, ring_a] + ring, -ring], [-ring, ring + r[ring_a, ring_a]]])
    f1, f2 = np.linalg.solve(matrix, [f[ring_a, face_a], 0.0])
    soft = 1.0 / (f[face_a, face_a] - f1 * f[face_a, ring_a])
    closing_per_newton = (f[rest_a, face_a] - f1 * f[rest_a, ring_a]) - f2 * r[rest_a, ring_a]
    closing = gap / closing_per_newton
    # The model's assumption, checked here: the gap is narrowest at the rest shim's edge (9 mm),
    # not somewhere between the ring (6 mm) and that edge.
    between = [
        g(face_a, 0.1, at, face_a) - f1 * g(face_a, 0.1, at, ring_a) - f2 * g(rest_a, 0.2, at, ring_a)
        for at in (6.5, 7.5, 8.5)
    ]
    assert max(between) < closing_per_newton
    # Stage 2: f3 (face on rest at 9 mm) joins; increments per newton, deflections agree at 6 and 9 mm.
    matrix = np.array(
        [
            [f[ring_a, ring_a] + ring, -ring, f[ring_a, rest_a]],
            [-ring, ring + r[ring_a, ring_a], r[ring_a, rest_a]],
            [f[rest_a, ring_a], r[rest_a, ring_a], f[rest_a, rest_a] + r[rest_a, rest_a]],
        ]
    )
    d1, _, d3 = np.linalg.solve(matrix, [f[ring_a, face_a], 0.0, f[rest_a, face_a]])
    stiff = 1.0 / (f[face_a, face_a] - d1 * f[face_a, ring_a] - d3 * f[face_a, rest_a])

    stack = crossover_stack()
    stages = stack.stages()
    assert k_n_per_mm(stages[0].stiffness) == pytest.approx(soft, rel=1e-6)
    assert stack.gap_closing_load().to("N").magnitude == pytest.approx(closing, rel=1e-6)
    assert k_n_per_mm(stages[1].stiffness) == pytest.approx(stiff, rel=1e-6)


def test_a_crossover_over_a_taper_lifts_continuously_and_ends_stiffer():
    # The face shim wraps onto the tapered rest ring by ring: several short stages, one lift curve.
    stack = ShimStack(
        [shim(20, 0.1, 2), shim(18, 0.1), shim(16, 0.15), shim(14, 0.15)],
        mm(8),
        crossover=Crossover(mm(12), mm(0.1)),
        crossover_position=1,
    )
    stages = stack.stages()
    assert len(stages) >= 2
    for earlier, later in itertools.pairwise(stages):
        assert later.start_load > earlier.start_load
        step = (later.start_load - earlier.start_load) / earlier.stiffness
        assert later.start_lift.to("mm").magnitude == pytest.approx(
            (earlier.start_lift + step).to("mm").magnitude
        )
    closing = stack.gap_closing_load()
    assert stages[1].start_load == closing
    assert stack.stiffness_at(3 * closing) > 1.5 * stages[0].stiffness
    assert k_n_per_mm(stack.stiffness_at(closing / 2)) == pytest.approx(k_n_per_mm(stages[0].stiffness))


def test_preload_shifts_the_lift_by_the_preload():
    # DOMAIN.md: preload sets how much is needed before the stack lifts at all.
    free, loaded = crossover_stack(), crossover_stack(preload=newtons(15.0))
    assert loaded.lift(newtons(15.0)).magnitude == 0.0
    assert loaded.lift(newtons(3.0)).magnitude == 0.0
    for load in (16.0, 25.0, 60.0):
        assert loaded.lift(newtons(load)).to("mm").magnitude == pytest.approx(
            free.lift(newtons(load - 15.0)).to("mm").magnitude, rel=1e-12
        )
    assert loaded.gap_closing_load().magnitude == pytest.approx(free.gap_closing_load().magnitude + 15.0)


def test_a_floating_stack_has_the_spring_rate_alone():
    # DOMAIN.md: a floating stack gets all its stiffness from its spring; changing shims changes little.
    thin = ShimStack([shim(20, 0.1)], mm(8), floating_spring_rate=Q_(35.0, "N/mm"))
    thick = ShimStack([shim(20, 0.3, 4), shim(16, 0.2)], mm(8), floating_spring_rate=Q_(35.0, "N/mm"))
    assert k_n_per_mm(stack_stiffness(thin)) == pytest.approx(35.0)
    assert k_n_per_mm(stack_stiffness(thick)) == pytest.approx(35.0)
    assert thick.lift(newtons(70.0)).to("mm").magnitude == pytest.approx(2.0)
    in_lbf = ShimStack([shim(20, 0.1)], mm(8), floating_spring_rate=Q_(100.0, "lbf/in"))
    # 1 lbf/in = 4.4482216152605 N / 25.4 mm (NIST SP 811 Appendix B).
    assert k_n_per_mm(stack_stiffness(in_lbf)) == pytest.approx(100 * 4.4482216152605 / 25.4, rel=1e-9)


# --- Before and after ----------------------------------------------------------------------------


def test_compare_says_stiffer_softer_and_about_the_same():
    three, four = ShimStack([shim(17, 0.1, 3)], mm(8)), ShimStack([shim(17, 0.1, 4)], mm(8))
    stiffer = compare(three, four, reference_load=newtons(30.0))
    # Same-size shims add (common practice): four against three is 4/3.
    assert stiffer.initial_stiffness_ratio == pytest.approx(4 / 3, rel=1e-12)
    assert stiffer.lift_ratio == pytest.approx(3 / 4, rel=1e-12)
    assert "about 33 % stiffer" in stiffer.lines[0]
    assert "about 25 % less" in " ".join(stiffer.lines)
    softer = compare(four, three, reference_load=newtons(30.0))
    assert "about 25 % softer" in softer.lines[0]
    same = compare(three, ShimStack([shim(17, 0.1, 3)], mm(8.01)), reference_load=newtons(30.0))
    assert "about the same (within 5 %)" in same.lines[0]
    doubled = compare(three, ShimStack([shim(17, 0.1, 7)], mm(8)), reference_load=newtons(30.0))
    assert "about 2.3 times as stiff" in doubled.lines[0]


def test_compare_reports_preload_and_the_crossover():
    before = crossover_stack(preload=newtons(10.0))
    after = crossover_stack(preload=newtons(13.5))
    result = compare(before, after, reference_load=newtons(12.0))
    assert result.preload_ratio == pytest.approx(1.35)
    text = " ".join(result.lines)
    assert "Preload: about 35 % more" in text
    assert "shut after" in text  # 12 N lifts the stack before (10 N preload), not after (13.5 N)
    assert "Crossover closes" in text


# --- Bad input --------------------------------------------------------------------------------


def bad_values(good_unit: str, low: float, high: float):
    """Values that are not an acceptable quantity in ``good_unit`` from ``low`` to ``high``
    (below ``low``, above ``high``, NaN, infinite, bare numbers, other units)."""
    return st.one_of(
        st.floats(allow_nan=True, allow_infinity=True),  # a bare number
        st.just(None),
        st.text(max_size=5),
        st.floats(0.1, 10.0).map(lambda x: Q_(x, "kg")),  # the wrong kind of unit
        st.sampled_from([math.nan, math.inf, -math.inf]).map(lambda x: Q_(x, good_unit)),
        st.floats(-1e6, low, exclude_max=True).map(lambda x: Q_(x, good_unit)),
        st.floats(high, 1e9, exclude_min=True).map(lambda x: Q_(x, good_unit)),
    )


GOOD_SHIM = {"od": mm(17), "thickness": mm(0.1), "clamp_diameter": mm(8)}


@QUICK
@given(
    field=st.sampled_from(["od", "thickness", "clamp_diameter", "youngs_modulus", "poisson", "load"]),
    data=st.data(),
)
def test_shim_stiffness_refuses_bad_input(field, data):
    bad = {
        "od": bad_values("mm", 8.0, 200.0),  # the clamp is 8 mm: the shim must be larger
        "thickness": bad_values("mm", 0.05, 0.50),
        "clamp_diameter": bad_values("mm", 1.0, 17.0),  # at least 1 mm, under the 17 mm shim
        "youngs_modulus": bad_values("GPa", 50.0, 400.0),
        "poisson": st.one_of(
            st.floats(0.5, 10.0), st.floats(-10.0, -1e-9), st.just(math.nan), st.just("0.3")
        ),
        "load": bad_values("N", 0.0, 100_000.0),
    }[field]
    value = data.draw(bad)
    if field == "load" and value is None:
        value = "none"  # None means "no load", which is valid
    with pytest.raises(CalcInputError):
        shim_stiffness(**{**GOOD_SHIM, field: value})


@QUICK
@given(field=st.sampled_from(["od", "thickness", "count"]), data=st.data())
def test_a_shim_refuses_bad_input(field, data):
    bad = {
        "od": bad_values("mm", 1.0, 200.0),
        "thickness": bad_values("mm", 0.05, 0.50),
        "count": st.one_of(
            st.integers(-5, 0), st.integers(51, 10_000), st.just(1.0), st.just(True), st.just("2")
        ),
    }[field]
    good = {"od": mm(17), "thickness": mm(0.1), "count": 1}
    with pytest.raises(CalcInputError):
        Shim(**{**good, field: data.draw(bad)})


@QUICK
@given(
    field=st.sampled_from(
        [
            "shims",
            "clamp_diameter",
            "crossover",
            "crossover_position",
            "preload",
            "floating_spring_rate",
            "youngs_modulus",
            "poisson",
        ]
    ),
    data=st.data(),
)
def test_a_stack_refuses_bad_input(field, data):
    good = {
        "shims": [shim(20, 0.1), shim(18, 0.15)],
        "clamp_diameter": mm(8),
        "crossover": Crossover(mm(12), mm(0.1)),
        "crossover_position": 1,
    }
    bad = {
        "shims": st.sampled_from([[], "20x0.1", None, [None], [mm(20)], [shim(20, 0.1)] * 41]),
        "clamp_diameter": bad_values("mm", 1.0, 12.0),  # must stay under the 12 mm crossover
        # A ring as large as a neighbour is no crossover; one under the clamp cannot bend.
        "crossover": st.sampled_from([Crossover(mm(18), mm(0.1)), Crossover(mm(7), mm(0.1)), "ring", 12.0]),
        "crossover_position": st.sampled_from([0, 2, -1, None, 1.0, True]),
        "preload": bad_values("N", 0.0, 100_000.0),
        "floating_spring_rate": st.one_of(bad_values("N/mm", 0.0, 1e6), st.just(Q_(40.0, "N/mm"))),
        "youngs_modulus": bad_values("GPa", 50.0, 400.0),
        "poisson": st.one_of(st.floats(0.5, 10.0), st.floats(-10.0, -1e-9), st.just(math.nan)),
    }[field]
    value = data.draw(bad)
    if field in ("preload", "floating_spring_rate", "youngs_modulus") and value is None:
        value = "none"  # None is a valid "not set" for the spring rate
    # A good spring rate is still refused here: a floating stack with a crossover is not modelled.
    with pytest.raises(CalcInputError):
        ShimStack(**{**good, field: value})


def test_a_crossover_refuses_bad_input_and_a_position_needs_a_crossover():
    for od, thickness in ((mm(math.nan), mm(0.1)), (12.0, mm(0.1)), (mm(12), mm(0.6)), (mm(12), Q_(1, "N"))):
        with pytest.raises(CalcInputError):
            Crossover(od, thickness)
    with pytest.raises(CalcInputError, match="crossover_position"):
        ShimStack([shim(20, 0.1), shim(18, 0.1)], mm(8), crossover_position=1)


@QUICK
@given(value=bad_values("N", 0.0, 100_000.0))
def test_lift_stiffness_at_and_compare_refuse_bad_loads(value):
    stack = crossover_stack()
    with pytest.raises(CalcInputError):
        stack.lift(value)
    with pytest.raises(CalcInputError):
        stack.stiffness_at(value)
    with pytest.raises(CalcInputError):
        compare(stack, stack, reference_load=value)


def test_stack_functions_refuse_what_is_not_a_stack():
    with pytest.raises(CalcInputError):
        stack_stiffness([shim(20, 0.1)])
    with pytest.raises(CalcInputError):
        compare(crossover_stack(), "after", reference_load=newtons(10))
    with pytest.raises(CalcInputError, match="reference_load"):
        compare(crossover_stack(), crossover_stack(), reference_load=newtons(0))


@pytest.mark.parametrize("load", [0.0, 5.0, 16.0, 40.0, 120.0])
def test_load_for_lift_inverts_lift_through_every_stage(load):
    # Round trip through the piecewise-linear lift curve, crossover and preload included.
    stack = crossover_stack(preload=newtons(4.0))
    lift = stack.lift(newtons(max(load, 4.0)))
    assert stack.load_for_lift(lift).to("N").magnitude == pytest.approx(max(load, 4.0), rel=1e-12)
    assert stack.load_for_lift(mm(0.0)).to("N").magnitude == pytest.approx(4.0)


@QUICK
@given(value=bad_values("mm", 0.0, 10.0))
def test_load_for_lift_refuses_bad_lifts(value):
    with pytest.raises(CalcInputError):
        crossover_stack().load_for_lift(value)
