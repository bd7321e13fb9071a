"""What ``assess`` scores: rows of (document id, system, summary, source, references), read from a
JSON-lines file or from a folder layout, each bad row kept with a one-line problem.

JSON lines, one object a line::

    {"id": "doc-07", "system": "draft-b", "summary": "...", "source": "full text ..."}
    {"id": "doc-07", "system": "draft-c", "summary": "...", "source_path": "sources/doc-07.txt",
     "references": ["a human summary", "another"]}

``source_path`` is relative to the JSON-lines file's folder; rows of one ``id`` share one
source. Folder layout (``ROOT``)::

    ROOT/sources/<doc>.<ext>              one file per document (txt, md, html, pdf, docx)
    ROOT/systems/<system>/<doc>.<ext>     one folder per system; file names match the sources'
    ROOT/references/<doc>.<ext>           optional: one reference, or
    ROOT/references/<doc>/<any>.<ext>     several references of one document

A row's problems (no source, an empty summary, a repeated (id, system), a source that differs
from the first one given for its id, a line that is not JSON) are found here; a missing or
unreadable source file is found when its bytes are read (``run``).
"""

from __future__ import annotations

import json
from dataclasses import dataclass, field, replace
from pathlib import Path

SOURCES, SYSTEMS, REFERENCES = "sources", "systems", "references"


class InputError(ValueError):
    """The input as a whole cannot be read (one line naming it and the fix)."""


@dataclass(frozen=True)
class Row:
    """One summary to score. ``where`` says where it came from (``rows.jsonl:12`` or a file path
    relative to the folder); ``problem`` is set when it cannot be scored."""

    where: str
    id: str
    system: str
    summary: str = ""
    source: str | None = None  # the source text itself
    source_path: Path | None = None  # or the source's file
    references: tuple[str, ...] = ()
    problem: str | None = None

    @property
    def source_name(self) -> str:
        """What messages call the source (a file's path; the id for text given in the row)."""
        return str(self.source_path) if self.source_path is not None else f"source of {self.id}"


def load(path) -> list[Row]:
    """The rows of a JSON-lines file or a folder layout, in input order. Raises InputError when
    the input itself is missing, empty or of neither kind."""
    target = Path(path)
    if not target.exists():
        raise InputError(f"'{target}' was not found; give a JSON-lines file of rows or a folder with "
                         f"{SOURCES}/ and {SYSTEMS}/")
    rows = load_folder(target) if target.is_dir() else load_jsonl(target)
    if not rows:
        raise InputError(f"'{target}' holds no rows to score")
    return check(rows)


def load_jsonl(path: Path) -> list[Row]:
    """Rows of a JSON-lines file; a line that is not a usable object becomes a row with its problem."""
    try:
        text = path.read_text(encoding="utf-8-sig")
    except UnicodeDecodeError:
        raise InputError(f"'{path}' is not UTF-8 text; give a JSON-lines file (one JSON object a line)") from None
    except OSError as exc:
        raise InputError(f"'{path}' cannot be read ({exc.strerror or exc})") from None
    rows = []
    for number, line in enumerate(text.splitlines(), 1):
        if not line.strip():
            continue
        where = f"{path.name}:{number}"
        try:
            item = json.loads(line)
        except json.JSONDecodeError as exc:
            rows.append(Row(where, f"line {number}", "", problem=f"{where}: not a JSON object ({exc.msg})"))
            continue
        rows.append(_row(item, where, path.parent))
    if rows and all(r.problem and r.problem.endswith(")") and "not a JSON object" in r.problem for r in rows):
        raise InputError(f"'{path}' is not JSON lines (no line parses); give one JSON object a line")
    return rows


