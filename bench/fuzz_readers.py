"""Fuzzing the readers: random bytes, truncated and bit-flipped copies of real files of each
format, and adversarial shapes, each read as a batch worker reads a document (under the
per-document limits of summarize/batch/worker.py). Every case must end in a Document or a
one-line ReadError; anything else is a defect.

    nice -n 10 python -m bench.fuzz_readers [--cases 1100] [--seed 0] [--big-mb 50]

Writes bench/results/fuzz_readers.json (cases, outcomes by kind, slowest cases, peak memory);
docs/RESULTS.md shows it (bench/results_sections.py). tests/test_reading_fuzz.py uses the same
case makers, smaller, in the suite.
"""

from __future__ import annotations

import argparse
import os
import io
import json
import random
import resource
import time
import zipfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
RESULT = ROOT / "bench" / "results" / "fuzz_readers.json"
SUFFIXES = (".txt", ".md", ".html", ".pdf", ".docx")


# ------------------------------------------------------------------------------------------ real files


def minimal_pdf(lines: list[str], cyclic: bool = False) -> bytes:
    """A small valid PDF written by hand (one page, Helvetica); ``cyclic``: its page tree's
    Kids refer back to the Pages node itself, and two objects refer to each other."""
    ops = ["BT", "72 740 Td"] + [f"/F1 11 Tf ({t}) Tj 0 -15 Td" for t in lines] + ["ET"]
    stream = "\n".join(ops).encode("latin-1")
    kids = "[3 0 R 2 0 R]" if cyclic else "[3 0 R]"
    objects = [b"<< /Type /Catalog /Pages 2 0 R >>",
               f"<< /Type /Pages /Kids {kids} /Count 2 /Parent 2 0 R >>".encode() if cyclic
               else f"<< /Type /Pages /Kids {kids} /Count 1 >>".encode(),
               b"<< /Type /Page /Parent 2 0 R /MediaBox [0 0 612 792] /Resources << /Font << /F1 5 0 R >> >> "
               b"/Contents 4 0 R" + (b" /Annots 6 0 R" if cyclic else b"") + b" >>",
               b"<< /Length %d >>\nstream\n" % len(stream) + stream + b"\nendstream",
               b"<< /Type /Font /Subtype /Type1 /BaseFont /Helvetica >>"]
    if cyclic:
        objects += [b"[7 0 R]", b"<< /Next 6 0 R /Self 7 0 R /P 3 0 R >>"]
    return pdf_file(objects)


def pdf_file(objects: list[bytes]) -> bytes:
    """A PDF file of ``objects`` (numbered from 1, the first the catalog): header, the objects,
    the cross-reference table and the trailer. tests/test_reading.py builds its PDFs with it."""
    out = bytearray(b"%PDF-1.4\n")
    offsets = []
    for number, body in enumerate(objects, 1):
        offsets.append(len(out))
        out += b"%d 0 obj\n" % number + body + b"\nendobj\n"
    xref = len(out)
    out += b"xref\n0 %d\n0000000000 65535 f \n" % (len(objects) + 1)
    out += b"".join(b"%010d 00000 n \n" % offset for offset in offsets)
    out += b"trailer\n<< /Size %d /Root 1 0 R >>\nstartxref\n%d\n%%%%EOF\n" % (len(objects) + 1, xref)
    return bytes(out)


def made_docx() -> bytes:
    """A DOCX made with python-docx: heading, paragraphs, a list, a table (invented text)."""
    import docx

    document = docx.Document()
    document.add_heading("Lantern Quay ferry review", 1)
    document.add_paragraph("The harbour trust counted the crossings of the winter timetable and the delays.")
    document.add_paragraph("Morning sailings were full on most days", style="List Bullet")
    table = document.add_table(rows=2, cols=2)
    table.cell(0, 0).text, table.cell(1, 1).text = "Route", "Twelve minutes"
    document.add_paragraph("The review recommends a second vessel for the busiest hour of the day.")
    buffer = io.BytesIO()
    document.save(buffer)
    return buffer.getvalue()


def seed_files() -> list[tuple[str, bytes]]:
    """Real files of each format: the demo documents, the reading fixtures, a PDF and a DOCX."""
    found = []
    for folder in (ROOT / "demo_docs", ROOT / "tests" / "data" / "reading"):
        for path in sorted(folder.glob("*")):
            if path.suffix in SUFFIXES and path.name != "README.md":
                found.append((path.name, path.read_bytes()))
    found.append(("made.pdf", minimal_pdf(["The harbour trust met on Tuesday.", "Ferries ran late twice."])))
    found.append(("made.docx", made_docx()))
    return found


