"""Coverage by masked key-word recovery, read by a causal language model.

The method: blank the source's key words, then ask a language model to recover them, once
with the summary placed before the blanked text and once with a neutral filler of the same
length (a run of dots) instead. What the summary adds to the recovery is its coverage: length
alone earns nothing, and the key words the model still misses are the explanation.

How a causal model recovers a key word: it reads the text left to right, so at the place
where a key word stands it has seen only the words before it (and the summary in front); the
probability it gives the key word there is its recovery. In the default mode ("middle") each
key word is recovered whole (all its word pieces) at its middle occurrence, and every other
occurrence is blanked, so the source never gives its own answer away; "first" uses the first
occurrence instead (the same for a word that occurs once, but in long documents it favours
summaries that copy the opening, where most words first occur); "dense" picks, for each key
word, the occurrence whose window of left context overlaps the other key words' windows most
(``_dense_choice``), so fewer source tokens are read per summary; "every" blanks every
occurrence and scores the first word piece of each. One pass scores every key word.

Headline value: the mean log-probability gain per key word (nats), counting the key words the
summary contains (``credit``, see CREDITS), with ``share`` = that gain over the filler pass's
mean surprisal about all key words, i.e. the part of the model's uncertainty about the key
words that the summary removes (what the reports show as a percentage). On REALSumm the
log-probability gain ranked summaries better than the accuracy gain (bench/coverage_validity.py).

Long documents go in windows: each key word needs only its left context (``window`` tokens).
Overlapping windows merge into ranges, each read as a row of its own after the summary; the
summary's key/value cache is computed once and shared by every range, and the filler baseline
(every range) is computed once per document (and filler length) and cached. Since only the key
words a summary carries earn credit (``credit="contained"``), a summary's own pass reads only the
ranges that hold those key words (``read="carried"``): a candidate costs its own length plus the
ranges of the key words it carries. Each range is read on its own, so a key word's probability
does not depend on which other ranges are read, and the value is the same as reading them all
(``read="all"``, which also measures the probabilities of the key words left out, shown as
evidence; ``tests/test_coverage.py`` checks the two agree).
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass, field

from scoring.base import BaseScorer, Column, Result, Signature, check_choice, check_positive, result_dict
from scoring.keywords import KEY_RULE, KeywordConfig, KeywordSet, choose_keywords, contains, summary_words
from scoring.lm import ModelSettings

# "keyshare": the mean over key words of the part of each word's own surprisal that the summary
# removes (0 to 1, contained key words only under credit="contained"), so a rare name whose
# many-token surprisal is large does not outweigh a common word the summary also carries.
HEADLINES = ("logprob", "accuracy", "prob", "keyshare")
MODES = ("middle", "first", "every", "dense")
# Which key words' log-probability gains count towards the value: "contained" = only those the
# summary contains (keywords.contains), "all" = every key word (the rule before; kept for the
# side-by-side). The share's denominator is the same either way: the model's surprisal about all
# key words without the summary. Why: on the demo documents a summary that only names the
# document's places and works still lowered the model's surprisal about words it never mentions
# (it primes the topic), so a findings-carrying abstract and a names-only one scored alike
# (bench/keyword_pairs.py); counting only carried words separates them (RESULTS page).
CREDITS = ("contained", "all")
# Which ranges a summary's own pass reads: "carried" = only those holding a key word the summary
# carries (enough for the value under credit="contained"; the others' probabilities with the
# summary are left unmeasured, None); "all" = every range (the only choice under credit="all",
# or when windows are packed into shared rows, row_tokens > 0).
READS = ("carried", "all")
# "dense" mode: characters taken as one token when windows are compared before tokenizing
CHARS_PER_TOKEN = 4
# The summary, a blank line, then the blanked source. Tried on 20 REALSumm documents: labels
# ("summary: ... text: ...") or a bridging sentence did not help (0.33 and 0.43 vs 0.43).
TEMPLATE = "{summary}\n\n"

# Key-word states. "recovered": the summary contains the word (``keywords.contains``: a form the
# source gives it, its lemma or its Porter stem) and the model did not already expect it;
# "known": the model gives the blanked word probability >= 0.25 from the source's context
# alone (p0), so it says little about the summary; "missed": neither. The probabilities with
# and without the summary are evidence reported beside the state. Before this rule the state
# came from the probabilities alone (the summary removes >= 40% of the surprisal and >= 2 nats:
# ``RECOVERED_SHARE``, ``RECOVERED_GAIN``, kept for the bench's side-by-side); measured
# against containment with bench/keyword_states.py it marked contained words "missed" and
# absent ones "recovered" too often (precision of "recovered" 0.61 on 8 SQuALITY dev stories):
# on long sources the left context rarely pins down which word is due, with or without the
# summary, so a probability alone cannot say whether the summary carries a word.
RECOVERED_SHARE = 0.4
RECOVERED_GAIN = 2.0
KNOWN_P = 0.25
# What each state means, in plain words; the reports' legends read these.
STATE_MEANINGS = {
    "recovered": "The summary contains this word (the same word or a form of it), and the model did not "
                 "already expect it from the source alone. Shown with the model's probability for the "
                 "blanked word with the summary in front of the source and without it.",
    "known": "The model gives this blanked word a probability of 25% or more from the rest of the source "
             "alone, without the summary, so it says little about the summary (the summary may or may not "
             "contain it).",
    "missed": "The summary does not contain this word or a form of it, and the model does not expect it "
              "from the source alone (probability under 25%): the summary leaves it out.",
}
# summaries whose prefix passes run together (their caches are held at once: ~10 MB each for
# 150 words)
HEAD_GROUP = 16


@dataclass(frozen=True)
class CoverageConfig(ModelSettings):
    """Settings of the coverage scorer (CLI defaults and help read these), after the model's."""

    keywords: int = 40
    window: int = 32
    max_blanks: int = 240
    per_keyword: int = 6
    headline: str = "logprob"
    credit: str = "contained"
    mode: str = "middle"
    lowercase: bool = True
    blank: str = "___"
    filler: str = "."
    prefix_bucket: int = 32
    # 0: each merged range is a row of its own (read alone, so any subset of ranges can be read);
    # N > 0: ranges packed in document order into rows of at most N tokens (the rule before
    # 2026-12-05, when 128; a key word then also read the windows packed before it in its row)
    row_tokens: int = 0
    read: str = "carried"

    def __post_init__(self):
        super().__post_init__()
        check_choice("mode", self.mode, MODES)
        check_choice("headline", self.headline, HEADLINES)
        check_choice("credit", self.credit, CREDITS)
        check_choice("read", self.read, READS)
        check_positive(self, "keywords", "window", "max_blanks", "per_keyword", "prefix_bucket")
        if self.row_tokens < 0:
            raise ValueError(f"row_tokens must be 0 (a row per range) or more, got {self.row_tokens}")

    @property
    def reads_carried_only(self) -> bool:
        """Whether a summary's pass reads only the ranges of the key words it carries."""
        return self.read == "carried" and self.credit == "contained" and self.row_tokens == 0


