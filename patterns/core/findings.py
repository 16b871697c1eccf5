"""Errors and warnings the core reports, each with a stable code and plain words."""

from dataclasses import asdict, dataclass

ERROR, WARNING, CAUTION = "error", "warning", "caution"


@dataclass(frozen=True)
class Finding:
    code: str
    severity: str  # ERROR, WARNING or CAUTION
    message: str
    level: str | None = None
    seam: str | None = None
    panel: str | None = None

    def as_dict(self) -> dict:
        return asdict(self)
