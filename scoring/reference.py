"""Scores against a reference summary: ROUGE and BERTScore.

This module owns the two reference-based measures boildown reports, both computed by their
published implementations rather than re-implemented here:

* ROUGE (Lin, 2004) through Google's ``rouge-score`` package: ROUGE-N, ROUGE-L (one LCS over
  the whole text) and ROUGE-Lsum (summary-level union LCS over sentences). For ROUGE-Lsum both
  texts are first put one sentence per line (``split_sentences``), which is the input the
  original ROUGE-1.5.5.pl script reads; with several references the best one is kept per ROUGE
  type, by F1, as ``rouge_score.RougeScorer.score_multi`` does.
* BERTScore (Zhang et al., 2020) through the ``bert-score`` package, with the packaged
  all-MiniLM-L6-v2 encoder (all 6 layers, no baseline rescaling: no baseline file exists for
  this model). With several references, precision, recall and F1 are each the maximum over the
  references (bert-score's own rule).

Decided behaviour for degenerate input, the same for both: an empty summary scores 0 on every
measure; an empty reference is a ``ValueError``. Nothing heavy (rouge-score, nltk, torch,
transformers, bert-score) is imported until a score is asked for, and ``scoring.models`` is
imported first so the Hugging Face libraries are offline before they load.
"""

from __future__ import annotations

import contextlib
import functools
import re
import warnings
from collections.abc import Sequence
from dataclasses import dataclass, field

from scoring import models  # first: importing it forces the Hugging Face libraries offline
from scoring.base import BaseScorer, Column, Result, Signature, result_dict

ROUGE_TYPES = ("rouge1", "rouge2", "rougeL", "rougeLsum")
SPLITS = ("syntok", "lines")
_ROUGE_N = re.compile(r"rouge[1-9]$")  # rouge-score accepts rouge1 ... rouge9

# all-MiniLM-L6-v2 has 6 transformer layers (its config.json: num_hidden_layers = 6).
ENCODER_LAYERS = 6

Reference = str | Sequence[str]


# --------------------------------------------------------------------------- references


def _references(reference: Reference | None, measure: str) -> tuple[str, ...]:
    """The reference(s) as a tuple of non-empty texts, or a ValueError naming the bad one."""
    if reference is None:
        raise ValueError(f"{measure} compares a summary with a reference summary: pass reference=<text or list of texts>")
    refs = (reference,) if isinstance(reference, str) else tuple(reference)
    if not refs:
        raise ValueError(f"the list of references is empty: {measure} needs at least one reference summary")
    for i, ref in enumerate(refs):
        which = "the reference" if len(refs) == 1 else f"reference {i} (of {len(refs)})"
        if not isinstance(ref, str):
            raise ValueError(f"{which} is a {type(ref).__name__}, not text")
        if not ref.strip():
            raise ValueError(f"{which} is empty: {measure} needs a reference summary with words in it")
    return refs


# --------------------------------------------------------------------------- ROUGE


@dataclass(frozen=True)
class RougeConfig:
    """Settings of the ROUGE scorer (CLI defaults and help read these).

    ``types``: rouge1 ... rouge9, rougeL, rougeLsum. ``stemmer``: rouge-score's Porter stemmer
    (NLTK's extended mode, applied to words longer than 3 characters). ``split``: how ROUGE-Lsum
    finds sentences: ``syntok`` splits running text (single line breaks inside a paragraph are
    not boundaries); ``lines`` takes the texts as already one sentence per line.
    """

    types: tuple[str, ...] = ROUGE_TYPES
    stemmer: bool = True
    split: str = "syntok"

    def __post_init__(self):
        if isinstance(self.types, str) or not isinstance(self.types, Sequence):
            raise ValueError(f"types must be a sequence of ROUGE type names such as {ROUGE_TYPES}, got {self.types!r}")
        types = tuple(self.types)
        object.__setattr__(self, "types", types)
        if not types:
            raise ValueError(f"types is empty: choose at least one of {ROUGE_TYPES} (or rouge3 ... rouge9)")
        for name in types:
            if not isinstance(name, str) or not (_ROUGE_N.match(name) or name in ("rougeL", "rougeLsum")):
                raise ValueError(f"unknown ROUGE type {name!r}: expected rouge1 ... rouge9, rougeL or rougeLsum")
        if len(set(types)) != len(types):
            raise ValueError(f"types lists a ROUGE type twice: {types}")
        if not isinstance(self.stemmer, bool):
            raise ValueError(f"stemmer must be True or False, got {self.stemmer!r}")
        if self.split not in SPLITS:
            raise ValueError(f"split must be one of {SPLITS}, got {self.split!r}")


