"""Compression: deletable low-value spans of chosen sentences, found on spaCy's parse.

Span kinds (each a deletion that usually leaves a grammatical sentence):
parentheticals (brackets, paired dashes), appositives, non-restrictive relative clauses,
leading connectives and adverbials ("However,", "In March 2024,"), attributions
("according to ...", "..., the report said"), comma-delimited prepositional phrases and
example lists ("such as ...", "for example ...").

Which deletions to make is decided elsewhere (``summarize.search``) from each deletion's
fluency cost and key-word loss; this module finds spans and applies them cleanly.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

ATTRIBUTION_VERBS = frozenset(
    "say state report note add explain confirm tell announce write argue claim suggest warn".split()
)
CONNECTIVES = frozenset(
    """however moreover furthermore additionally also meanwhile nevertheless nonetheless therefore
    thus consequently indeed instead overall similarly likewise accordingly hence besides still
    notably importantly finally firstly secondly thirdly lastly then again specifically""".split()
)


@dataclass(frozen=True)
class Deletion:
    """A span of one sentence that may be removed."""

    sentence: int  # index of the sentence in the list given to ``find``
    start: int  # character offsets in that sentence's text
    end: int
    kind: str
    text: str

    @property
    def words(self) -> int:
        return len(self.text.split())


def find(sentences: list[str], nlp=None) -> list[Deletion]:
    """Every deletable span of every sentence (possibly overlapping; ``compatible`` sorts that out)."""
    if nlp is None:
        from scoring.models import load_spacy

        nlp = load_spacy()
    out: list[Deletion] = []
    for k, doc in enumerate(nlp.pipe(sentences)):
        text = sentences[k]
        spans = set()
        spans |= _brackets(text)
        spans |= _dash_pairs(text)
        for token in doc:
            if token.dep_ == "appos":
                spans |= _comma_span(doc, token, "appositive")
            elif token.dep_ == "relcl":
                spans |= _comma_span(doc, token, "relative clause", require_wh=True)
            elif token.dep_ == "prep" and token.lower_ in ("according",):
                spans |= _comma_span(doc, token, "attribution", allow_start=True)
            elif token.dep_ == "prep" and token.head.pos_ in ("VERB", "AUX"):
                spans |= _comma_span(doc, token, "prepositional phrase")
            elif token.dep_ in ("amod", "prep") and token.lower_ in ("such",):
                spans |= _comma_span(doc, token, "example")
        spans |= _leading(doc)
        spans |= _trailing_attribution(doc)
        spans |= _example_phrases(text)
        for start, end, kind in sorted(spans):
            if 0 <= start < end <= len(text) and end - start < len(text) * 0.8:
                out.append(Deletion(k, start, end, kind, text[start:end]))
    return _dedupe(out)


def _dedupe(deletions: list[Deletion]) -> list[Deletion]:
    seen, out = set(), []
    for d in deletions:
        key = (d.sentence, d.start, d.end)
        if key not in seen:
            seen.add(key)
            out.append(d)
    return out


def _brackets(text: str) -> set:
    return {(m.start(), m.end(), "parenthetical") for m in re.finditer(r"\s*[\(\[][^()\[\]]{1,240}[\)\]]", text)}


def _dash_pairs(text: str) -> set:
    return {(m.start(), m.end() - 1, "parenthetical") for m in re.finditer(r"\s+[–—-]{1,2}\s[^–—]{1,160}?\s[–—-]{1,2}(\s)", text)}


def _example_phrases(text: str) -> set:
    lead = r",\s(?:such as|for example|for instance|e\.g\.|including|like)\s"
    listed = r"(?:[^,;:.]{1,60},\s)*[^,;:.]{1,60}\s(?:and|or)\s[^,;:.]{1,60}(?=[,;.]|$)"
    single = r"[^,;:.]{1,120}(?=[,;.]|$)"
    pattern = lead + "(?:" + listed + "|" + single + ")"
    return {(m.start(), m.end(), "example") for m in re.finditer(pattern, text)}


def _comma_span(doc, token, kind: str, require_wh: bool = False, allow_start: bool = False) -> set:
    """The token's subtree when commas (or the sentence end) delimit it: ", X," or ", X."."""
    left, right = token.left_edge.i, token.right_edge.i
    if require_wh and doc[left].tag_ not in ("WDT", "WP", "WP$", "WRB"):
        return set()
    before = doc[left - 1] if left > 0 else None
    after = doc[right + 1] if right + 1 < len(doc) else None
    text = doc.text
    if before is not None and before.text == ",":
        start = before.idx
        if after is not None and after.text == ",":
            closing = right + 2 < len(doc) and doc[right + 2].text in ('"', "\u201d", "'", "''")
            # keep the comma that ends quoted speech: "My name is Whonk, fleet one," he said.
            return {(start, after.idx if closing else after.idx + 1, kind)}
        if after is None or after.is_punct and after.text in ".;:!?":
            return {(start, doc[right].idx + len(doc[right].text), kind)}
        return set()
    if allow_start and left == 0 and after is not None and after.text == ",":
        end = after.idx + 1
        while end < len(text) and text[end] == " ":
            end += 1
        return {(0, end, kind)}
    return set()


