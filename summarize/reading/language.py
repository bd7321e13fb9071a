"""Can boildown's English-only models use a text? ``looks_english`` (a function-word rule of
thumb) and ``text_problem`` (that check plus the warning or refusal for text read with a
guessed legacy encoding), as the command line and batch runs apply them.
"""

from __future__ import annotations

import re

from summarize.reading.document import Document

ENGLISH_THRESHOLD = 0.12
"""``looks_english`` says yes when at least this share of word tokens are common English
function words (a list of about 140). Ordinary English prose scores about 0.25-0.45, even
reports dense with names and figures; French, German, Spanish, Dutch or Polish prose scores
below 0.05. A rule of thumb, not language identification: lists of names, numbers or very
short texts can fall either way."""
_ENGLISH_SAMPLE = 2000
_ENGLISH_MIN_TOKENS = 20

ASCII_SHARE_MIN = 0.5
"""A file that is not valid UTF-8 is decoded with a guessed legacy encoding; when fewer than
half of the resulting non-space characters are ASCII the guess produced something that is not
English (English in cp1252 or Latin-1 is about 97-100% ASCII; random bytes read as big5 or
cp1251 score under 10%), and the record says so instead of summarizing noise."""

_UTF = frozenset({"utf-8", "utf-8-sig", "utf-16", "utf-32", "ascii"})

_WORD_RE = re.compile(r"[^\W\d_]+(?:['\u2019][^\W\d_]+)*")
# Function words that are frequent in English and rare as whole words in the other major
# Latin-script languages (so "a", "i", "in", "on", "is", "as", "an", "do", "no", "so", "also",
# "will", "was", "over" are left out).
_ENGLISH_FUNCTION_WORDS = frozenset(
    """
    the of and to that for with by at from this be are were been being have has had having
    it its it's they them their there these those him his she her hers we our ours you your
    yours my mine what which who whom whose when where why how not nor or but if then than
    because while though although would should could can shall may might must does did done
    any all some each every other such only very more into onto upon about after before
    between through during against without within up out off again further here just now
    one two both few many much own same too until yet whether however therefore itself
    themselves himself herself ourselves yourself isn't aren't wasn't weren't don't doesn't
    didn't won't can't couldn't shouldn't wouldn't i'm we're they're you're that's there's
    """.split()
)


def looks_english(text: str) -> bool:
    """Cheap rule of thumb: is ``text`` probably English?

    Looks at the first ~2000 word tokens and measures the share that are very common English
    function words (a stop list of about 140 words). True when that share is at least
    ``ENGLISH_THRESHOLD`` (0.12). Texts with fewer than 20 word tokens give True, since there
    is too little evidence to refuse them. Not a language identifier: use it to warn.
    """
    tokens = []
    for match in _WORD_RE.finditer(text):
        tokens.append(match.group(0).lower().replace("\u2019", "'"))
        if len(tokens) >= _ENGLISH_SAMPLE:
            break
    if len(tokens) < _ENGLISH_MIN_TOKENS:
        return True
    hits = sum(1 for t in tokens if t in _ENGLISH_FUNCTION_WORDS)
    return hits / len(tokens) >= ENGLISH_THRESHOLD


def text_problem(document: Document, name: str, any_language: bool) -> tuple[str | None, list[str]]:
    """Whether boildown's English-only models can use a document's text: (the one-line reason
    to refuse it or None, warnings). ``name`` is how the message names the document. Text read
    with a guessed legacy encoding gets a warning, and is refused when the guess gave mostly
    non-ASCII text; text that does not look English is refused unless ``any_language``."""
    text = document.text
    warnings = []
    guessed = document.encoding is not None and document.encoding.lower() not in _UTF
    if guessed:
        visible = [c for c in text[:20000] if not c.isspace()]
        share = sum(1 for c in visible if c.isascii()) / max(1, len(visible))
        if share < ASCII_SHARE_MIN and not any_language:
            return (f"{name} is not valid UTF-8, and read as {document.encoding} (the closest guess) it does not "
                    "look like English text; re-save it as UTF-8 (or pass --any-language to use it anyway)"), warnings
        warnings.append(f"not valid UTF-8: read as {document.encoding} (a guess); check accented characters")
    if not any_language and not looks_english(text):
        read_as = f" (read as {document.encoding}: it is not valid UTF-8)" if guessed else ""
        return (f"{name} does not look like English text{read_as}; boildown's models are English-only "
                "(pass --any-language to use it anyway)"), warnings
    return None, warnings
