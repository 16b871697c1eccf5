"""Plain print data, no database: an invented fitting worked out by the engine, labelled as a revision.

Shared by the document tests and the print benchmark.
"""

from datetime import date
from pathlib import Path

from fittings.printing.data import DocumentData
from patterns.core.allot import allot
from patterns.core.fitting import body_from_measurements, load_fitting_text

MM_PER_PT = 25.4 / 72  # ISO 32000-1 8.3.2.3 and the 1959 agreement
EXAMPLES = Path(__file__).resolve().parents[2] / "patterns" / "examples"
BASE_URL = "https://atelier.example"

# An invented revision 3, based on revision 2, of WF-0102's daily corset.
LABELS = {
    "atelier_name": "Wrenfield Stays & Bodices",
    "client_label": "WF-0102",
    "garment": "Daily corset",
    "fitting_date": date(2025, 3, 4),
    "measured_by": "Demo Fitter",
    "revision_number": 3,
    "revision_status": "issued",
    "issued_at": None,
    "issued_by": "",
    "based_on": 2,
    "revision_url": f"{BASE_URL}/plans/7/revisions/3/",
}


def document(measurements, block, options, **labels) -> DocumentData:
    """The print data for these inputs, the engine's result included; ``labels`` change LABELS."""
    result = allot(block, body_from_measurements(measurements), options)
    return DocumentData(**{**LABELS, **labels}, measurements=measurements, block=block, options=options, result=result)


def example_data(name: str, status: str = "issued") -> DocumentData:
    """One of the project's invented example fittings (patterns/examples)."""
    measurements, block, options = load_fitting_text((EXAMPLES / f"{name}.json").read_text())
    return document(measurements, block, options, revision_status=status)
