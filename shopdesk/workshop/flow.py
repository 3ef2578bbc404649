"""The flow of a unit through the shop: which status may follow which, and who may move it.

checked in -> waiting for parts <-> on the bench -> final check -> ready for pickup -> collected,
with cancelled reachable from every status before collected.
"""

from __future__ import annotations

from dataclasses import dataclass

from shopdesk.workshop.models import Status

BENCH = "workshop.move_on_bench_workorder"
FRONT_DESK = "workshop.check_in_workorder"
HAND_BACK = "workshop.hand_back_workorder"
CANCEL = "workshop.cancel_workorder"


@dataclass(frozen=True)
class Move:
    source: Status
    target: Status
    label: str  # the button's words
    permissions: tuple[str, ...]  # any one of these allows the move


MOVES: tuple[Move, ...] = (
    Move(Status.CHECKED_IN, Status.ON_THE_BENCH, "Start on the bench", (BENCH,)),
    Move(Status.CHECKED_IN, Status.WAITING_FOR_PARTS, "Waiting for parts", (BENCH, FRONT_DESK)),
    Move(Status.WAITING_FOR_PARTS, Status.ON_THE_BENCH, "Parts in: back on the bench", (BENCH,)),
    Move(Status.ON_THE_BENCH, Status.WAITING_FOR_PARTS, "Waiting for parts", (BENCH,)),
    Move(Status.ON_THE_BENCH, Status.FINAL_CHECK, "To final check", (BENCH,)),
    Move(Status.FINAL_CHECK, Status.ON_THE_BENCH, "Back to the bench", (BENCH,)),
    Move(Status.FINAL_CHECK, Status.READY_FOR_PICKUP, "Ready for pickup", (BENCH,)),
    Move(Status.READY_FOR_PICKUP, Status.COLLECTED, "Collected", (HAND_BACK,)),
    *tuple(
        Move(source, Status.CANCELLED, "Cancel", (CANCEL,))
        for source in (
            Status.CHECKED_IN,
            Status.WAITING_FOR_PARTS,
            Status.ON_THE_BENCH,
            Status.FINAL_CHECK,
            Status.READY_FOR_PICKUP,
        )
    ),
)

_BY_PAIR = {(move.source, move.target): move for move in MOVES}


def find_move(source: str, target: str) -> Move | None:
    return _BY_PAIR.get((Status(source), Status(target))) if target in Status.values else None


def moves_from(source: str) -> list[Move]:
    return [move for move in MOVES if move.source == source]
