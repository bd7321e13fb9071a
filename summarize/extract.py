"""Extraction: sentence salience and budgeted selection.

Salience is graph centrality in the TextRank/LexRank family (Mihalcea & Tarau 2004; Erkan &
Radev 2004): PageRank over a sentence graph whose edge weights are cosine similarities of
MiniLM embeddings mixed with tf-idf vectors, multiplied by position and section priors.

Selection maximises the budgeted submodular objective of Lin & Bilmes (2011),
``F(S) = L(S) + lambda * R(S)``, with the coverage term
``L(S) = sum_i min(C_i(S), alpha * C_i(V))`` (``C_i(S)`` = similarity of sentence i to the
selection) and the diversity reward ``R(S) = sum_k sqrt(sum_{j in S, j in P_k} r_j)`` over
clusters ``P_k`` of the sentences (k-means on the vectors), where ``r_j`` is the sentence's
salience. A third, concept term joins them when ``concept_weight`` is above 0: the weighted
coverage of the document's recurring word bigrams, the "concepts" of Gillick & Favre (2009, "A
scalable global model for summarization"): ``K(S) = sum of w_c over the concepts c that some
sentence of S contains``, ``w_c`` = the number of sentences containing c, bigrams of two stop
words and those in fewer than ``concept_min_count`` sentences left out. It is a weighted coverage
function, so monotone submodular, and the sum stays submodular (Lin & Bilmes 2011). It is scaled
so that covering every concept is worth ``concept_weight`` times the largest value of ``L``.
The greedy step takes the sentence with the best gain per cost^``scale_power``
(cost = words) that still fits, and the result is compared with the best single sentence,
as in their Algorithm 1. Sentences come back in document order.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from summarize.recipes import ExtractConfig


SUMMARY_HEADINGS = ("abstract", "summary", "introduction", "conclusion", "conclusions", "overview",
                    "key findings", "findings", "recommendations", "discussion", "outcome", "results")


def similarity(vectors: np.ndarray, tfidf: np.ndarray, embed_weight: float) -> np.ndarray:
    """Mixed cosine similarity, negatives clipped to zero, zero diagonal."""
    sim = embed_weight * (vectors @ vectors.T) + (1 - embed_weight) * (tfidf @ tfidf.T)
    sim = np.clip(sim, 0.0, None)
    np.fill_diagonal(sim, 0.0)
    return sim


def pagerank(weights: np.ndarray, damping: float = 0.85, prior: np.ndarray | None = None,
             tol: float = 1e-8, max_iter: int = 200) -> np.ndarray:
    """Weighted PageRank by power iteration (Brin & Page 1998); a prior makes it personalised."""
    n = weights.shape[0]
    if n == 0:
        return np.zeros(0)
    jump = np.full(n, 1.0 / n) if prior is None else prior / prior.sum()
    out = weights.sum(axis=1)
    transition = np.divide(weights, out[:, None], out=np.zeros_like(weights), where=out[:, None] > 0)
    rank = np.full(n, 1.0 / n)
    for _ in range(max_iter):
        dangling = rank[out == 0].sum()
        new = (1 - damping) * jump + damping * (rank @ transition + dangling * jump)
        if np.abs(new - rank).sum() < tol:
            return new
        rank = new
    return rank


def priors(sentences, n_sections: int, headings: dict[int, str], config: ExtractConfig) -> np.ndarray:
    """Position and section priors, >= 1, one per sentence."""
    n = len(sentences)
    p = np.ones(n)
    if n == 0:
        return p
    first_in_section: dict[int, int] = {}
    counts: dict[int, int] = {}
    for s in sentences:
        first_in_section.setdefault(s.section, s.index)
        counts[s.section] = counts.get(s.section, 0) + 1
    for i, s in enumerate(sentences):
        rel = i / max(1, n - 1)
        p[i] += config.lead_weight * np.exp(-rel / 0.1)  # document opening
        within = s.index - first_in_section[s.section]
        if counts[s.section] > 3:
            p[i] += 0.5 * config.lead_weight * np.exp(-within / 2.0)  # section opening
        if rel >= 0.9:
            p[i] += config.end_weight
        title = headings.get(s.section, "").lower()
        if title and any(word in title for word in SUMMARY_HEADINGS):
            p[i] += config.section_weight
    return p


def clusters(vectors: np.ndarray, k: int, seed: int = 0, iters: int = 20) -> np.ndarray:
    """k-means (Lloyd) on unit vectors, k-means++ start from a seeded generator."""
    n = vectors.shape[0]
    k = max(1, min(k, n))
    rng = np.random.default_rng(seed)
    centres = [vectors[rng.integers(n)]]
    for _ in range(1, k):
        d = np.min(1 - np.stack(centres) @ vectors.T, axis=0).clip(0)
        probs = d / d.sum() if d.sum() > 0 else np.full(n, 1 / n)
        centres.append(vectors[rng.choice(n, p=probs)])
    centres = np.stack(centres)
    labels = np.zeros(n, dtype=int)
    for _ in range(iters):
        labels = np.argmax(vectors @ centres.T, axis=1)
        for c in range(k):
            members = vectors[labels == c]
            if len(members):
                v = members.mean(axis=0)
                centres[c] = v / max(np.linalg.norm(v), 1e-9)
    return labels


@dataclass(frozen=True)
class Concepts:
    """The concepts (recurring word bigrams) of a document's sentences, for the concept term.

    ``weights[c]`` is concept c's weight (the number of sentences containing it); sentence i
    contains the concepts ``ids[offsets[i]:offsets[i + 1]]``."""

    weights: np.ndarray
    ids: np.ndarray
    offsets: np.ndarray

    def gains(self, uncovered: np.ndarray, rows: np.ndarray) -> np.ndarray:
        """Weight of the not yet covered concepts each sentence in ``rows`` contains."""
        if not len(self.ids):
            return np.zeros(len(rows))
        cumulative = np.concatenate(([0.0], np.cumsum(np.where(uncovered[self.ids], self.weights[self.ids], 0.0))))
        return cumulative[self.offsets[rows + 1]] - cumulative[self.offsets[rows]]

    def of(self, i: int) -> np.ndarray:
        return self.ids[self.offsets[i]:self.offsets[i + 1]]


def bigrams(text: str) -> set[tuple[str, str]]:
    """A text's candidate concepts: its Porter-stemmed word bigrams that are not two stop words."""
    from summarize.embed import STOPWORDS, stem, words

    tokens = words(text)
    return {(stem(x), stem(y)) for x, y in zip(tokens, tokens[1:]) if not (x in STOPWORDS and y in STOPWORDS)}


