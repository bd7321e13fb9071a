"""Shared fixtures: paths to external data, and the model tier's guard.

Tests marked ``models`` load real models. They run by default (CI installs the models with
./install.sh); `pytest -m "not models"` gives the fast tier. With BOILDOWN_SKIP_MODELS=1 they
skip instead of failing when the models are absent.
"""

from __future__ import annotations

import os
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
SHARED_DATA = ROOT.parent / "shared" / "data"
DEMO = ROOT / "demo_docs"

# A short invented source shared by the scoring tests (the demo scenario: a fictional water board).
MEETING = (
    "The Harrowmere Valley Water Board met in Calderby on 12 March. Storage in Thornmoor reservoir "
    "had fallen to 48 percent after the driest spring in forty years. The board approved a hosepipe "
    "ban for Wenlow Cross and Ashpool, and asked the Scarrow treatment works to run its second "
    "filter line. Engineers reported that leakage fell to 21 megalitres a day after the renewal of "
    "twelve kilometres of cast-iron mains. The chair, Dr. Ines Korrow, thanked the crews."
)
TEST_DATA = ROOT / "tests" / "data"


def shared_data(*parts: str) -> Path:
    """A path under ../shared/data, or a clean skip naming what is missing."""
    path = SHARED_DATA.joinpath(*parts)
    if not path.exists():
        pytest.skip(f"external data {path} is absent (expected the read-only ../shared/data/ beside the project)")
    return path


@pytest.fixture(autouse=True)
def _models_available(request):
    if request.node.get_closest_marker("models") is None:
        return
    from scoring.models import ModelError, encoder_path, gguf_path, spacy_path

    try:
        encoder_path(), gguf_path(), spacy_path()
    except ModelError as exc:
        if os.environ.get("BOILDOWN_SKIP_MODELS") == "1":
            pytest.skip(f"models not installed: {exc}")
        raise
