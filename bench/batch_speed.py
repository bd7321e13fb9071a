"""Batch speed: documents per minute through `run_batch` with 1 and 2 local worker processes,
and through Dask (a LocalCluster of 2 single-threaded worker processes started here), with the
real summarizer on copies of the demo documents.

    .venv/bin/python bench/batch_speed.py [--docs 12] [--words 150] [--candidates 3]
                                          [--max-words N] [--engines local1,local2,dask]

Each copy of a demo document gets one distinct closing sentence, so no two inputs share a
content hash (identical copies would be summarized once and reused). Every run starts from an
empty output folder; its time includes starting the workers and loading the models in each
(what a user waits for), and the time spent before the first record is reported separately.
The Dask cluster's own start is not counted (a cluster is normally already running).
"""

from __future__ import annotations

import argparse
import shutil
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
from bench.common import ROOT, save  # noqa: E402

DEMO = ("drought_brief.md", "incident_report_pumping_station.txt", "board_minutes_march.txt",
        "customer_complaints_review.html", "asset_renewal_plan.md", "annual_water_quality_report.txt",
        "catchment_strategy_2030.md")


def make_folder(folder: Path, n: int, max_words: int | None) -> list[tuple[str, int]]:
    """n documents: the demo documents in a fixed order (short first), copied until n."""
    from summarize.reading import read_document

    chosen = []
    for name in DEMO:
        words = read_document(ROOT / "demo_docs" / name).word_count
        if max_words is None or words <= max_words:
            chosen.append((name, words))
    if not chosen:
        raise SystemExit(f"no demo document has at most {max_words} words")
    folder.mkdir(parents=True)
    made = []
    for i in range(n):
        name, words = chosen[i % len(chosen)]
        source = ROOT / "demo_docs" / name
        target = folder / f"copy{i // len(chosen) + 1}" / name
        target.parent.mkdir(exist_ok=True)
        text = source.read_text(encoding="utf-8")
        closing = f"This is filed copy {i + 1} of the document for the batch benchmark."
        if name.endswith(".html"):
            text = text.replace("</body>", f"<p>{closing}</p></body>")
        else:
            text = text.rstrip("\n") + f"\n\n{closing}\n"
        target.write_text(text, encoding="utf-8")
        made.append((target.relative_to(folder).as_posix(), words))
    return made


def first_record_after(out: Path, start: float) -> float | None:
    """Seconds from the start to the first manifest record (startup and model loading)."""
    from summarize.batch import read_manifest

    records = read_manifest(out)
    if not records:
        return None
    import datetime

    first = min(datetime.datetime.strptime(r["finished"], "%Y-%m-%dT%H:%M:%S%z").timestamp() for r in records)
    return round(first - start, 1)


def one_run(src: Path, out: Path, args, **engine) -> dict:
    from summarize.batch import run_batch

    wall_start = time.time()
    start = time.perf_counter()
    result = run_batch(src, out, words=args.words, candidates=args.candidates, bar=True, **engine)
    seconds = time.perf_counter() - start
    from summarize.batch import read_manifest

    records = read_manifest(out)
    per_doc = sorted(r["timings"].get("summarize_s") or 0 for r in records if r["status"] == "done")
    return {
        "documents": result.total,
        "done": result.done,
        "failed": result.failed,
        "workers": result.workers,
        "seconds": round(seconds, 1),
        "docs_per_minute": round(60 * result.done / seconds, 2),
        "seconds_to_first_record": first_record_after(out, wall_start),
        "median_summarize_s": per_doc[len(per_doc) // 2] if per_doc else None,
        "failures": [list(f) for f in result.failures],
    }


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--docs", type=int, default=12)
    parser.add_argument("--words", type=int, default=150)
    parser.add_argument("--candidates", type=int, default=3)
    parser.add_argument("--max-words", type=int, default=None,
                        help="only demo documents up to this many words (a quicker run)")
    parser.add_argument("--engines", default="local1,local2,dask")
    args = parser.parse_args()
    engines = [e.strip() for e in args.engines.split(",") if e.strip()]

    results = {}
    with tempfile.TemporaryDirectory(prefix="boildown-batch-bench-") as tmp:
        src = Path(tmp) / "in"
        made = make_folder(src, args.docs, args.max_words)
        print(f"{len(made)} documents, {sum(w for _, w in made)} words in all; --words {args.words} "
              f"--candidates {args.candidates}", flush=True)
        for engine in engines:
            out = Path(tmp) / f"out-{engine}"
            if engine.startswith("local"):
                results[engine] = one_run(src, out, args, workers=int(engine[5:] or 1))
            elif engine == "dask":
                try:
                    import distributed
                except ImportError:
                    results[engine] = {"skipped": "dask is not installed"}
                    continue
                with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                              dashboard_address=None, host="127.0.0.1") as cluster:
                    results[engine] = one_run(src, out, args, engine="dask", scheduler=cluster.scheduler_address)
            else:
                raise SystemExit(f"unknown engine {engine!r}; use local1, local2 or dask")
            print(f"{engine}: {results[engine]}", flush=True)
            shutil.rmtree(out, ignore_errors=True)

    path = save("batch_speed", {
        "documents": [{"path": p, "words": w} for p, w in made],
        "settings": {"words": args.words, "candidates": args.candidates, "max_words": args.max_words},
        "results": results,
        "note": "wall time includes starting the workers and loading the models in each; the Dask "
                "LocalCluster start is excluded",
    })
    print(f"saved {path}")


if __name__ == "__main__":
    main()
