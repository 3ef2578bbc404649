"""The workshop's rules. Jobs (check-in, numbering, the flow) and the bench's records."""

from shopdesk.workshop.services.bench import (
    JobPrice,
    RecordConflict,
    RecordRefused,
    final_check_set,
    final_checks_create,
    job_price,
    labour_add,
    missing_before_ready,
    oil_record_save,
    part_use,
    record_void,
    required_chambers,
    service_history_write,
    spring_record_save,
)
from shopdesk.workshop.services.jobs import (
    MoveRefused,
    quote,
    work_order_check_in,
    work_order_move,
    work_order_next_number,
    work_order_take,
)

__all__ = [
    "JobPrice",
    "MoveRefused",
    "RecordConflict",
    "RecordRefused",
    "final_check_set",
    "final_checks_create",
    "job_price",
    "labour_add",
    "missing_before_ready",
    "oil_record_save",
    "part_use",
    "quote",
    "record_void",
    "required_chambers",
    "service_history_write",
    "spring_record_save",
    "work_order_check_in",
    "work_order_move",
    "work_order_next_number",
    "work_order_take",
]
