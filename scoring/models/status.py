"""What `boildown models` shows for each model: where it is, its size and checksum, whether it loads."""

from __future__ import annotations

import importlib.metadata
import time
from dataclasses import asdict, dataclass
from pathlib import Path

from scoring.models.files import dir_files, checksum, encoder_path, gguf_path, spacy_path
from scoring.models.install import causal_dir, verify_copy
from scoring.models.loading import LOADERS
from scoring.models.specs import SPECS, ModelError

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
        return asdict(self)


def _location(key: str) -> Path:
    return {"encoder": encoder_path, "causal": gguf_path, "spacy": spacy_path}[key]()


def _size(path: Path) -> int:
    if path.is_file():
        return path.stat().st_size
    return sum(p.stat().st_size for p in dir_files(path))


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
            detail = f"converted copy: {converted}" if verify_copy(converted) else "not converted yet"
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


def status_text(statuses: list[ModelStatus], loaded: bool = True) -> str:
    """What `boildown models` prints: one block per model (``loaded``: a load was attempted)."""
    out = []
    for s in statuses:
        size = f"{s.size_bytes / 1e6:.1f} MB" if s.size_bytes else "-"
        state = "loads" if s.loads else ("found" if (not loaded and s.location) else "FAILED")
        out += [f"{s.key}: {s.name}  [{state}]", f"  role:     {s.role}",
                f"  package:  {s.package}=={s.version or 'not installed'}", f"  location: {s.location or '-'}",
                f"  size:     {size}", f"  sha256:   {s.sha256 or '-'}", f"  licence:  {s.licence}"]
        if s.load_seconds is not None:
            out.append(f"  load:     {s.load_seconds:.2f} s")
        out.append(f"  detail:   {s.detail}")
    return "\n".join(out)


def unavailable(statuses: list[ModelStatus], loaded: bool = True) -> list[str]:
    """The models that are missing or (when a load was attempted) do not load."""
    return [s.key for s in statuses if not (s.loads or (not loaded and s.location))]
