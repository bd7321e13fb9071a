"""The word budget over the demo documents and 100 external documents at five budgets.

Every candidate recipe of the default search is built (no scoring needed: the budget is a
property of the drafts) at 50, 100, 150, 250 and 400 words. Checks: never above the budget;
at least 95% of it filled when the source is longer. External documents: the 50 SQuALITY
train stories, 30 LongSciVerify papers and the 20 distinct LongEval PubMed sources (100 in all).

    .venv/bin/python bench/budget_check.py [--limit N]
"""

from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
from bench import data  # noqa: E402
from bench.common import DATA, ROOT, save  # noqa: E402
from bench.quality import COMMIT, document_of  # noqa: E402  (COMMIT: checked out when the run started)

BUDGETS = (50, 100, 150, 250, 400)


def documents(limit):
    from summarize.reading import parse_text, read_document

    docs = [(p.name, read_document(p)) for p in sorted((ROOT / "demo_docs").iterdir())
            if p.suffix in (".txt", ".md", ".html") and "abstract" not in p.name and p.name != "README.md"]
    external = [(f"squality:{e.id}", document_of(e)) for e in data.squality("train")]
    external += [(f"longsciverify:{e.id}", document_of(e)) for e in data.longsciverify()]
    longeval = json.loads((DATA / "longdoc" / "raw_data" / "LongEval" / "pubmed_summary_src_doc_data.json").read_text())
    seen = set()
    for key in sorted(longeval):  # three summaries per article: each source once
        source = longeval[key]["source_doc"]
        if source in seen or len(seen) == 20:
            continue
        seen.add(source)
        # the release marks line breaks as "<br />" inside plain text
        external.append((f"longeval:{key.rsplit('_', 1)[0]}", parse_text(source.replace("<br />", "\n"))))
    return docs + external[:limit]


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--limit", type=int, default=100, help="external documents (default 100)")
    args = parser.parse_args(argv)
    from summarize.recipes import DEFAULT_CANDIDATES, RECIPES
    from summarize.search import FILL_TARGET, analyse, build

    try:
        docs = documents(args.limit)
    except data.DataMissing as exc:
        print(f"skipped: {exc}")
        return
    checks = over = under = 0
    fills, failures = [], []
    for n, (name, doc) in enumerate(docs, 1):
        analysis = analyse(doc)
        for budget in BUDGETS:
            for recipe in RECIPES[:DEFAULT_CANDIDATES]:
                draft = build(analysis, recipe, budget)
                checks += 1
                if draft.words > budget:
                    over += 1
                    failures.append((name, budget, recipe.name, draft.words))
                if doc.word_count > budget:
                    fills.append(draft.words / budget)
                    if draft.words < FILL_TARGET * budget:
                        under += 1
                        failures.append((name, budget, recipe.name, draft.words))
        print(f"\r{n}/{len(docs)} documents, {checks} drafts, {over} over budget, {under} under 95%", end="", file=sys.stderr)
    print(file=sys.stderr)
    fills.sort()
    print(f"{len(docs)} documents ({len(docs) - args.limit} demo + {args.limit} external) x {len(BUDGETS)} budgets x "
          f"{DEFAULT_CANDIDATES} recipes = {checks} drafts: {over} over budget, {under} under 95% filled; "
          f"fill median {100 * fills[len(fills) // 2]:.1f}%, minimum {100 * fills[0]:.1f}%")
    out = save("budget_check", {"documents": len(docs), "drafts": checks, "over_budget": over, "under_95": under,
                                "fill_median": fills[len(fills) // 2], "fill_min": fills[0], "failures": failures[:50],
                                "commit": COMMIT or None})
    print(f"written {out}")
    if over or under:
        sys.exit(1)


if __name__ == "__main__":
    main()
