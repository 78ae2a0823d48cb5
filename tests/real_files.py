"""Test helper: the real camera files in tests/data/real (source and licence in its README.md)."""

from pathlib import Path

REAL_FILES = Path(__file__).resolve().parent / "data" / "real"
CHART_DNG = REAL_FILES / "canon-550d-colour-chart.dng"  # raw DNG of a 24-patch colour chart
FLOWERS_HEIC = REAL_FILES / "phone-a.heic"  # iPhone 11 Pro Max: flowers in daylight
KITCHEN_HEIC = REAL_FILES / "phone-b.heic"  # iPhone 13 Pro Max, 12 MP: a kitchen


def real_file(path: Path) -> bytes:
    """The bytes of one real file."""
    return path.read_bytes()
