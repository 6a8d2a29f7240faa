"""The safety caution carried by every output that may lead someone to dig near buried services.

Shared by every layer (a plan, a map or a report all carry it); the text is written once here.
"""

__all__ = ["CAUTION_LINES", "CAUTION"]

CAUTION_LINES = (
    "Predicted depths and ranges are estimates, not locations of buried objects.",
    "Before any excavation, verify buried services by the means your local regulations "
    "require (utility records, one-call notification, trial holes by qualified staff).",
    "GPR transmitters are radio equipment; their licensing and permitted use differ by country.",
    "Defer to local codes and licensed professional practice.",
)
CAUTION = " ".join(CAUTION_LINES)
