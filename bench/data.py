"""Loaders for the external evaluation data in ../shared/data (read in place, never copied).

Each loader returns a list of ``Example``: the text to summarize, its human reference
summaries, and the word budget the references imply (whitespace words, ``count_words``).

- ``squality(split)``: SQuALITY v1.3 stories with their Project Gutenberg production notes
  removed (``strip_gutenberg``); the references are the 4 answers to ``questions[0]``, "What is
  the plot of the story?"; budget = the references' mean length, rounded.
- ``longsciverify()``: the 15 arXiv + 15 PubMed papers of LongSciVerify; the reference is the
  abstract; budget = its length.

A missing data folder raises ``DataMissing`` (a clear reason, no traceback): tests turn it into
``pytest.skip``, benchmark scripts into a clean exit (``bench.common.need`` behaviour).
"""

from __future__ import annotations

import json
import re
from dataclasses import dataclass, field
from pathlib import Path

from bench.common import DATA
from scoring.text import count_words

SQUALITY = DATA / "squality"
LONGSCIVERIFY = DATA / "longdoc" / "raw_data" / "LongSciVerify"
SPLITS = ("train", "dev", "test")


class DataMissing(Exception):
    """The external data (../shared/data beside the project) is absent."""


@dataclass(frozen=True)
class Example:
    id: str
    source_text: str
    references: list[str]
    budget_words: int
    meta: dict = field(default_factory=dict)


def require(path: Path) -> Path:
    """``path`` if it exists, else ``DataMissing`` naming it (the message ``need()`` prints)."""
    if not path.exists():
        raise DataMissing(f"external data {path} is absent (expected ../shared/data beside the project)")
    return path


# --- SQuALITY -------------------------------------------------------------------------------

# Project Gutenberg production notes, as they occur in the SQuALITY stories (all 127 checked):
#   "[Transcriber's Note: This etext was produced from <magazine>. Extensive research ... renewed.]"
#   (also "[Transcriber Note: ...]", wrapped over several lines);
#   "Produced by <names> and the Online\nDistributed Proofreading Team at http://www.pgdp.net";
#   "*** START OF THE PROJECT GUTENBERG EBOOK <TITLE> ***";
#   a closing "Transcriber's Note:" / "TRANSCRIBER'S NOTES:" section after the story;
#   "End of Project Gutenberg's <title>, by <author>" and whatever licence text follows it;
#   the transcriber's page markers, a line holding only "[12]" (one test story).
_BRACKETED_NOTE = re.compile(r"\[\s*transcriber'?s?\s+notes?\s*:[^\]]*\]", re.I)
_PRODUCED_BY = re.compile(
    r"^[ \t]*produced by\b[^\n]*(?:\n[^\n]*(?:proofreading|pgdp|https?://|www\.)[^\n]*)*\n?", re.I | re.M
)
_START_LINE = re.compile(r"^[ \t]*\*{3}[^\n]*\bstart of (?:the|this) project gutenberg[^\n]*\n?", re.I | re.M)
# End-of-book lines: everything from them on is licence and boilerplate.
_END_OF_BOOK = re.compile(r"^[ \t]*(?:\*{3}[ \t]*)?end of (?:the |this )?project gutenberg", re.I | re.M)
# A closing transcriber's-notes section (unbracketed heading): everything after it is notes.
_NOTES_HEADING = re.compile(r"^[ \t]*transcriber'?s?\s+notes?\s*:?[ \t]*$", re.I | re.M)
_PAGE_MARKER = re.compile(r"^[ \t]*\[\d+\][ \t]*$", re.M)
# Free-standing note sentences (outside brackets), up to the end of their paragraph.
_ETEXT_NOTE = re.compile(
    r"(?:this (?:e-?text|e-?book) was produced from|extensive research did not uncover"
    r"|(?:minor spelling and |obvious )?typographical errors have been corrected)[^\n]*(?:\n(?![ \t]*\n)[^\n]*)*",
    re.I,
)


def _credit_or_story(match: re.Match) -> str:
    """Drop a "Produced by" paragraph only when it is a volunteers' credit (a story line may
    begin "Produced by" too)."""
    credit = re.search(r"proofread|pgdp|https?://|www\.|online distributed", match.group(0), re.I)
    return "" if credit else match.group(0)


