"""Sentences of a document, each with its place: block, section and offset.

The sentence split and the word count themselves are ``scoring.text``'s (one rule for the
scorers and the summarizer); this module applies them to a reading.Document.
"""

from __future__ import annotations

from dataclasses import dataclass

from scoring.text import count_words, split_offsets


@dataclass(frozen=True)
class Sentence:
    """A sentence with its place in the document."""

    text: str
    index: int  # position among all sentences of the document
    block: int  # index of the block (paragraph, item, heading) it came from
    section: int  # index of the section (heading) it sits under; 0 before the first heading
    start: int  # character offset in the block's text

    @property
    def words(self) -> int:
        return count_words(self.text)


def segment(document) -> list[Sentence]:
    """Sentences of a reading.Document, each tagged with its block and section.

    Headings are not sentences (they label sections); list items and paragraphs are split.
    """
    sentences: list[Sentence] = []
    section = 0
    for b, block in enumerate(document.blocks):
        if block.kind == "heading":
            section += 1
            continue
        for text, start in split_offsets(block.text):
            sentences.append(Sentence(text, len(sentences), b, section, start))
    return sentences