@dataclass(frozen=True)
class RougeScore(Result):
    """ROUGE of one summary: precision, recall and F1 per type, and which reference each used."""

    scores: dict[str, dict[str, float]]  # {type: {"precision", "recall", "f1"}}
    references: int  # how many references were given
    best_reference: dict[str, int]  # {type: index of the reference kept (best F1, first on ties)}
    signature: Signature = field(compare=False)

    @property
    def value(self) -> float:
        """The headline: ROUGE-Lsum F1 when computed, else the first type's F1."""
        return self.f1("rougeLsum" if "rougeLsum" in self.scores else next(iter(self.scores)))

    def f1(self, rouge_type: str = "rougeLsum") -> float:
        if rouge_type not in self.scores:
            raise ValueError(f"{rouge_type!r} was not computed; this score has {list(self.scores)}")
        return self.scores[rouge_type]["f1"]

    def to_dict(self) -> dict:
        return result_dict(self, scores={kind: dict(prf) for kind, prf in self.scores.items()},
                           best_reference=dict(self.best_reference))


class RougeScorer(BaseScorer, name="rouge", label="ROUGE", needs="references", config=RougeConfig):
    """ROUGE F1 against the reference summaries given (rouge-score, stemmed, ROUGE-Lsum on one
    sentence per line as ROUGE-1.5.5.pl reads it; with several references the best per type)."""

    columns = tuple(
        Column(kind, lambda r, kind=kind: r.f1(kind), "num3", header, title)
        for kind, header, title in (("rouge1", "R-1", "ROUGE-1 F1"), ("rouge2", "R-2", "ROUGE-2 F1"),
                                    ("rougeL", "", ""), ("rougeLsum", "R-Lsum", "ROUGE-Lsum F1"))
    )

    def score_many(self, summaries: Sequence[str], *, source=None, references: Reference | None = None) -> list[RougeScore]:
        """Score several summaries against the same reference(s)."""
        return [self.score(s, reference=references) for s in summaries]

    def score(self, summary: str, *, reference: Reference | None = None) -> RougeScore:
        """Score a summary against one reference or the best of several (per type, by F1)."""
        from rouge_score import tokenize

        refs = _references(reference, "ROUGE")
        for i, ref in enumerate(refs):
            if not tokenize.tokenize(ref, None):
                which = "the reference" if len(refs) == 1 else f"reference {i} (of {len(refs)})"
                raise ValueError(
                    f"{which} has no word ROUGE can count: rouge-score keeps only the letters a-z "
                    "and digits 0-9 after lower-casing (it cannot score non-English text)"
                )
        summary = summary or ""
        per_ref = [self._score_one(ref, summary) for ref in refs]
        # The rule of rouge_score.RougeScorer.score_multi (0.1.2): for each type, the reference
        # with the highest F1, the first one on ties (numpy.argmax). It is restated here
        # because score_multi does not say which reference it kept; a test holds the two equal.
        best = {}
        for kind in self.config.types:
            fs = [scores[kind].fmeasure for scores in per_ref]
            best[kind] = max(range(len(fs)), key=fs.__getitem__)
        return RougeScore(
            scores={
                kind: {
                    "precision": float(per_ref[i][kind].precision),
                    "recall": float(per_ref[i][kind].recall),
                    "f1": float(per_ref[i][kind].fmeasure),
                }
                for kind, i in best.items()
            },
            references=len(refs),
            best_reference=best,
            signature=self.signature(),
        )

    def signature(self) -> Signature:
        c = self.config
        return Signature.build(
            "rouge",
            {"types": "+".join(c.types), "stemmed": c.stemmer, "sentences": c.split},
            ("rouge-score", "nltk"),
        )

    # ------------------------------------------------------------------ internals

    def lsum_text(self, text: str) -> str:
        """The text as ROUGE-Lsum reads it: one sentence per line."""
        if self.config.split == "lines":
            return text
        from scoring.text import split_sentences

        return "\n".join(split_sentences(text))

    @functools.cached_property
    def _scorers(self):
        """rouge-score scorers: one for the whole-text types, one for ROUGE-Lsum (sentence lines)."""
        from rouge_score import rouge_scorer

        plain = [t for t in self.config.types if t != "rougeLsum"]
        make = lambda types: rouge_scorer.RougeScorer(types, use_stemmer=self.config.stemmer)  # noqa: E731
        return (make(plain) if plain else None, make(["rougeLsum"]) if "rougeLsum" in self.config.types else None)

    def _score_one(self, ref: str, summary: str) -> dict:
        plain, lsum = self._scorers
        out = dict(plain.score(ref, summary)) if plain else {}
        if lsum:
            out.update(lsum.score(self.lsum_text(ref), self.lsum_text(summary)))
        return out


# --------------------------------------------------------------------------- BERTScore