def _leading(doc) -> set:
    """Sentence-initial connective or adverbial phrase closed by a comma."""
    if len(doc) < 4:
        return set()
    first = doc[0]
    text = doc.text
    candidates = []
    if first.lower_ in CONNECTIVES and len(doc) > 1 and doc[1].text == ",":
        candidates.append(1)
    for token in doc:
        if token.head.i == token.i or token.i > 12:
            continue
        if token.left_edge.i == 0 and token.dep_ in ("prep", "advmod", "npadvmod", "advcl", "mark"):
            right = token.right_edge.i
            if right + 1 < len(doc) and doc[right + 1].text == "," and right < len(doc) - 4:
                candidates.append(right + 1)
    out = set()
    for comma in candidates:
        end = doc[comma].idx + 1
        while end < len(text) and text[end] == " ":
            end += 1
        out.add((0, end, "connective" if comma == 1 else "leading phrase"))
    return out


def _trailing_attribution(doc) -> set:
    """", the board said." or ", officials reported." at the end of a sentence."""
    for token in doc:
        if token.lemma_ in ATTRIBUTION_VERBS and token.i > 2:
            subj = [c for c in token.children if c.dep_ in ("nsubj", "nsubjpass") and c.i < token.i]
            if not subj:
                continue
            left = subj[0].left_edge.i
            if left > 0 and doc[left - 1].text == "," and token.i + 1 < len(doc) and doc[token.i + 1].is_punct:
                if doc[token.i + 1].text in ".!?" and token.i + 1 == len(doc) - 1:
                    return {(doc[left - 1].idx, token.idx + len(token.text), "attribution")}
    return set()


def compatible(deletions: list[Deletion]) -> bool:
    """True when no two deletions of the same sentence overlap."""
    by_sentence: dict[int, list[tuple[int, int]]] = {}
    for d in deletions:
        by_sentence.setdefault(d.sentence, []).append((d.start, d.end))
    for spans in by_sentence.values():
        spans.sort()
        for (a1, b1), (a2, b2) in zip(spans, spans[1:]):
            if a2 < b1:
                return False
    return True


def apply(text: str, deletions: list[Deletion]) -> str:
    """Remove the spans from one sentence and tidy spaces, commas and the first capital."""
    out = text
    for d in sorted(deletions, key=lambda d: -d.start):
        out = out[: d.start] + " " + out[d.end :]
    out = re.sub(r"\s+", " ", out).strip()
    out = re.sub(r"\s+([,.;:!?)\]])", r"\1", out)
    out = re.sub(r"([(\[])\s+", r"\1", out)
    out = re.sub(r",\s*([,.;:!?])", r"\1", out)
    out = re.sub(r"^[,;:\s]+", "", out)
    if out and text[:1].isupper() and out[:1].islower():
        out = out[0].upper() + out[1:]
    return out
