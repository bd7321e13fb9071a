"""Extractive baselines for the benchmarks, each written from its paper's description.

Every baseline is ``f(text, budget) -> str``: a summary of at most ``budget`` words
(``count_words``, whitespace words) made of the text's sentences (``split_sentences``) joined
by "\\n", in document order.

- ``lead``: the first ``budget`` words of the text.
- ``textrank``: TextRank (Mihalcea & Tarau, 2004) with sentences as vertices and tf-idf cosine
  similarity as edge weights, ranked by weighted PageRank (damping 0.85).
- ``lexrank``: LexRank (Erkan & Radev, 2004), the thresholded variant: an edge wherever the
  idf-modified cosine exceeds 0.1, each row normalised by its degree, ranked by the power
  method with jump probability 0.15 (damping 0.85).
- ``oracle``: the greedy ROUGE oracle used to label extractive training data (Nallapati et al.,
  2017; Kedzie et al., 2018): repeatedly add the sentence that most raises the mean of ROUGE-1
  and ROUGE-2 F1 against the references, while it fits; stop when nothing raises it.

TextRank and LexRank fill the budget in rank order: a sentence that does not fit is skipped
and smaller, lower-ranked ones are still tried, so the end of the budget is often padded with
short fragments. Nothing is truncated.

``pagerank`` is the random-surfer stationary vector of Brin & Page (1998), by power iteration.
"""

from __future__ import annotations

import functools
import re
from collections import Counter

import numpy as np

from scoring.text import count_words, split_sentences
from summarize.embed import stem

DAMPING = 0.85  # PageRank's damping factor (Brin & Page 1998); TextRank and LexRank use it too
LEXRANK_THRESHOLD = 0.1  # Erkan & Radev (2004) report 0.1 as the best cosine threshold

# A compact English stop list: function words, pronouns, auxiliaries and the pieces that
# splitting contractions on the apostrophe leaves behind ("don't" -> "don", "t").
STOPWORDS = frozenset(
    """
    a about above after again against all also am an and any are as at be because been before
    being below between both but by can could did do does doing don down during each few for
    from further had has have having he her here hers herself him himself his how i if in into
    is it its itself just me more most my myself no nor not now of off on once only or other
    our ours ourselves out over own same she should so some such than that the their theirs
    them themselves then there these they this those through to too under until up upon very
    was we were what when where which while who whom why will with would you your yours
    yourself yourselves s t d ll m re ve
    """.split()
)

_WORD = re.compile(r"[a-z0-9]+")
_NONSPACE = re.compile(r"\S+")


def terms(sentence: str) -> list[str]:
    """Index terms of a sentence: lowercased regex words, stop words dropped, Porter-stemmed.

    The stemmer is the summarizer's cached Porter stemmer (``summarize.embed.stem``, NLTK's
    ``PorterStemmer``); the words and the stop list are the baselines' own.
    """
    return [stem(w) for w in _WORD.findall(sentence.lower()) if w not in STOPWORDS]


def tfidf_vectors(sentences: list[str]) -> np.ndarray:
    """One L2-normalised tf-idf row per sentence; each sentence counts as a document.

    tf = raw count, idf = log(N / df) (Erkan & Radev 2004, eq. 1, whose idf-modified cosine is
    the cosine of these vectors). A sentence without index terms gets a zero row.
    """
    bags = [Counter(terms(s)) for s in sentences]
    vocab: dict[str, int] = {}
    for bag in bags:
        for term in bag:
            vocab.setdefault(term, len(vocab))
    tf = np.zeros((len(sentences), len(vocab)))
    for i, bag in enumerate(bags):
        for term, count in bag.items():
            tf[i, vocab[term]] = count
    if not vocab:
        return tf
    df = (tf > 0).sum(axis=0)
    weights = tf * np.log(len(sentences) / df)
    norms = np.linalg.norm(weights, axis=1, keepdims=True)
    return np.divide(weights, norms, out=np.zeros_like(weights), where=norms > 0)


def cosine_matrix(sentences: list[str]) -> np.ndarray:
    """Pairwise tf-idf cosine similarity of the sentences (diagonal 1 for non-empty rows)."""
    x = tfidf_vectors(sentences)
    return np.clip(x @ x.T, 0.0, 1.0)