@dataclass(frozen=True)
class KeywordEvidence:
    """How one key word fared: its blanks' mean probability and hits, without and with the summary."""

    word: str
    blanks: int
    p_without: float
    p_with: float | None  # None: not measured (read="carried" reads only the carried words' ranges)
    hits_without: int
    hits_with: int | None
    in_summary: str = ""  # the summary's word that carries it ("" if none): the evidence shown
    is_name: bool = False  # a name of a person, place or work (keywords.Keyword.name)

    @property
    def status(self) -> str:
        """known (likely from the source alone), recovered (the summary contains it), or missed
        (see STATE_MEANINGS)."""
        if self.p_without >= KNOWN_P:
            return "known"
        return "recovered" if self.in_summary else "missed"

    @property
    def probability_status(self) -> str:
        """The state as the probabilities alone would give it (the rule before containment was
        used; kept for bench/keyword_states.py's side-by-side)."""
        if self.p_without >= KNOWN_P:
            return "known"
        if self.p_with is None:
            raise ValueError(f"{self.word!r} was not read with the summary: use read='all' for probability states")
        surprisal = -math.log(max(self.p_without, 1e-12))
        gain = math.log(max(self.p_with, 1e-12)) + surprisal
        if gain >= RECOVERED_GAIN and gain >= RECOVERED_SHARE * surprisal:
            return "recovered"
        return "missed"