def _row(item, where: str, folder: Path) -> Row:
    if not isinstance(item, dict):
        return Row(where, where, "", problem=f"{where}: a row must be a JSON object, not {type(item).__name__}")
    doc, system = item.get("id"), item.get("system")
    if doc is None or str(doc).strip() == "" or system is None or str(system).strip() == "":
        missing = " and ".join(k for k, v in (("id", doc), ("system", system)) if v is None or str(v).strip() == "")
        return Row(where, str(doc or where), str(system or ""), problem=f"{where}: the row has no {missing}")
    doc, system = str(doc), str(system)
    summary = item.get("summary")
    refs = item.get("references") or ()
    if isinstance(refs, str):
        refs = (refs,)
    if not isinstance(refs, (list, tuple)) or not all(isinstance(r, str) for r in refs):
        return Row(where, doc, system, problem=f"{where}: references must be a list of texts")
    row = Row(where, doc, system, summary if isinstance(summary, str) else "", references=tuple(refs))
    source, source_path = item.get("source"), item.get("source_path")
    if isinstance(source, str) and source.strip():
        return replace(row, source=source)
    if isinstance(source_path, str) and source_path.strip():
        return replace(row, source_path=(folder / source_path))
    return replace(row, problem=f"{where}: the row ({doc}, {system}) has no source; give \"source\" (the text) "
                                f"or \"source_path\" (a file)")


def load_folder(root: Path) -> list[Row]:
    """Rows of the folder layout (see the module docstring)."""
    from summarize.reading import ReadError, read_document

    sources_dir, systems_dir = root / SOURCES, root / SYSTEMS
    if not sources_dir.is_dir() or not systems_dir.is_dir():
        raise InputError(f"'{root}' is not an assess folder: it needs {SOURCES}/ (one file per document) and "
                         f"{SYSTEMS}/<system>/ (one summary per document, same file names)")
    sources = {p.stem: p for p in sorted(sources_dir.iterdir()) if p.is_file() and not p.name.startswith(".")}
    references = _folder_references(root / REFERENCES)
    rows = []
    for system_dir in sorted(p for p in systems_dir.iterdir() if p.is_dir() and not p.name.startswith(".")):
        for path in sorted(p for p in system_dir.iterdir() if p.is_file() and not p.name.startswith(".")):
            where = str(path.relative_to(root))
            doc, system = path.stem, system_dir.name
            if doc not in sources:
                rows.append(Row(where, doc, system, problem=f"{where}: no source named '{doc}.*' in {SOURCES}/"))
                continue
            try:
                summary = read_document(path).text
            except ReadError as exc:
                rows.append(Row(where, doc, system, problem=f"{where}: {exc}"))
                continue
            refs = tuple(references.get(doc, ()))
            rows.append(Row(where, doc, system, summary, source_path=sources[doc], references=refs))
    return rows


def _folder_references(folder: Path) -> dict[str, list[str]]:
    from summarize.reading import read_document

    found: dict[str, list[str]] = {}
    if not folder.is_dir():
        return found
    for path in sorted(folder.iterdir()):
        if path.name.startswith("."):
            continue
        files = sorted(p for p in path.iterdir() if p.is_file()) if path.is_dir() else [path]
        key = path.name if path.is_dir() else path.stem
        found[key] = [read_document(p).text for p in files if not p.name.startswith(".")]
    return found


def check(rows: list[Row]) -> list[Row]:
    """Mark what is wrong across rows: an empty summary, a repeated (id, system) (the first one
    is scored), a source that differs from the first one given for the same id."""
    first_pair: dict[tuple[str, str], str] = {}
    first_source: dict[str, Row] = {}
    out = []
    for row in rows:
        if row.problem:
            out.append(row)
            continue
        pair = (row.id, row.system)
        if pair in first_pair:
            row = replace(row, problem=f"{row.where}: ({row.id}, {row.system}) appears again (first at "
                                      f"{first_pair[pair]}); only the first is scored")
        elif not row.summary.strip():
            row = replace(row, problem=f"{row.where}: the summary of ({row.id}, {row.system}) is empty")
        else:
            first = first_source.setdefault(row.id, row)
            if (first.source, first.source_path) != (row.source, row.source_path):
                row = replace(row, problem=f"{row.where}: the source of {row.id} differs from the one given at "
                                          f"{first.where}; give one source per id")
        first_pair.setdefault(pair, row.where)
        out.append(row)
    return out


@dataclass
class Group:
    """The rows of one source that are still to be scored (the source is read once for all)."""

    id: str
    name: str
    data: bytes
    format: str | None
    rows: list[Row] = field(default_factory=list)
    attempts: int = 0  # tries lost to a worker process that died (the run's dispatch counts them)