def concepts(texts: list[str], min_count: int = 2) -> Concepts:
    """Gillick & Favre's (2009) concepts of each sentence: Porter-stemmed word bigrams, not both
    stop words, that occur in at least ``min_count`` sentences; weight = that number."""
    from collections import Counter

    bags = [bigrams(text) for text in texts]
    counts = Counter(c for bag in bags for c in bag)
    index = {c: n for n, c in enumerate(c for c, k in counts.items() if k >= min_count)}
    weights = np.zeros(len(index))
    for c, n in index.items():
        weights[n] = counts[c]
    per = [sorted(index[c] for c in bag if c in index) for bag in bags]
    offsets = np.concatenate(([0], np.cumsum([len(p) for p in per]))).astype(int)
    ids = np.array([c for p in per for c in p], dtype=int)
    return Concepts(weights, ids, offsets)


def select(sim: np.ndarray, salience: np.ndarray, costs: np.ndarray, budget: int, labels: np.ndarray,
           config: ExtractConfig, start: list[int] | None = None, eligible: np.ndarray | None = None,
           concepts: Concepts | None = None) -> list[int]:
    """Lin & Bilmes (2011) budgeted greedy with cost scaling, plus the concept term when
    ``concepts`` are given and ``config.concept_weight`` is above 0; returns sorted indices."""
    n = sim.shape[0]
    if n == 0:
        return []
    eligible = np.ones(n, dtype=bool) if eligible is None else eligible.copy()
    reward = salience / salience.sum() if salience.sum() > 0 else np.full(n, 1 / n)
    total = sim.sum(axis=1)
    cap = config.alpha * total
    k = labels.max() + 1
    use_concepts = concepts is not None and config.concept_weight > 0 and concepts.weights.sum() > 0
    # covering every concept is worth concept_weight times the most the coverage term can give
    scale = cap.sum() if cap.sum() > 0 else 1.0
    unit = config.concept_weight * scale / concepts.weights.sum() if use_concepts else 0.0
    uncovered = np.ones(len(concepts.weights) if use_concepts else 0, dtype=bool)

    def value(cover: np.ndarray, cluster_mass: np.ndarray, open_concepts: np.ndarray) -> float:
        held = unit * concepts.weights[~open_concepts].sum() if use_concepts else 0.0
        return float(np.minimum(cover, cap).sum() + config.diversity * np.sqrt(cluster_mass).sum() + held)

    chosen = list(start or [])
    cover = sim[:, chosen].sum(axis=1) if chosen else np.zeros(n)
    mass = np.zeros(k)
    for j in chosen:
        mass[labels[j]] += reward[j]
        if use_concepts:
            uncovered[concepts.of(j)] = False
    used = int(costs[chosen].sum()) if chosen else 0
    eligible[chosen] = False
    current = value(cover, mass, uncovered)
    while True:
        room = budget - used
        fits = eligible & (costs <= room)
        if not fits.any():
            break
        idx = np.flatnonzero(fits)
        # gains for every fitting sentence at once
        new_cover = np.minimum(cover[:, None] + sim[:, idx], cap[:, None]).sum(axis=0)
        new_mass = mass[labels[idx]] + reward[idx]
        div = np.sqrt(mass).sum() - np.sqrt(mass[labels[idx]]) + np.sqrt(new_mass)
        gains = new_cover + config.diversity * div - current
        if use_concepts:
            gains = gains + unit * (concepts.weights[~uncovered].sum() + concepts.gains(uncovered, idx))
        scaled = gains / np.power(costs[idx], config.scale_power)
        best = idx[int(np.argmax(scaled))]
        if gains[int(np.argmax(scaled))] <= 0:
            break
        chosen.append(best)
        cover = cover + sim[:, best]
        mass[labels[best]] += reward[best]
        if use_concepts:
            uncovered[concepts.of(best)] = False
        used += int(costs[best])
        eligible[best] = False
        current = value(cover, mass, uncovered)
    # Lin & Bilmes: compare with the best single sentence that fits
    if not start:
        singles = np.flatnonzero((costs <= budget) & (eligible | np.isin(np.arange(n), chosen)))
        if len(singles):
            vals = [value(sim[:, j].copy(), _mass_one(k, labels[j], reward[j]), _open_one(concepts, j, use_concepts))
                    for j in singles]
            j = singles[int(np.argmax(vals))]
            if max(vals) > current:
                chosen = [int(j)]
    return sorted(int(j) for j in chosen)


def _open_one(concepts: Concepts | None, j: int, use: bool) -> np.ndarray:
    """The uncovered-concept mask after choosing sentence j alone."""
    if not use:
        return np.zeros(0, dtype=bool)
    open_ = np.ones(len(concepts.weights), dtype=bool)
    open_[concepts.of(j)] = False
    return open_


def _mass_one(k: int, label: int, r: float) -> np.ndarray:
    m = np.zeros(k)
    m[label] = r
    return m


def mmr(sim: np.ndarray, salience: np.ndarray, costs: np.ndarray, budget: int, lam: float = 0.7) -> list[int]:
    """Maximal Marginal Relevance (Carbonell & Goldstein 1998) under a word budget."""
    n = sim.shape[0]
    rel = salience / max(salience.max(), 1e-12)
    chosen: list[int] = []
    used = 0
    left = set(range(n))
    while left:
        best, best_val = None, -np.inf
        for j in left:
            if costs[j] > budget - used:
                continue
            red = max((sim[j, c] for c in chosen), default=0.0)
            val = lam * rel[j] - (1 - lam) * red
            if val > best_val:
                best, best_val = j, val
        if best is None:
            break
        chosen.append(best)
        used += int(costs[best])
        left.discard(best)
    return sorted(chosen)