@dataclass(frozen=True)
class CoverageScore(Result):
    """Coverage of one summary, with its evidence."""

    value: float
    share: float
    logprob_gain: float
    accuracy_gain: float
    prob_gain: float
    accuracy_with: float
    accuracy_without: float
    n_keywords: int
    n_blanks: int
    keywords: tuple[KeywordEvidence, ...]
    signature: Signature = field(compare=False)

    def words_in(self, status: str) -> tuple[str, ...]:
        """The key words with a given status, in key-word order."""
        return tuple(k.word for k in self.keywords if k.status == status)

    recovered = property(lambda self: self.words_in("recovered"))
    missed = property(lambda self: self.words_in("missed"))
    known = property(lambda self: self.words_in("known"))

    @property
    def unit(self) -> float:
        """The value in [0, 1] the combined score uses: ``share``."""
        return self.share

    def to_dict(self) -> dict:
        return result_dict(self, recovered=list(self.recovered), missed=list(self.missed), known=list(self.known),
                           keywords=[k.__dict__ | {"status": k.status} for k in self.keywords])


@dataclass(frozen=True)
class _Plan:
    """A source turned into token ids with its blanks: computed once per source."""

    ids: tuple[int, ...]  # the blanked source
    positions: tuple[int, ...]  # index whose logits predict each scored token
    targets: tuple[int, ...]  # the token each scored position should recover
    blank_of: tuple[int, ...]  # scored blank each scored token belongs to
    owners: tuple[int, ...]  # key-word index of each scored blank
    ranges: tuple[tuple[int, int], ...]  # merged windows [start, end) over ids
    rows: tuple[tuple[tuple[int, ...], tuple[tuple[int, int], ...]], ...]  # rows of windows: (ids, (column, scored index))
    row_owners: tuple[frozenset[int], ...]  # the key words whose blanks each row scores
    keyword_set: KeywordSet
    source: str = ""  # the text the key words' spans point into


@dataclass(frozen=True)
class _Pass:
    """Per-blank log-probability and hit (argmax == target) for one prefix; None where the
    blank's row was not read."""

    logprobs: tuple[float | None, ...]
    hits: tuple[bool | None, ...]


