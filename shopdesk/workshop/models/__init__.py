"""The workshop's models: jobs (work orders and their timeline) and the bench's records."""

from shopdesk.workshop.models.bench import (
    BenchRecord,
    FinalCheck,
    LabourEntry,
    OilRecord,
    PartUsed,
    ServiceRecord,
    ShimStackRecord,
    SpringRecord,
)
from shopdesk.workshop.models.jobs import (
    OPEN_STATUSES,
    ArrivalSettings,
    NumberSequence,
    Payment,
    RequestedService,
    Status,
    WorkOrder,
    WorkOrderEvent,
)

__all__ = [
    "OPEN_STATUSES",
    "ArrivalSettings",
    "BenchRecord",
    "FinalCheck",
    "LabourEntry",
    "NumberSequence",
    "OilRecord",
    "PartUsed",
    "Payment",
    "RequestedService",
    "ServiceRecord",
    "ShimStackRecord",
    "SpringRecord",
    "Status",
    "WorkOrder",
    "WorkOrderEvent",
]
