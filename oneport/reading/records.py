"""What was read for one side of a loop: the record every result carries in ``inputs``."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any


@dataclass(frozen=True)
class InputRecord:
    """What was read for one side of the loop."""

    role: str
    source: str
    sha256: str | None
    points: int
    frequency_range_hz: tuple[float, float]
    parameter: str
    number_format: str
    version: str
    file_reference_impedance_ohm: float
    analysed_reference_impedance_ohm: float
    preparation: tuple[str, ...] = ()

    @classmethod
    def of(cls, role: str, port: Any, analysed_ohm: float) -> InputRecord:
        """The record of a :class:`~oneport.reading.touchstone.OnePort` analysed in
        ``analysed_ohm``."""
        return cls(
            role=role,
            source=port.source,
            sha256=port.sha256,
            points=port.points,
            frequency_range_hz=(float(port.frequency_hz[0]), float(port.frequency_hz[-1])),
            parameter=port.parameter,
            number_format=port.number_format,
            version=port.version,
            file_reference_impedance_ohm=port.reference_impedance_ohm,
            analysed_reference_impedance_ohm=analysed_ohm,
        )

    def to_dict(self) -> dict[str, Any]:
        """JSON form of the record."""
        return {
            "preparation": list(self.preparation),
            "role": self.role,
            "path": self.source,
            "sha256": self.sha256,
            "ports": 1,
            "points": self.points,
            "frequency_range_hz": list(self.frequency_range_hz),
            "parameter": self.parameter,
            "format": self.number_format,
            "touchstone_version": self.version,
            "reference_impedance_ohm": {
                "as_measured": self.file_reference_impedance_ohm,
                "as_analysed": self.analysed_reference_impedance_ohm,
            },
        }