def pagerank(weights, damping: float = DAMPING, tol: float = 1e-10, max_iter: int = 1000) -> np.ndarray:
    """Stationary vector of the random surfer on a weighted graph (Brin & Page, 1998).

    ``weights[i, j]`` is the weight of the edge i -> j. The surfer follows an out-edge of i with
    probability ``damping`` in proportion to its weight, and otherwise jumps to a vertex chosen
    uniformly; a vertex without out-edges always jumps. Power iteration until the L1 change is
    below ``tol``. Returns a probability vector (sums to 1).
    """
    w = np.asarray(weights, dtype=float)
    if w.ndim != 2 or w.shape[0] != w.shape[1]:
        raise ValueError(f"pagerank needs a square weight matrix, got shape {w.shape}")
    if (w < 0).any():
        raise ValueError("pagerank needs non-negative edge weights")
    if not 0.0 <= damping < 1.0:
        raise ValueError(f"damping must be in [0, 1), got {damping}")
    n = w.shape[0]
    if n == 0:
        return np.zeros(0)
    out = w.sum(axis=1, keepdims=True)
    transition = np.divide(w, out, out=np.full_like(w, 1.0 / n), where=out > 0)
    p = np.full(n, 1.0 / n)
    for _ in range(max_iter):
        new = (1.0 - damping) / n + damping * (transition.T @ p)
        new /= new.sum()
        if np.abs(new - p).sum() < tol:
            return new
        p = new
    return p


def _check_budget(budget: int) -> None:
    if isinstance(budget, bool) or not isinstance(budget, (int, np.integer)) or budget < 0:
        raise ValueError(f"budget must be a non-negative whole number of words, got {budget!r}")


def _fill_in_rank_order(sentences: list[str], scores: np.ndarray, budget: int) -> str:
    """Take sentences best-first while they fit (skipping those that don't), document order out."""
    chosen, used = [], 0
    for i in sorted(range(len(sentences)), key=lambda i: (-scores[i], i)):
        words = count_words(sentences[i])
        if 0 < words <= budget - used:
            chosen.append(i)
            used += words
            if used == budget:
                break
    return "\n".join(sentences[i] for i in sorted(chosen))


def lead(text: str, budget: int) -> str:
    """The first ``budget`` words, one sentence per line (the last may be cut short).

    The cut is made in the original text, so its paragraph breaks still guide sentence
    splitting; the words are exactly ``text.split()[:budget]``.
    """
    _check_budget(budget)
    if budget == 0:
        return ""
    words = [m for _, m in zip(range(budget), _NONSPACE.finditer(text))]
    if not words:
        return ""
    joined = "\n".join(split_sentences(text[: words[-1].end()]))
    tokens = [m.group() for m in words]
    # Sentence splitting never adds or drops a word in practice; if it ever did, keep one line.
    return joined if joined.split() == tokens else " ".join(tokens)


def textrank_scores(sentences: list[str], damping: float = DAMPING) -> np.ndarray:
    """TextRank scores (Mihalcea & Tarau 2004): PageRank over the tf-idf cosine sentence graph.

    Edge weights are the pairwise cosines; no self-loops (a vertex does not vote for itself).
    """
    sim = cosine_matrix(sentences)
    np.fill_diagonal(sim, 0.0)
    return pagerank(sim, damping)


def lexrank_scores(sentences: list[str], threshold: float = LEXRANK_THRESHOLD, damping: float = DAMPING) -> np.ndarray:
    """LexRank scores (Erkan & Radev 2004): binary graph cosine > threshold, degree-normalised.

    As in the paper's algorithm, the cosine matrix includes the diagonal, so every sentence with
    index terms has a self-loop and counts in its own degree.
    """
    adjacency = (cosine_matrix(sentences) > threshold).astype(float)
    return pagerank(adjacency, damping)


def _ranked_summary(text: str, budget: int, rank) -> str:
    """The text's sentences scored by ``rank(sentences)``, filled to the budget best-first."""
    _check_budget(budget)
    sentences = split_sentences(text)
    if budget == 0 or not sentences:
        return ""
    return _fill_in_rank_order(sentences, rank(sentences), budget)


