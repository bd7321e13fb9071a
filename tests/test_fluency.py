"""Fluency: the perplexity identity, sentence flags, and shuffled sentences against originals."""

from __future__ import annotations

import math
import random

import pytest

from scoring.fluency import FluencyConfig, FluencyScorer, perplexity
from conftest import shared_data


class UniformModel:
    """A toy model uniform over V outcomes: every token (here: word) has probability 1/V."""

    def __init__(self, v: int):
        self.v = v

    def logprobs(self, pieces):
        return [[[-math.log(self.v)] * len(piece.split()) for piece in text] for text in pieces]


@pytest.mark.parametrize("v", [2, 10, 50257])
def test_uniform_model_has_perplexity_v(v):
    # Jurafsky & Martin, Speech and Language Processing (3rd ed.), ch. 3: a model uniform over
    # V outcomes has perplexity V (uniformly random digits: 10).
    scorer = FluencyScorer(model=UniformModel(v))
    result = scorer.score("The reservoir was full. The works ran well.", source="Rain fell on the hills all week.")
    assert result.perplexity == pytest.approx(v, rel=1e-9)
    assert result.reference_perplexity == pytest.approx(v, rel=1e-9)
    assert result.value == pytest.approx(1.0)  # as fluent as its source


def test_perplexity_function():
    assert perplexity([math.log(0.5)] * 4) == pytest.approx(2.0)
    with pytest.raises(ValueError):
        perplexity([])


def test_empty_summary_scores_zero():
    result = FluencyScorer(model=UniformModel(10)).score("", source="Some source text here.")
    assert result.value == 0.0 and result.sentences == ()


def test_repetition_and_unfinished_flags():
    scorer = FluencyScorer(model=UniformModel(10))
    text = "The board met in March to review the plan. The board met in March to review the plan. And then the"
    flags = [s.flags for s in scorer.score(text).sentences]
    assert "repeats" in flags[1] and "repeats" not in flags[0]
    assert "unfinished" in flags[-1]


@pytest.mark.parametrize("bad", [{"scale": 0}, {"flag_penalty": 2}, {"dtype": "float16"}, {"reference_sentences": 0}])
def test_config_is_validated(bad):
    with pytest.raises(ValueError):
        FluencyConfig(**bad)


@pytest.mark.models
def test_no_verb_flag_from_a_deletion():
    scorer = FluencyScorer()
    result = scorer.score("The new filters at the works, installed last spring by the contractor.")
    assert "no verb" in result.sentences[0].flags


def _abstract_sentences(n: int) -> list[str]:
    """Sentences of paper abstracts: the 30 LongSciVerify abstracts, then the PubMed abstracts
    that LongEval holds as its "human" summaries."""
    import json

    folder = shared_data("longdoc", "raw_data", "LongSciVerify")
    out = []
    for name in ("arxiv_test.json", "pubmed_test.json"):
        data = json.loads((folder / name).read_text())
        records = data if isinstance(data, list) else list(data.values())
        for record in records:
            abstract = record["abstract_text"]
            sentences = abstract if isinstance(abstract, list) else [abstract]
            text = " ".join(" ".join(sentences).replace("<S>", " ").replace("</S>", " ").split())
            # the release is lower-cased and tokenised: sentences end with a free-standing " ."
            for s in text.split(" . "):
                s = s.strip().rstrip(" .") + " ."
                if len(s.split()) >= 8:
                    out.append(s)
    longeval = json.loads(shared_data("longdoc", "raw_data", "LongEval", "pubmed_summary_src_doc_data.json").read_text())
    for key in sorted(k for k in longeval if k.endswith("_human")):
        text = " ".join(longeval[key]["summary"].replace("<br />", " ").split())
        for s in text.split(" . "):
            s = s.strip().rstrip(" .") + " ."
            if len(s.split()) >= 8:
                out.append(s)
    return out[:n]


@pytest.mark.models
def test_shuffled_sentences_score_lower():
    # Common practice (no single source; see ../shared/CHECKS.md): shuffling the words of a
    # fluent sentence raises a language model's perplexity a great deal. The issue asks that the
    # shuffled sentence score lower than the original for at least 95% of 200 abstract sentences
    # (LongSciVerify abstracts give 197 sentences of 8+ words; LongEval's PubMed abstracts the rest).
    sentences = _abstract_sentences(200)
    assert len(sentences) == 200
    rng = random.Random(0)
    shuffled = []
    for s in sentences:
        words = s.split()
        rng.shuffle(words)
        shuffled.append(" ".join(words))
    scorer = FluencyScorer()
    original = scorer.score_many(sentences)
    mixed = scorer.score_many(shuffled)
    lower = sum(m.value < o.value or (m.value == o.value and m.perplexity > o.perplexity) for o, m in zip(original, mixed))
    assert lower >= 190, f"only {lower}/200 shuffled sentences scored lower"


@pytest.mark.models
def test_batched_reads_equal_a_direct_log_softmax():
    # The batched read (texts of unequal length padded on the right, the vocabulary layer run
    # only where a real token is predicted, log-probabilities as logit - logsumexp) must give
    # what torch.log_softmax over the model's full logits gives for each text read alone.
    import torch

    from scoring.lm import CausalLM

    texts = [["The board met on Tuesday."], ["Rain fell.", "The reservoir rose by a third over the week."],
             ["A much longer sentence about the pumping station, its two engines and the old canal."]]
    model = CausalLM("float32")
    batched = model.logprobs(texts)
    lm, tok = model.model, model.tokenizer
    bos = tok.convert_tokens_to_ids("<|endoftext|>")
    for pieces, got in zip(texts, batched):
        ids = [bos] + tok(" ".join(pieces), add_special_tokens=False).input_ids
        with torch.inference_mode():
            logits = lm(input_ids=torch.tensor([ids])).logits[0, :-1].float()
        want = torch.log_softmax(logits, dim=-1).gather(1, torch.tensor(ids[1:])[:, None])[:, 0].tolist()
        flat = [x for piece in got for x in piece]
        assert len(flat) == len(want)
        assert flat == pytest.approx(want, abs=1e-3)