# ------------------------------------------------------------------------------------------ adversarial shapes


def zip_bomb_docx(megabytes: int = 1024) -> bytes:
    """A DOCX whose document.xml inflates to ``megabytes`` MB of one repeated paragraph."""
    base = zipfile.ZipFile(io.BytesIO(made_docx()))
    out = io.BytesIO()
    with zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as target:
        for info in base.infolist():
            if info.filename == "word/document.xml":
                with target.open("word/document.xml", "w", force_zip64=True) as fh:
                    fh.write(b'<?xml version="1.0"?><w:document xmlns:w="http://schemas.openxmlformats.org/'
                             b'wordprocessingml/2006/main"><w:body>')
                    chunk = b"<w:p><w:r><w:t>ferry ferry ferry ferry</w:t></w:r></w:p>" * 16384
                    for _ in range(megabytes * 1024 * 1024 // len(chunk)):
                        fh.write(chunk)
                    fh.write(b"</w:body></w:document>")
            else:
                target.writestr(info, base.read(info.filename))
    return out.getvalue()


def entity_bomb_docx() -> bytes:
    """A DOCX whose document.xml declares nested entities (the "billion laughs" shape)."""
    base = zipfile.ZipFile(io.BytesIO(made_docx()))
    lol = "".join(f'<!ENTITY l{i} "{("&l%d;" % (i - 1)) * 10 if i else "ferry"}">' for i in range(10))
    xml = (f'<?xml version="1.0"?><!DOCTYPE d [{lol}]><w:document xmlns:w="http://schemas.openxmlformats.org/'
           'wordprocessingml/2006/main"><w:body><w:p><w:r><w:t>&l9;</w:t></w:r></w:p></w:body></w:document>')
    out = io.BytesIO()
    with zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as target:
        for info in base.infolist():
            target.writestr(info, xml.encode() if info.filename == "word/document.xml" else base.read(info.filename))
    return out.getvalue()


def adversarial(big_mb: int = 50) -> list[tuple[str, str, bytes]]:
    """(label, file name, bytes) of the shapes the issue names, and a few more."""
    big = big_mb * 1024 * 1024 - 1024  # under reading.MAX_BYTES (50 MB)
    prose = b"The ferry left Lantern Quay at noon and the harbour trust counted the passengers. "
    line = (prose * (big // len(prose) + 1))[:big]
    emphasis = (b"*a _b **c ~~d <!-- [e](f " * (big // 24 + 1))[:big]
    shapes = [
        ("zip bomb inside a DOCX (1 GB inflated)", "bomb.docx", zip_bomb_docx(1024)),
        ("nested entities in a DOCX", "laughs.docx", entity_bomb_docx()),
        ("HTML nested 100,000 deep", "deep.html", b"<html><body>" + b"<div>" * 100_000 + prose + b"</div>" * 100_000),
        ("HTML 100,000 unclosed tags", "unclosed.html", b"<p><b><i><span>" * 25_000 + prose),
        ("Markdown nested 100,000 quotes and lists", "deep.md", b"> - " * 100_000 + prose),
        ("PDF whose objects refer to each other in a cycle", "cycle.pdf", minimal_pdf(["A cycle."], cyclic=True)),
        (f"{big_mb} MB single line of prose (txt)", "line.txt", line),
        (f"{big_mb} MB single line of prose (md)", "line.md", line),
        (f"{big_mb} MB single line of prose (html)", "line.html", b"<p>" + line),
        (f"{big_mb} MB single line of unclosed markup (md)", "marks.md", emphasis),
        ("NUL bytes in text", "nul.txt", prose * 20 + b"\x00" * 5 + prose),
        ("NUL bytes in Markdown", "nul.md", b"# Ferry\n\n" + prose.replace(b" ", b"\x00 ", 3) * 10),
        ("mixed encodings (UTF-8, Latin-1, UTF-16)", "mixed.txt",
         "Caf\u00e9 crossing. ".encode() * 20 + "na\u00efve ferry ".encode("latin-1") * 20
         + "harbour \u2013 trust".encode("utf-16")),
        ("a UTF-8 BOM then Latin-1", "bom.html", b"\xef\xbb\xbf<p>" + "d\u00e9j\u00e0 vu".encode("latin-1") * 50),
    ]
    return shapes


# ------------------------------------------------------------------------------------------ mutations


def mutated(seeds: list[tuple[str, bytes]], n: int, rng: random.Random) -> list[tuple[str, str, bytes]]:
    """``n`` cases: random bytes under each suffix, truncated copies, bit-flipped copies."""
    cases = []
    for i in range(n):
        kind = i % 3
        if kind == 0:
            suffix = SUFFIXES[rng.randrange(len(SUFFIXES))]
            data = rng.randbytes(rng.choice([1, 16, 256, 4096, 65536]))
            if rng.random() < 0.5 and suffix in (".pdf", ".docx"):
                data = (b"%PDF-1.4\n" if suffix == ".pdf" else b"PK\x03\x04") + data
            cases.append(("random bytes", f"random{suffix}", data))
        else:
            name, data = seeds[rng.randrange(len(seeds))]
            if kind == 1:
                cases.append(("truncated copy", name, data[: rng.randrange(len(data))]))
            else:
                flipped = bytearray(data)
                for _ in range(rng.choice([1, 4, 32])):
                    pos = rng.randrange(len(flipped))
                    flipped[pos] ^= 1 << rng.randrange(8)
                cases.append(("bit-flipped copy", name, bytes(flipped)))
    return cases


# ------------------------------------------------------------------------------------------ running


def outcome_of(name: str, data: bytes) -> tuple[str, str]:
    """(kind, detail): "document", "read error" (one line naming the document), "limit" (a
    ReadError from the per-document limits), or "defect: ..." for anything else."""
    from summarize import reading
    from summarize.batch.worker import read_limits

    try:
        with read_limits(name):
            document = reading.read(data, name=name)
    except reading.ReadError as exc:
        text = str(exc)
        if "\n" in text or f"'{name}'" not in text:
            return "defect: message not one line naming the document", text[:200]
        return ("limit" if "(the per-document limit)" in text else "read error"), text[:200]
    except BaseException as exc:  # noqa: BLE001 - every other outcome is what the fuzzing looks for
        return f"defect: {type(exc).__name__}", str(exc)[:200]
    return "document", f"{len(document.blocks)} blocks"


def run(cases: list[tuple[str, str, bytes]]) -> dict:
    kinds: dict[str, int] = {}
    by_label: dict[str, dict[str, int]] = {}
    timed = []
    defects = []
    for label, name, data in cases:
        started = time.perf_counter()
        kind, detail = outcome_of(name, data)
        seconds = time.perf_counter() - started
        kinds[kind] = kinds.get(kind, 0) + 1
        by_label.setdefault(label, {}).setdefault(kind, 0)
        by_label[label][kind] += 1
        timed.append((seconds, label, name, len(data), kind))
        if kind.startswith("defect"):
            defects.append({"label": label, "name": name, "kind": kind, "detail": detail})
    timed.sort(reverse=True)
    return {"cases": len(cases), "outcomes": kinds, "by_case": by_label, "defects": defects[:20],
            "slowest": [{"seconds": round(s, 3), "case": label, "name": name, "bytes": size, "outcome": kind}
                        for s, label, name, size, kind in timed[:8]],
            "peak_rss_mb": round(resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024, 1)}


def main(argv=None) -> dict:
    from summarize.batch import worker

    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--cases", type=int, default=1100, help="random, truncated and bit-flipped cases")
    parser.add_argument("--seed", type=int, default=0)
    parser.add_argument("--big-mb", type=int, default=50, help="size of the single-line cases")
    parser.add_argument("--out", type=Path, default=RESULT)
    args = parser.parse_args(argv)
    rng = random.Random(args.seed)
    cases = adversarial(args.big_mb) + mutated(seed_files(), args.cases, rng)
    started = time.perf_counter()
    result = run(cases)
    result.update(when=time.strftime("%Y-%m-%d %H:%M:%S"), load_average=list(os.getloadavg()), seed=args.seed,
                  seconds=round(time.perf_counter() - started, 1),
                  limits={"read_seconds": worker.READ_SECONDS, "read_memory_gib": worker.READ_MEMORY / 1024**3})
    args.out.parent.mkdir(parents=True, exist_ok=True)
    args.out.write_text(json.dumps(result, indent=1) + "\n", encoding="utf-8")
    print(json.dumps({k: result[k] for k in ("cases", "outcomes", "slowest", "peak_rss_mb", "seconds")}, indent=1))
    return result


if __name__ == "__main__":
    main()