def textrank(text: str, budget: int) -> str:
    """TextRank (Mihalcea & Tarau 2004) over a tf-idf cosine sentence graph, filled to the budget."""
    return _ranked_summary(text, budget, textrank_scores)


def lexrank(text: str, budget: int) -> str:
    """LexRank (Erkan & Radev 2004), thresholded at 0.1, power method, filled to the budget."""
    return _ranked_summary(text, budget, lexrank_scores)


# --- greedy ROUGE oracle ------------------------------------------------------------------------


@functools.cache
def _rouge_tokenizer():
    """rouge-score's own tokenizer with stemming, so the oracle optimises what is reported."""
    from rouge_score.tokenizers import DefaultTokenizer

    return DefaultTokenizer(use_stemmer=True)


def _ngrams(tokens: list[str], n: int) -> Counter:
    return Counter(tuple(tokens[i : i + n]) for i in range(len(tokens) - n + 1))


def _f1(overlap: int, predicted: int, reference: int) -> float:
    if overlap == 0 or predicted == 0 or reference == 0:
        return 0.0
    precision, recall = overlap / predicted, overlap / reference
    return 2 * precision * recall / (precision + recall)


def oracle(text: str, budget: int, references: list[str]) -> str:
    """Greedy extractive oracle: add the sentence that most raises (R1 F1 + R2 F1) / 2.

    Each ROUGE type takes the best reference, as rouge-score's ``score_multi`` does. N-gram
    counts come from rouge-score's tokenizer (stemming on) and are updated incrementally, so no
    ROUGE call runs in the loop; bigrams are counted within sentences (a summary's bigrams
    across sentence joins are ignored while selecting). Stops when no sentence that fits
    improves the objective.
    """
    _check_budget(budget)
    if isinstance(references, str):
        raise ValueError("references must be a list of reference summaries, not one string")
    sentences = split_sentences(text)
    if budget == 0 or not sentences or not references:
        return ""
    tokenize = _rouge_tokenizer().tokenize
    refs = []
    for reference in references:
        tokens = tokenize(reference)
        refs.append((_ngrams(tokens, 1), _ngrams(tokens, 2), len(tokens), max(len(tokens) - 1, 0)))
    cands = []
    for s in sentences:
        tokens = tokenize(s)
        cands.append((_ngrams(tokens, 1), _ngrams(tokens, 2), len(tokens), max(len(tokens) - 1, 0), count_words(s)))

    have1: Counter = Counter()
    have2: Counter = Counter()
    n1 = n2 = used = 0
    overlap1 = [0] * len(refs)
    overlap2 = [0] * len(refs)
    best_score = 0.0
    chosen: list[int] = []
    remaining = set(range(len(sentences)))

    def gains(cand: Counter, have: Counter, ref: Counter) -> int:
        gain = 0
        for gram, count in cand.items():
            target = ref.get(gram)
            if target:
                before = have.get(gram, 0)
                if before < target:
                    gain += min(before + count, target) - before
        return gain

    while True:
        pick, pick_score, pick_state = None, best_score, None
        for i in sorted(remaining):
            c1, c2, t1, t2, words = cands[i]
            if words == 0 or words > budget - used:
                continue
            o1 = [overlap1[r] + gains(c1, have1, refs[r][0]) for r in range(len(refs))]
            o2 = [overlap2[r] + gains(c2, have2, refs[r][1]) for r in range(len(refs))]
            f1 = max(_f1(o1[r], n1 + t1, refs[r][2]) for r in range(len(refs)))
            f2 = max(_f1(o2[r], n2 + t2, refs[r][3]) for r in range(len(refs)))
            score = (f1 + f2) / 2
            if score > pick_score:
                pick, pick_score, pick_state = i, score, (o1, o2)
        if pick is None:
            break
        c1, c2, t1, t2, words = cands[pick]
        have1.update(c1)
        have2.update(c2)
        n1, n2, used = n1 + t1, n2 + t2, used + words
        overlap1, overlap2 = pick_state
        best_score = pick_score
        chosen.append(pick)
        remaining.discard(pick)
    return "\n".join(sentences[i] for i in sorted(chosen))


BASELINES = {"lead": lead, "textrank": textrank, "lexrank": lexrank}
"""The reference-free baselines by name; ``oracle`` also needs the references."""