class CoverageScorer(BaseScorer, name="coverage", label="Coverage", needs="source", config=CoverageConfig):
    """The share of the model's uncertainty about the source's blanked key words that the summary
    removes through the key words it contains: how much of the source's key content it carries
    (the key words it leaves out are listed as missed). Masked key-word recovery with the
    packaged causal model, reading left context."""

    columns = (
        Column("coverage", lambda r: r.share, "pct", "coverage", "Coverage"),
        Column("coverage_logprob_gain", lambda r: r.logprob_gain),
        Column("coverage_accuracy_gain", lambda r: r.accuracy_gain),
        Column("recovered", lambda r: r.recovered, "words"),
        Column("missed", lambda r: r.missed, "words"),
    )

    def __init__(self, config: CoverageConfig | None = None):
        super().__init__(config)
        self._baselines: dict[tuple[str, int], _Pass] = {}

    # ------------------------------------------------------------------ public

    def score(self, summary: str, *, source: str, reference=None) -> CoverageScore:
        return self.score_many([summary], source=source)[0]

    def score_many(self, summaries: list[str], *, source: str, references=None) -> list[CoverageScore]:
        """Score several summaries of one source; the plan and baselines are shared, and the
        summaries' own passes over the prefix run together in batches (``HEAD_GROUP`` at a time)."""
        if not source or not source.strip():
            raise ValueError("the source is empty: nothing to cover")
        plan = self._plan(source)
        sig = self.signature()
        if not plan.positions:
            return [_empty(plan, sig) for _ in summaries]
        doc = plan.keyword_set.text_hash
        results = []
        for start in range(0, len(summaries), HEAD_GROUP):
            group = [s or "" for s in summaries[start : start + HEAD_GROUP]]
            prefixes = [self._prefix_ids(s) for s in group]
            # the filler baselines this group needs and has not cached yet, then the summaries
            missing = sorted({size for _, size in prefixes if (doc, size) not in self._baselines})
            wanted = [self._prefix_ids("", size)[0] for size in missing]
            wanted += [ids for (ids, _), s in zip(prefixes, group) if s.strip()]
            carried = [_carried(plan, s) for s in group]
            every = set(range(len(plan.rows)))
            reads = [every] * len(missing)
            reads += [self._rows_to_read(plan, found) for found, s in zip(carried, group) if s.strip()]
            passes = iter(self._runs(wanted, plan, reads))
            for size in missing:
                self._baselines[(doc, size)] = next(passes)
            for s, found, (_, size) in zip(group, carried, prefixes):
                base = self._baselines[(doc, size)]
                results.append(_summarise(plan, base, next(passes) if s.strip() else base, self.config, sig, found))
        return results

    def _rows_to_read(self, plan: _Plan, found: list[str]) -> set[int]:
        """The rows a summary's own pass reads: those holding a key word it carries, or all."""
        if not self.config.reads_carried_only:
            return set(range(len(plan.rows)))
        mine = {k for k, word in enumerate(found) if word}
        return {r for r, owners in enumerate(plan.row_owners) if owners & mine}

    def signature(self) -> Signature:
        c = self.config
        return Signature.build(
            "coverage",
            {
                **self.lm.describe(),  # the model, and the dtype it runs in ("auto" resolved)
                "keywords": c.keywords,
                "key_rule": KEY_RULE,
                "occurrence": c.mode,
                "window": c.window,
                "blanks": c.max_blanks,
                "per_keyword": c.per_keyword,
                "headline": c.headline,
                "credit": c.credit,
                "lowercase": c.lowercase,
                "rows": "alone" if c.row_tokens == 0 else f"packed-{c.row_tokens}",  # each range read alone, or packed
            },
            ("torch", "transformers", "spacy"),
        )

    # ------------------------------------------------------------------ internals

    @functools.cached_property
    def lm(self):
        from scoring.lm import causal_lm

        return causal_lm(self.config.dtype, self.config.batch_tokens)

    def _tokens(self, text: str) -> list[int]:
        return list(self.lm.tokens(text))

    @functools.lru_cache(maxsize=16)
    def _plan(self, source: str) -> _Plan:
        c = self.config
        kwset = choose_keywords(source, KeywordConfig(count=c.keywords))
        occurrences = kwset.occurrences()
        lower = (lambda s: s.lower()) if c.lowercase else (lambda s: s)
        blank_ids = self._tokens(c.blank)
        spaced_blank_ids = self._tokens(" " + c.blank)
        ids: list[int] = []
        positions, targets, blank_of, owners = [], [], [], []
        seen: dict[int, int] = {}
        # the one occurrence of each key word that is scored whole (modes "middle" and "first")
        if c.mode == "dense":
            chosen = _dense_choice([sorted(a for a, _ in kw.spans) for kw in kwset.keywords], c.window * CHARS_PER_TOKEN)
        else:
            chosen = {i: (kw.count - 1) // 2 if c.mode == "middle" else 0 for i, kw in enumerate(kwset.keywords)}
        cursor = 0
        for start, end, owner in occurrences:
            segment = lower(source[cursor:start])
            lead = ""
            if segment.endswith(" "):
                segment, lead = segment[:-1], " "
            ids.extend(self._tokens(segment))
            target = self._tokens(lead + lower(source[start:end]))
            k = 0
            while k < len(target) - 1 and self.lm.is_space(target[k]):
                k += 1
            ids.extend(target[:k])
            seen[owner] = seen.get(owner, 0) + 1
            whole = c.mode != "every"
            if whole:
                wanted = seen[owner] - 1 == chosen[owner] and len(owners) < c.max_blanks and ids
            else:
                wanted = seen[owner] <= c.per_keyword and len(owners) < c.max_blanks and ids
            if wanted:
                last = len(target) if whole else k + 1
                for j in range(k, last):
                    positions.append(len(ids) - 1 + j - k)
                    targets.append(target[j])
                    blank_of.append(len(owners))
                owners.append(owner)
            if whole and seen[owner] - 1 == chosen[owner]:
                ids.extend(target[k:])
            else:
                ids.extend(blank_ids if (k or not lead) else spaced_blank_ids)
            cursor = end
        ids.extend(self._tokens(lower(source[cursor:])))
        ranges = _merge_windows(positions, c.window, len(ids))
        rows = _pack(ranges, positions, ids, self._tokens("\n\n"), c.row_tokens)
        row_owners = tuple(frozenset(owners[blank_of[i]] for _, i in scored) for _, scored in rows)
        return _Plan(tuple(ids), tuple(positions), tuple(targets), tuple(blank_of), tuple(owners), tuple(ranges), rows,
                     row_owners, kwset, source)

    def _prefix_ids(self, summary: str, length: int | None = None) -> tuple[list[int], int]:
        """The template around the summary, whose tokens are padded on the left with filler to
        a bucketed length; returns the ids and that length (the baseline's cache key)."""
        c = self.config
        before, _, after = TEMPLATE.partition("{summary}")
        body = self._tokens((summary.lower() if c.lowercase else summary).strip()) if summary.strip() else []
        bucket = c.prefix_bucket
        size = length if length is not None else max(bucket, math.ceil(len(body) / bucket) * bucket)
        pad = self._tokens(c.filler)[:1] * max(0, size - len(body))
        head = self._tokens(before) if before else []
        return head + pad + body[-size:] + self._tokens(after), size

    def _runs(self, prefixes: list[list[int]], plan: _Plan, reads: list[set[int]] | None = None) -> list[_Pass]:
        """One pass per prefix: the prefixes' key/value caches, then the rows of windows in
        ``reads`` (per prefix; default every row) read after each."""
        asks = [(ids, [(col, plan.targets[i]) for col, i in scored]) for ids, scored in plan.rows]
        reads = reads if reads is not None else [set(range(len(plan.rows)))] * len(prefixes)
        out = []
        for ids, head, rows in zip(prefixes, self.lm.prefix_states(prefixes), reads):
            logprobs: list[float | None] = [None] * len(plan.positions)
            hits: list[bool | None] = [None] * len(plan.positions)
            chosen = sorted(rows)
            for r, answers in zip(chosen, self.lm.read_after(head, len(ids), [asks[r] for r in chosen])):
                for (_, i), (logprob, hit) in zip(plan.rows[r][1], answers):
                    logprobs[i], hits[i] = logprob, hit
            blank_lp: list[float | None] = [0.0] * len(plan.owners)
            blank_hit: list[bool | None] = [True] * len(plan.owners)
            for i, blank in enumerate(plan.blank_of):
                if logprobs[i] is None or blank_lp[blank] is None:
                    blank_lp[blank], blank_hit[blank] = None, None
                else:
                    blank_lp[blank] += logprobs[i]
                    blank_hit[blank] = blank_hit[blank] and hits[i]
            out.append(_Pass(tuple(blank_lp), tuple(blank_hit)))
        return out


def _dense_choice(starts: list[list[int]], width: int, sweeps: int = 3) -> dict[int, int]:
    """Which occurrence of each key word to score so that the windows of left context (``width``
    characters before each) overlap as much as they can: one read then serves several key words.
    Starts from the middle occurrences; each sweep moves every key word (fewest occurrences
    first) to the occurrence whose window shares the most characters with the others' windows,
    ties going to the occurrence nearest its middle one."""
    import bisect

    chosen = {i: (len(s) - 1) // 2 for i, s in enumerate(starts) if s}
    for _ in range(sweeps):
        moved = False
        for i in sorted(chosen, key=lambda k: len(starts[k])):
            others = sorted(starts[k][j] for k, j in chosen.items() if k != i)
            middle = (len(starts[i]) - 1) // 2

            def shared(j: int) -> int:
                end = starts[i][j]
                lo = bisect.bisect_left(others, end - width)
                hi = bisect.bisect_right(others, end + width)
                return sum(max(0, min(end, t) - max(end - width, t - width)) for t in others[lo:hi])

            best = max(range(len(starts[i])), key=lambda j: (shared(j), -abs(j - middle)))
            if best != chosen[i]:
                chosen[i], moved = best, True
        if not moved:
            break
    return chosen


def _merge_windows(positions: list[int], window: int, length: int) -> list[tuple[int, int]]:
    ranges: list[list[int]] = []
    for pos in sorted(positions):
        a, b = max(0, pos - window + 1), min(length, pos + 1)
        if ranges and a <= ranges[-1][1]:
            ranges[-1][1] = max(ranges[-1][1], b)
        else:
            ranges.append([a, b])
    return [(a, b) for a, b in ranges]


def _pack(ranges, positions, ids, separator: list[int], row_tokens: int):
    """Pack windows, in document order, into rows of at most ``row_tokens`` (a window longer
    than that gets a row of its own), a blank line between windows. Chaining in document order
    leaks nothing: a key word is scored where it first occurs, so no earlier window holds it."""
    rows = []
    cur: list[int] = []
    scored: list[tuple[int, int]] = []
    p = 0
    for a, b in ranges:
        piece = list(ids[a:b])
        gap = separator if cur else []
        if cur and len(cur) + len(gap) + len(piece) > row_tokens:
            rows.append((tuple(cur), tuple(scored)))
            cur, scored, gap = [], [], []
        offset = len(cur) + len(gap)
        cur.extend(gap + piece)
        while p < len(positions) and positions[p] < b:
            scored.append((offset + positions[p] - a, p))
            p += 1
    if cur:
        rows.append((tuple(cur), tuple(scored)))
    return tuple(rows)


def _empty(plan: _Plan, sig: Signature) -> CoverageScore:
    return CoverageScore(0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, len(plan.keyword_set.keywords), 0, (), sig)


def _carried(plan: _Plan, summary: str) -> list[str]:
    """For each key word, the summary's word that carries it ("" if none: ``keywords.contains``)."""
    words = summary_words(summary or "")
    return [contains(kw, plan.source, words) for kw in plan.keyword_set.keywords]


def _summarise(plan: _Plan, base: _Pass, run: _Pass, config: CoverageConfig, sig: Signature,
               found: list[str]) -> CoverageScore:
    """Total one summary's pass against the baseline. Only credited blanks (key words the summary
    carries, under credit="contained") earn a gain, in the headline and in the accuracy and
    probability gains alike; a blank that earns nothing counts as its baseline."""
    n = len(plan.owners)
    credited = [config.credit == "all" or bool(found[owner]) for owner in plan.owners]
    run_lp = [w if c else b for w, b, c in zip(run.logprobs, base.logprobs, credited)]
    run_hits = [w if c else b for w, b, c in zip(run.hits, base.hits, credited)]
    lp_gain = sum(w - b for w, b in zip(run_lp, base.logprobs)) / n
    surprisal = -sum(base.logprobs) / n
    share = lp_gain / surprisal if surprisal > 0 else 0.0
    p_gain = sum(math.exp(w) - math.exp(b) for w, b in zip(run_lp, base.logprobs)) / n
    acc_with = sum(run_hits) / n
    acc_without = sum(base.hits) / n
    evidence = []
    own_shares = []
    for k, kw in enumerate(plan.keyword_set.keywords):
        mine = [i for i, owner in enumerate(plan.owners) if owner == k]
        if not mine:
            continue
        own_surprisal = -sum(base.logprobs[i] for i in mine)
        own_gain = sum(run_lp[i] - base.logprobs[i] for i in mine)
        counted = config.credit == "all" or bool(found[k])
        own_shares.append(min(1.0, max(0.0, own_gain / own_surprisal)) if counted and own_surprisal > 0 else 0.0)
        read = all(run.logprobs[i] is not None for i in mine)
        evidence.append(
            KeywordEvidence(
                word=kw.lemma,
                blanks=len(mine),
                p_without=sum(math.exp(base.logprobs[i]) for i in mine) / len(mine),
                p_with=sum(math.exp(run.logprobs[i]) for i in mine) / len(mine) if read else None,
                hits_without=sum(base.hits[i] for i in mine),
                hits_with=sum(run.hits[i] for i in mine) if read else None,
                in_summary=found[k],
                is_name=kw.name,
            )
        )
    keyshare = sum(own_shares) / len(own_shares) if own_shares else 0.0
    if config.headline == "keyshare":
        share = keyshare  # already a share of each word's own uncertainty
    headline = {"logprob": lp_gain, "accuracy": acc_with - acc_without, "prob": p_gain,
                "keyshare": keyshare}[config.headline]
    return CoverageScore(
        value=round(headline, 6),
        share=round(share, 6),
        logprob_gain=round(lp_gain, 6),
        accuracy_gain=round(acc_with - acc_without, 6),
        prob_gain=round(p_gain, 6),
        accuracy_with=round(acc_with, 6),
        accuracy_without=round(acc_without, 6),
        n_keywords=len(plan.keyword_set.keywords),
        n_blanks=n,
        keywords=tuple(evidence),
        signature=sig,
    )