@dataclass(frozen=True)
class BertScoreConfig:
    """Settings of the BERTScore scorer (CLI defaults and help read these).

    ``num_layers``: how many of MiniLM's 6 layers to run (the last one's output is used).
    ``idf``: weight word pieces by inverse document frequency, counted over the sentences of the
    reference(s) (so the reference needs at least two sentences). The MiniLM tokenizer lower-cases
    by itself, so there is no case setting.
    """

    num_layers: int = ENCODER_LAYERS
    idf: bool = False
    batch_size: int = 16

    def __post_init__(self):
        if isinstance(self.num_layers, bool) or not isinstance(self.num_layers, int) or not 1 <= self.num_layers <= ENCODER_LAYERS:
            raise ValueError(f"num_layers must be a whole number from 1 to {ENCODER_LAYERS} (MiniLM's layers), got {self.num_layers!r}")
        if not isinstance(self.idf, bool):
            raise ValueError(f"idf must be True or False, got {self.idf!r}")
        if isinstance(self.batch_size, bool) or not isinstance(self.batch_size, int) or self.batch_size < 1:
            raise ValueError(f"batch_size must be a whole number of at least 1, got {self.batch_size!r}")


@dataclass(frozen=True)
class BertScore(Result):
    """BERTScore of one summary (raw cosine-based values, not rescaled)."""

    precision: float
    recall: float
    f1: float
    references: int  # how many references were given (each value is its maximum over them)
    truncated: bool  # the summary or a reference was cut at the encoder's 512 word pieces
    signature: Signature = field(compare=False)

    @property
    def value(self) -> float:
        return self.f1


class BertScoreScorer(BaseScorer, name="bertscore", label="BERTScore", needs="references", config=BertScoreConfig):
    """BERTScore F1 against the reference summaries given (bert-score with the packaged MiniLM
    encoder, on the CPU, offline, not rescaled)."""

    columns = (Column("bertscore", lambda r: r.f1, "num3", "BERTSc", "BERTScore F1"),)

    def score(self, summary: str, *, reference: Reference | None = None) -> BertScore:
        return self.score_many([summary], references=reference)[0]

    def score_many(self, summaries: Sequence[str], *, source=None, references: Reference | None = None) -> list[BertScore]:
        """Score several summaries against the same reference(s) in one bert-score call."""
        refs = _references(references, "BERTScore")
        idf_sentences = _idf_sentences(refs) if self.config.idf else None
        texts = [s or "" for s in summaries]
        todo = [i for i, s in enumerate(texts) if s.strip()]
        sig = self.signature()
        # An empty summary scores 0 without the model: bert-score 0.3.13 fails on empty text
        # under transformers 5 (its empty-text path calls a tokenizer method v5 removed), and
        # its own rule for empty text zeroes P and R but leaves F1 as computed.
        results = [BertScore(0.0, 0.0, 0.0, len(refs), False, sig) for _ in texts]
        if not todo:
            return results
        scorer = _bert_scorer(self.config)
        cands = [texts[i] for i in todo]
        ref_arg = [refs[0]] * len(cands) if len(refs) == 1 else [list(refs)] * len(cands)
        with _quiet():
            if idf_sentences:
                scorer.compute_idf(idf_sentences)
            models.set_threads()
            p, r, f = scorer.score(cands, ref_arg, batch_size=self.config.batch_size)
            refs_cut = any(_too_long(scorer, ref) for ref in refs)
            cut = [refs_cut or _too_long(scorer, texts[i]) for i in todo]
        for n, i in enumerate(todo):
            results[i] = BertScore(float(p[n]), float(r[n]), float(f[n]), len(refs), cut[n], sig)
        return results

    def signature(self) -> Signature:
        c = self.config
        return Signature.build(
            "bertscore",
            {
                "model": f"minilm-l6@{models.short_checksum('encoder')}",
                "dtype": "float32",  # bert-score runs the encoder as loaded, in float32
                "layers": c.num_layers,
                "idf": c.idf,
                "rescaled": False,
            },
            ("bert-score", "torch", "transformers"),
        )


@functools.cache
def _bert_scorer(config: BertScoreConfig):
    """One bert_score.BERTScorer per config, shared by every scorer instance in the process."""
    path = models.encoder_path()
    models.set_threads()
    with _quiet():
        from bert_score import BERTScorer

        try:
            return BERTScorer(
                model_type=str(path),
                num_layers=config.num_layers,
                idf=config.idf,
                lang="en",
                rescale_with_baseline=False,
                device="cpu",
                nthreads=0,  # idf counting in-process: no worker pool forked beside torch
            )
        except Exception as exc:  # a library failure becomes one clear line
            raise models.ModelError(f"BERTScore could not load the encoder at {path} ({exc}); {models.SETUP_HINT}") from exc


def _idf_sentences(refs: tuple[str, ...]) -> list[str]:
    from scoring.text import split_sentences

    sentences = [s for ref in refs for s in split_sentences(ref)]
    if len(sentences) < 2:
        raise ValueError(
            "idf=True weighs word pieces by how many reference sentences hold them, so it needs a "
            f"reference of at least two sentences (got {len(sentences)}); use idf=False"
        )
    return sentences


def _too_long(scorer, text: str) -> bool:
    tokenizer = scorer._tokenizer
    return len(tokenizer.encode(text.strip(), add_special_tokens=True)) > tokenizer.model_max_length


@contextlib.contextmanager
def _quiet():
    """Silence transformers' logging and Python warnings (bert-score's, torch's) inside a block."""
    models.quiet_transformers()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        yield
