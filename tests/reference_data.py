"""Where the tests find the published reference data (``<repo>/../shared/reference``).

CI puts a copy of ``shared/`` beside the clone; ``$TUBEPLAN_REFERENCE`` may
name another copy. Tests that need it skip, saying so, when it is absent.
"""

from __future__ import annotations

import os
from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parent.parent
REFERENCE = Path(os.environ.get("TUBEPLAN_REFERENCE", REPO.parent / "shared" / "reference"))


def need_reference() -> Path:
    """The reference directory; skips the calling test when it is absent."""
    if not (REFERENCE / "plate-curves-digitized.csv").is_file():
        pytest.skip(f"published reference data not found at {REFERENCE} (CI copies shared/ beside "
                    "the clone; set TUBEPLAN_REFERENCE to another copy)")
    return REFERENCE