def strip_gutenberg(text: str) -> str:
    """The story without Project Gutenberg production notes, layout whitespace tidied.

    Removes transcriber's notes (bracketed, or a closing notes section) and page markers
    ("[12]" alone on a line), "Produced by ..." credits, "*** START OF ... ***" lines,
    "This etext was produced from ..." paragraphs, and everything from an end-of-book line
    ("End of Project Gutenberg's ...", "*** END OF THE PROJECT GUTENBERG EBOOK ...") on, since
    the licence follows it. Lines are stripped,
    whitespace-only lines become blank, and paragraphs are separated by one blank line.
    """
    end = _END_OF_BOOK.search(text)
    if end:
        text = text[: end.start()]
    heading = _NOTES_HEADING.search(text)
    if heading and heading.start() > len(text) // 2:
        text = text[: heading.start()]
    text = _BRACKETED_NOTE.sub("\n", text)
    text = _PRODUCED_BY.sub(_credit_or_story, text)
    text = _NOTES_HEADING.sub("", text)
    text = _START_LINE.sub("", text)
    text = _ETEXT_NOTE.sub("", text)
    text = _PAGE_MARKER.sub("", text)
    lines = [line.strip() for line in text.splitlines()]
    text = "\n".join(lines)
    text = re.sub(r"\n{3,}", "\n\n", text)
    return text.strip()


def squality(split: str = "test") -> list[Example]:
    """SQuALITY stories of one split ("train" 50, "dev" 25, "test" 52) with their plot summaries."""
    if split not in SPLITS:
        raise ValueError(f"unknown SQuALITY split {split!r}; choose one of {', '.join(SPLITS)}")
    path = require(SQUALITY / f"{split}.jsonl")
    examples = []
    with path.open(encoding="utf-8") as f:
        for line in f:
            if not line.strip():
                continue
            record = json.loads(line)
            question = record["questions"][0]
            references = [r["response_text"].strip() for r in question["responses"]]
            budget = round(sum(count_words(r) for r in references) / len(references))
            meta = {
                "dataset": "squality",
                "split": split,
                "passage_id": record["metadata"]["passage_id"],
                "question": question["question_text"],
            }
            examples.append(
                Example(record["metadata"]["uid"], strip_gutenberg(record["document"]), references, budget, meta)
            )
    return examples


# --- LongSciVerify ----------------------------------------------------------------------------

_SENTENCE_TAG = re.compile(r"</?s>", re.I)


def _tagged_sentences(units: list[str]) -> list[str]:
    """The "<S> ... </S>" spans of the release's abstract, whitespace normalised."""
    text = " ".join(units)
    spans = re.findall(r"<s>(.*?)</s>", text, flags=re.I | re.S) or [text]
    return [s for s in (" ".join(span.split()) for span in spans) if s]


def _untag(sentences: list[str]) -> str:
    """Sentences joined by spaces, "<S>"/"</S>" tags removed, whitespace normalised."""
    return " ".join(" ".join(_SENTENCE_TAG.sub(" ", s).split()) for s in sentences).strip()


def longsciverify() -> list[Example]:
    """The 30 LongSciVerify papers (15 arXiv, then 15 PubMed); reference = the abstract.

    ``source_text`` is the body (``article_text``), one release sentence per paragraph
    (sentences separated by a blank line). The release text is lowercased and tokenized
    ("it is known . we show"), which a rule-based splitter cannot segment: joined with spaces,
    syntok finds 25 sentences in a 314-sentence paper, so the release's own boundaries are kept
    as paragraph breaks. Word counts are the same either way. ``meta["sections"]`` holds
    ``(section name, section text)`` pairs (sentences joined by spaces) and
    ``meta["sentences"]`` the release's sentence list. The reference abstract is likewise one
    "<S> ... </S>" span per paragraph, tags removed.
    """
    folder = require(LONGSCIVERIFY)
    examples = []
    for domain in ("arxiv", "pubmed"):
        records = json.loads(require(folder / f"{domain}_test.json").read_text(encoding="utf-8"))
        for record in records:
            sentences = [_untag([s]) for s in record["article_text"]]
            sentences = [s for s in sentences if s]
            abstract = "\n\n".join(_tagged_sentences(record["abstract_text"]))
            sections = [
                (name, _untag(body)) for name, body in zip(record["section_names"], record["sections"], strict=True)
            ]
            meta = {
                "dataset": "longsciverify",
                "domain": domain,
                "sections": sections,
                "sentences": sentences,
            }
            examples.append(Example(record["article_id"], "\n\n".join(sentences), [abstract], count_words(abstract), meta))
    return examples
