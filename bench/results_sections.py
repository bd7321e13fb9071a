"""The sections of docs/RESULTS.md, each written from one benchmark's file in bench/results/.

A section is a title, the results file it reads, the command that writes that file, and a body
built from the file's JSON; a section whose file is absent says it is not yet run and names the
command. ``bench/results_page.py`` puts the sections together and writes the page.
"""

from __future__ import annotations

from bench.results_frame import PYTHON, Section, _all_cheaper_worse, _settings_runs, _versus, load, short, when
from bench.results_speed import (
    assess,
    batch,
    budget,
    compare_speed,
    coverage_speed,
    fuzz_readers,
    model_rates,
    summarizer_speed,
)

__all__ = ["PYTHON", "Section", "load", "SECTIONS"]


# --- coverage -----------------------------------------------------------------------------------

COVERAGE = "coverage logprob gain"
ROUGE1_SAME_RUN = "ROUGE-1 recall (rouge-score, same run)"


def coverage_validity(d: dict) -> list[str]:
    t = d["tau"]
    out = [
        f"Each of the {d['documents']} REALSumm reference summaries is treated as the source and each system "
        "summary is scored against it; Kendall tau with the human LitePyramid recall, per document then "
        "averaged (summary level), and over the systems' mean scores (system level). ROUGE-1 recall is "
        f"computed in the same run ({when(d)}, `{PYTHON} bench/coverage_validity.py`).",
        "",
        "| measure | summary-level tau | system-level tau |",
        "|---|---|---|",
    ]
    for name in (COVERAGE, "coverage accuracy gain", ROUGE1_SAME_RUN, "ROUGE-1 recall (REALSumm release)"):
        label = {COVERAGE: "**coverage** (mean log-probability gain, the headline)"}.get(name, name)
        out.append(f"| {label} | {t[name]['summary_level']:.3f} | {t[name]['system_level']:.3f} |")
    return out + [
        "",
        "The goal was at least 0.30 / 0.60: met. Coverage "
        + _versus(t[COVERAGE]["system_level"], t[ROUGE1_SAME_RUN]["system_level"])
        + " ROUGE-1 recall at system level and "
        + _versus(t[COVERAGE]["summary_level"], t[ROUGE1_SAME_RUN]["summary_level"])
        + " it at summary level, where ROUGE-1 matches words against the reference directly; the "
        "log-probability gain ranks summaries better than the accuracy gain, so it is the headline. "
        f"Median {d['median_seconds_per_summary']:.2f} s per summary.",
        "",
    ]


def coverage_totals(d: dict) -> list[str]:
    """The same key-word evidence totalled several ways, with the key-word rules and credit in use."""
    t, c = d["tau"], d["config"]
    out = [f"The rules in use (key words without units, bare numbers or near-ubiquitous words, names capped; "
           f"credit `{c['credit']}`, headline `{c['headline']}`) on the first {d['documents']} REALSumm documents, "
           "and the same evidence totalled in other ways without another model pass: every key word's gain "
           "(the earlier credit), each contained key word's share of its own surprisal (`keyshare`), the "
           "plain share of key words the summary contains, and names weighted down among the key words "
           "(x1 = as they are, x0 = left out) with each key word's gain counted whole or capped "
           f"({when(d)}, "
           f"`{PYTHON} bench/coverage_validity.py --docs {d['documents']} --name coverage_validity_{d['documents']}`). "
           "The table above is the earlier 100-document run, before these rules.", "",
           "| measure | summary-level tau | system-level tau |", "|---|---|---|"]
    for name, r in t.items():
        out.append(f"| {name} | {r['summary_level']:.3f} | {r['system_level']:.3f} |")
    return out + [""]


def coverage_settings(d: dict) -> list[str]:
    extra, rows = _settings_runs(d)

    def flag(row: dict) -> str:
        return "--int8" if row["setting"] == "int8" else f"--set {row['setting']}"

    commands = [f"`{PYTHON} bench/coverage_settings.py " + " ".join(map(flag, d["results"])) + "`"]
    commands += ["`... " + " ".join(map(flag, x["results"])) + f" --name {stem}` ({x['when'][:16]})" for stem, x in extra]
    out = [
        f"REALSumm's sources are short, so settings that matter only on long ones are checked on the "
        f"{d['stories']} SQuALITY dev stories of the last ranking run: each saved candidate (boildown's, LEAD, "
        "TextRank) is re-scored and the per-story Kendall tau between coverage and ROUGE-2 against the human "
        f"summaries is averaged ({when(d)}, {short(d['dtype'])}, " + "; then ".join(commands) + "):",
        "",
        "| setting | mean tau with ROUGE-2 | stories higher / lower than the defaults |",
        "|---|---|---|",
    ]
    base = rows[0]["taus"]
    for r in rows:
        diff = [b - a for a, b in zip(base, r["taus"])]
        split = "" if r is rows[0] else f"{sum(x > 0 for x in diff)} / {sum(x < 0 for x in diff)}"
        out.append(f"| {r['setting']} | {r['mean_tau']:.3f} | {split} |")
    why = {"window=24": "a 24-token window reads a quarter fewer tokens per key word",
           "keywords=32": "32 key words read a fifth fewer windows",
           "mode=dense": "the dense choice of occurrences lets key words share windows, so each summary's pass "
                         "reads fewer source tokens",
           "mode=dense,keywords=56": "dense windows with 56 key words still read about a fifth fewer tokens than "
                                     "the defaults"}
    for _, x in extra:
        timed = {r["setting"]: r["seconds"] for r in x["results"]}
        if "int8" in timed and "defaults" in timed:
            why["int8"] = (f"int8 linear layers (the defaults on a dynamically quantised copy of the causal model, "
                           f"MLP down projections and the last two layers left in float32) re-scored the candidates "
                           f"{timed['defaults'] / timed['int8']:.2f}x as fast as the float32 defaults in the same run "
                           f"({timed['int8']:.0f} s against {timed['defaults']:.0f} s)")
    tried = [why[r["setting"]] for r in rows[1:] if r["setting"] in why]
    if _all_cheaper_worse(rows):
        out += ["", "The defaults stay: each cheaper setting tried orders the candidates less like ROUGE-2 "
                "(one run each). They were tried for speed: " + "; ".join(tried) + "."]
    return out + [""]


def keyword_states(d: dict) -> list[str]:
    """Precision of "missed" and "recovered" against containment, in use and before."""
    if "targets" not in d:
        return [f"The results file is from the earlier state rules ({when(d)}); the bench has not been run "
                f"with the states in use: `{PYTHON} bench/keyword_pairs.py` then `{PYTHON} bench/keyword_states.py`.",
                ""]
    out = [
        "How often a key word marked *missed* is really absent from the summary, and one marked "
        "*recovered* really in it (precision against the bench's own containment test: the key word's "
        "Porter stem among the summary's stems), for the states in use (containment decides, the "
        "probabilities are shown beside them) and for the states the probabilities alone gave before "
        f"(targets: missed >= {d['targets']['missed']}, recovered >= {d['targets']['recovered']}; {when(d)}, "
        f"`{PYTHON} bench/keyword_pairs.py` then `{PYTHON} bench/keyword_states.py`):",
        "",
        "| sources | judgements | contained | rule | missed: precision (n) | recovered: precision (n) | known |",
        "|---|---|---|---|---|---|---|",
    ]
    for kind, block in d["results"].items():
        for rule, r in block.items():
            if not isinstance(r, dict) or "missed" not in r:
                continue
            out.append(f"| {kind} | {block['judgements']} | {100 * block['contained_share']:.0f}% | {rule} | "
                       f"{r['missed']['precision']} ({r['missed']['count']}) | "
                       f"{r['recovered']['precision']} ({r['recovered']['count']}) | {r['known']['count']} |")
    return out + ["", "demo = the demo documents with the written good/weak abstract pairs; squality = 25 SQuALITY "
                  "dev stories, each with its first human summary and a same-length summary of the next story. "
                  "The two containment tests differ a little (the scorer also accepts the forms the source gives "
                  "the word), so the rule in use is not 1.0 by construction.", ""]


def keyword_pairs(d: dict) -> list[str]:
    """Good/weak abstract pairs on the demo documents, and own vs other story on SQuALITY dev."""
    s = d["summary"]
    out = [
        f"Coverage of a findings-carrying abstract against one that only names the document's places, "
        f"people and plant: {s['pairs']} pairs written for the project on the demo documents "
        f"(`bench/data/keyword_pairs.jsonl`, invented text; target: good minus weak >= 10 points on every "
        f"pair; {when(d)}, `{PYTHON} bench/keyword_pairs.py`):",
        "",
        "| pair | document | good | weak | margin |",
        "|---|---|---|---|---|",
    ]
    for p in d["pairs"]:
        out.append(f"| {p['pair']} | {p['document']} | {p['good']:.1f}% | {p['weak']:.1f}% | {p['margin']:+.1f} |")
    out += ["", f"Smallest margin {s['pairs_min_margin']:+.1f} points, mean {s['pairs_mean_margin']:+.1f}; "
            f"{s['pairs_at_target']} of {s['pairs']} pairs at the target."]
    if s.get("variants"):
        out += ["", "The same run's evidence totalled in other ways (`bench/coverage_variants.py`; the REALSumm "
                "taus of the same totals are in the side-by-side table above): names weighted down among the key "
                "words, or each key word's gain capped, against the margins of the value in use:", "",
                "| total | pairs at +10 | smallest margin | mean margin |", "|---|---|---|---|"]
        for label, v in s["variants"].items():
            out.append(f"| {label.removeprefix('variant: ')} | {v['at_target']} of {len(v['margins'])} | "
                       f"{v['min']:+.1f} | {v['mean']:+.1f} |")
    if s.get("stories"):
        out += ["", f"SQuALITY dev, each story's first human summary against a human summary of the next story "
                f"cut to the same length: the own summary covers more in {s['own_wins']} of {s['stories']} stories "
                f"({100 * s['own_win_share']:.0f}%; target 95%), mean coverage {s['own_mean']:.1f}% against "
                f"{s['other_mean']:.1f}%."]
    return out + [""]


# --- fluency ------------------------------------------------------------------------------------

FLUENCY_ROWS = (  # (results key, what the row is)
    ("today's flags (as-written)", "today's value (as written; flags reads poorly, no verb, repeats, unfinished)"),
    ("-log perplexity (as-written)", "-log perplexity, as written"),
    ("-log perplexity (tidy)", "-log perplexity, tidy reading"),
    ("length (words)", "length in words"),
    ("SLOR mean (tidy)", "SLOR (wordfreq unigrams), mean over sentences"),
    ("SLOR min (tidy)", "SLOR, weakest sentence"),
    ("WPSLOR mean (tidy)", "WPSLOR (token unigrams from the sources), mean"),
    ("WPSLOR min (tidy)", "WPSLOR, weakest sentence"),
    ("relative perplexity, mean, no flags (tidy)", "relative perplexity only (mean)"),
    ("relative perplexity, min, no flags (tidy)", "relative perplexity only (weakest sentence)"),
    ("flags only (tidy)", "penalised flags only"),
    ("default (tidy)", "**chosen: tidy reading, relative perplexity (mean), penalised flags**"),
    ("default, min (tidy)", "chosen, weakest-sentence aggregation"),
    ("default, penalty 1 (tidy)", "chosen, flag penalty 1"),
    ("default (as-written)", "chosen flags, as written"),
)


def fluency(d: dict) -> list[str]:
    if "summeval_summaries" not in d:
        return [f"The results file is from the earlier LongSciVerify-only bench ({when(d)}); the side-by-side "
                f"bench has not finished a run yet: `BOILDOWN_DTYPE=float32 {PYTHON} bench/fluency_validity.py`.", ""]
    c = d["correlations"]

    def f(v):
        return "–" if v is None else f"{v:+.3f}"

    keys = [k for k, _ in FLUENCY_ROWS] + sorted(k for k in c if k.startswith("default with") and k.endswith("(tidy)")
                                                  or k.startswith("default without") and k.endswith("(tidy)"))
    names = dict(FLUENCY_ROWS)
    out = [
        f"Kendall tau with human fluency ({when(d)}, `BOILDOWN_DTYPE=float32 {PYTHON} bench/fluency_validity.py`; "
        f"readings run: {d.get('readings_done', '?')}). SummEval dev half: {d['summeval_summaries']} summaries "
        "(50 articles x 16 systems, expert means 1-5), summary level = per article across its summaries, then "
        "averaged (an article where a score is constant counts 0), system level = across the 16 systems' means. "
        f"LongSciVerify: {d['lsv_summaries']} summaries rated 1-3 by three reviewers, tau over all and within "
        f"papers ({d['lsv_without_source']} summaries lack their paper's text: the fixed reference perplexity). "
        "Choices were made on SummEval dev only; LongSciVerify is a report set. Targets: SummEval summary level "
        ">= 0.25, system level >= 0.6, LongSciVerify >= 0.1.",
        "",
        "| candidate | SummEval summary | SummEval system | LongSciVerify all | LongSciVerify within paper |",
        "|---|---|---|---|---|",
    ]
    for k in keys:
        if k in c:
            r = c[k]
            out.append(f"| {names.get(k, k)} | {f(r['summeval_summary'])} | {f(r['summeval_system'])} | "
                       f"{f(r['lsv_all'])} | {f(r['lsv_within_paper'])} |")
    out += ["", f"Scorer signature: `{d['signature']}`.", "",
            "Checked in the tests (`tests/test_fluency.py`): SLOR's identity on a hand-computed example (Kann, "
            "Rothe & Filippova 2018, eq. 1); on 32 invented pairs from the demo scenario, the compression "
            "fragment and the scrambled-word-order sentence both score below the original; a uniform toy model "
            "gives perplexity = vocabulary size.", ""]
    return out


# --- quality against human summaries -----------------------------------------------------------

QUALITY_SETS = {"squality_test": "SQuALITY test", "longsciverify": "LongSciVerify"}
BASELINE_NAMES = {"lead": "LEAD", "textrank": "TextRank", "lexrank": "LexRank"}


def quality_runs() -> dict[str, dict]:
    """Each data set's latest quality run, by set: one data set per run may be saved under its own
    name (``bench/quality.py --sets X --name Y``), and the later file wins."""
    files = [d for d in (load("quality"), load("quality_squality")) if d]
    return {key: [d for d in files if key in d["results"]][-1]
            for key in QUALITY_SETS if any(key in d["results"] for d in files)}


def coverage_sentence(runs: dict[str, dict]) -> str:
    """Whether boildown's coverage is the highest of every system (oracle included), per data set."""
    tables = {key: d["results"][key]["table"] for key, d in runs.items()}
    highest = [key for key, t in tables.items()
               if all(t["boildown"]["coverage"] > row["coverage"] for s, row in t.items() if s != "boildown")]
    if tables and len(highest) == len(tables):
        return ", so its coverage is the highest of every system, the oracle included, on " + (
            "both sets" if len(tables) == 2 else "the set measured")
    if highest:
        return f"; its coverage is the highest of every system on {QUALITY_SETS[highest[0]]} only"
    return "; even so, some system's coverage is above boildown's on every set measured"


def quality_set(key: str, d: dict) -> list[str]:
    block = d["results"][key]
    table = block["table"]
    n = table["boildown"].get("n", "")
    out = [f"**{QUALITY_SETS[key]}** ({n} documents, mean budget {block['mean_budget']:.0f} words; {when(d)}, commit "
           f"{d.get('commit') or 'not recorded'})", "",
           "| system | ROUGE-1 | ROUGE-2 | ROUGE-Lsum | coverage | fluency |", "|---|---|---|---|---|---|"]
    for system, row in table.items():
        name = f"**{system}**" if system == "boildown" else system
        out.append(f"| {name} | {row['rouge1']:.2f} | {row['rouge2']:.2f} | {row['rougeLsum']:.2f} | "
                   f"{row['coverage']:.1f}% | {row['fluency']:.3f} |")
    behind = [f"{t.replace('rouge', 'ROUGE-')} ({table['boildown'][t]:.2f} against {b} {table[b][t]:.2f})"
              for t in ("rouge1", "rouge2", "rougeLsum")
              for b in [max(BASELINE_NAMES, key=lambda k: table[k][t])]
              if table["boildown"][t] < table[b][t]]
    out += ["", "boildown is ahead of every baseline on " + (
        "every ROUGE measure" if not behind else "the other ROUGE measures") + (
        " and on coverage" if all(table["boildown"]["coverage"] > table[b]["coverage"] for b in BASELINE_NAMES)
        else "") + ("" if not behind else "; **behind** on " + ", ".join(behind)) + "."]
    gap = block["share_of_gap_closed"]
    return out + ["", f"Share of the gap from the best baseline ({block['best_baseline']}, by ROUGE-2) to the oracle "
                  "closed: " + ", ".join(f"{t.replace('rouge', 'ROUGE-')} {100 * v:.0f}%" for t, v in gap.items())
                  + " (goal 25%).", ""]


def quality(_: dict) -> list[str]:
    runs = quality_runs()
    out = [
        "ROUGE F1 x 100 (rouge-score, stemming on, best of the references), and boildown's coverage and "
        "fluency of each system's output, all systems measured in the same run; LEAD, TextRank and LexRank "
        "are written from their papers in `bench/baselines.py`, the oracle greedily maximises ROUGE against "
        f"the references (`{PYTHON} bench/quality.py --parts main`). The timings were taken with "
        "other benchmarks sharing the 2 cores: see the summarizer speed below for clean ones.",
        "",
        "boildown picks among its candidates by its ordering score (at the time of the run measured: see its "
        "commit; since the ranking rework, z(agreement) + 0.25 z(combined) within the pool, agreement being the "
        "candidate nearest the others by ROUGE-2, minimum Bayes-risk selection). Its drafts spend spare "
        "words on sentences that name key words the summary lacks" + coverage_sentence(runs)
        + " (the commits measured are in `bench/results/*.json`).",
        "",
    ]
    for key, title in QUALITY_SETS.items():
        out += quality_set(key, runs[key]) if key in runs else [
            f"{title}: not yet run (`{PYTHON} bench/quality.py --parts main --sets {key}`).", ""]
    return out


# --- reference-free ranking and compression ----------------------------------------------------

MEAN_PICK = "mean of boildown's candidates"
PICK_COMBINED = "ordering score (agreement, then the combined score)"
PICK_EARLIER = "combined score (coverage and fluency)"


def _tuning(tuning_run: dict, stale: bool) -> list[str]:
    """Where the combined score's weights were chosen (SQuALITY train), from its own run."""
    tuning = tuning_run.get("results", {}).get("ranking_squality_train")
    if not tuning or tuning.get("mean_kendall_tau_agreement_alone") is None:
        return []
    return ["The combined score is half *agreement* (each candidate's mean ROUGE-2 F1 against the other "
            "candidates) and half coverage and fluency; those weights were chosen on "
            f"{tuning['stories']} SQuALITY **train** stories, not on these: there agreement alone gave "
            f"{tuning['mean_kendall_tau_agreement_alone']:.3f} and coverage with fluency alone "
            f"{tuning['mean_kendall_tau_coverage_and_fluency']:.3f} "
            f"(`{PYTHON} bench/quality.py --parts ranking --ranking-split train --limit 30 "
            "--name ranking_tuning_train`)" + (
                f"; those train candidates were made by earlier code (commit {tuning_run['commit']}), so "
                "the weights were not re-checked on the current candidates" if stale else "")
            + ".", ""]


def _other_measures(stale: bool) -> list[str]:
    """Other agreement measures and weights on the same saved candidates (bench/ranking_measures.py)."""
    alternatives = load("ranking_measures") or {}
    measures = alternatives.get("mean_kendall_tau") or {}
    kept = measures.get("agreement rouge2 fmeasure", {})
    tried = {k: v for k, v in measures.items() if "train" in v and k.startswith(("agreement", "z "))}
    out = []
    if tried and "train" in kept and "dev" in kept:
        best = max(tried, key=lambda k: tried[k]["train"])
        out += [f"Other agreement measures and weights, on the same saved candidates ({len(tried)} orderings, "
                f"`{PYTHON} bench/ranking_measures.py`): the best on train is " + (
                    "the one in use" if best == "agreement rouge2 fmeasure" else
                    f"{best.replace('fmeasure', 'F1').replace('rouge', 'ROUGE-')} at {tried[best]['train']:.3f}"
                    + (f" (dev {tried[best]['dev']:.3f})" if "dev" in tried[best] else ""))
                + f", against {kept['train']:.3f} for ROUGE-2 F1 agreement (dev {kept['dev']:.3f}); " + (
                    "the measure in use stays, since none is ahead of it on train by more than 0.02."
                    if tried[best]["train"] - kept["train"] <= 0.02 else
                    f"**that one is ahead on train (by {tried[best]['train'] - kept['train']:.3f}) and has not "
                    "been adopted yet**" + (": it should first be checked on train candidates made by the "
                                            "current code" if stale else "") + "."), ""]
    pick = alternatives.get("rouge2_of_pick") or {}
    if all(k in pick for k in (PICK_COMBINED, "TextRank", PICK_EARLIER)):
        def row(k: str) -> str:
            return " and ".join(f"{v:.2f} on {s}" for s, v in pick[k].items())

        out += ["What a user gets: the boildown candidate the ordering score returns (agreement taken among "
                f"boildown's own candidates, as in the tool) has ROUGE-2 {row(PICK_COMBINED)}, "
                f"against {row(PICK_EARLIER)} for the combined score alone, "
                f"{row(MEAN_PICK)} for the mean candidate, "
                f"{row('best boildown candidate (by the references)')} for the best one, and TextRank's "
                f"{row('TextRank')} (`{PYTHON} bench/ranking_measures.py`).", ""]
    return out


def ranking(d: dict) -> list[str]:
    r = d["results"].get("ranking_squality_dev")
    if not r:
        return [f"No ranking run in this file: `{PYTHON} bench/quality.py --parts ranking --name quality_ranking`.", ""]
    limit = d.get("limit")
    cmd = f"`{PYTHON} bench/quality.py --parts ranking --name quality_ranking" + (
        f" --limit {limit}" if limit else "") + "`"
    met = r["mean_kendall_tau"] > 0.3
    out = [f"Ranking agreement: on {r['stories']} SQuALITY dev stories, boildown's candidates plus LEAD and "
           "TextRank at the same budget, ranked by boildown's combined score and by ROUGE-2 F1 against the "
           f"human summaries: mean Kendall tau **{r['mean_kendall_tau']:.3f}** (goal above 0.3"
           + ("" if met else "; **not met**") + f"; {when(d)}, commit {d.get('commit') or 'not recorded'}, {cmd}).", ""]
    tuning_run = load("ranking_tuning_train") or {}
    # the tuning candidates were made by other code than the reported ones
    stale = tuning_run.get("commit") is not None and tuning_run.get("commit") != d.get("commit")
    out += _tuning(tuning_run, stale) + _other_measures(stale)
    ctx = {k: r.get(k) for k in ("mean_kendall_tau_agreement_alone", "mean_kendall_tau_coverage_alone",
                                 "mean_kendall_tau_coverage_and_fluency", "mean_kendall_tau_boildown_candidates_only",
                                 "mean_kendall_tau_without_lead", "mean_kendall_tau_one_reference_vs_the_others")}
    if all(v is not None for v in ctx.values()):
        out += [f"Read it against, on the same dev candidates: agreement alone "
                f"{ctx['mean_kendall_tau_agreement_alone']:.3f}; coverage alone "
                f"{ctx['mean_kendall_tau_coverage_alone']:.3f}; coverage and fluency without agreement (the "
                f"earlier combined score) {ctx['mean_kendall_tau_coverage_and_fluency']:.3f}; boildown's own "
                f"candidates alone (without LEAD and TextRank) {ctx['mean_kendall_tau_boildown_candidates_only']:.3f}; "
                f"without LEAD {ctx['mean_kendall_tau_without_lead']:.3f}. And ROUGE-2 against **one** human "
                "summary agrees with ROUGE-2 against the other three at only "
                f"{ctx['mean_kendall_tau_one_reference_vs_the_others']:.3f} over the same candidates: the "
                "candidates of one story are close, and at this distance one person's summary agrees only "
                "moderately with the others' on how to order them." + (
                    " Most of the agreement comes from telling boildown's candidates apart from LEAD and "
                    "TextRank; among boildown's own candidates the order is only loosely right."
                    if ctx["mean_kendall_tau_boildown_candidates_only"] < 0.3 else ""), ""]
    if r.get("rouge2_of_top_ranked_boildown_candidate") is not None:
        out += ["Ranked within the whole pool (agreement taken with LEAD and TextRank among the others), the "
                f"top-ranked boildown candidate has ROUGE-2 {r['rouge2_of_top_ranked_boildown_candidate']:.2f} "
                f"on average, against {r['rouge2_mean_of_boildown_candidates']:.2f} for the mean of its "
                "candidates.", ""]
    return out


def ranking_fit(d: dict) -> list[str]:
    """The ordering weight's fit (SQuALITY train) and its reading on dev, with the ablations."""
    t = d["table"]
    fitted = t[d["fitted"]]
    agreement = t.get("agreement alone")
    n = d["stories"]
    out = [f"The ordering score that ranks boildown's own candidates, fitted on {n['train']} SQuALITY **train** "
           f"stories and read on {n['dev']} **dev** stories, from candidates saved by earlier runs (8 per story, "
           f"own candidates only, as the summarizer chooses; {when(d)}; `{PYTHON} bench/ranking_fit.py`). "
           "Mean Kendall tau with ROUGE-2 against the human summaries, the ROUGE-2 (F1 x 100) of the candidate "
           "put first, and the share of the gap between the candidates' mean and their best (by the "
           "references) that this choice closes. Targets on dev: tau >= 0.35, gap closed >= 50%.", "",
           "| rule | tau train | tau dev | first, train | first, dev | gap closed, train | gap closed, dev |",
           "|---|---:|---:|---:|---:|---:|---:|"]
    for label, row in t.items():
        mark = " (**in use**)" if label == d["fitted"] else ""
        tr, dv = row["train"], row["dev"]
        out.append(f"| {label}{mark} | {tr['tau']:.3f} | {dv['tau']:.3f} | {tr['chosen']:.2f} | {dv['chosen']:.2f} "
                   f"| {100 * tr['gap_closed']:.0f}% | {100 * dv['gap_closed']:.0f}% |")
    out.append("")
    met = fitted["dev"]["tau"] >= 0.35 and fitted["dev"]["gap_closed"] >= 0.5
    out += [f"The rule in use reaches tau {fitted['dev']['tau']:.3f} and closes "
            f"{100 * fitted['dev']['gap_closed']:.0f}% of the gap on dev (mean {fitted['dev']['mean']:.2f}, best "
            f"{fitted['dev']['best']:.2f})" + ("." if met else
            "; **the targets (0.35, 50%) are not met**.") + (
            f" Agreement alone: {agreement['dev']['tau']:.3f} on dev." if agreement else "")
            + " The combined score's weight 0.25 was the best on train by tau, level with agreement alone "
            "(within 0.01): it is kept so that coverage and fluency still separate candidates that agreement "
            "sees alike. " + _ablation_sentence(t) + " The candidates of one story differ by about a point of "
            "ROUGE-2 and share most sentences; the signals that lead on train (words per sentence, concept "
            "weight) fall back on dev, which is where the signal is lost.", ""]
    return out


def _ablation_sentence(t: dict) -> str:
    """Which added signal, if any, is ahead of agreement alone by more than 0.01 on both splits."""
    base = t.get("agreement alone")
    if not base:
        return ""
    ahead = [k for k, row in t.items() if k.startswith("z(agreement) +") and "combined" not in k
             and all(row[s]["tau"] - base[s]["tau"] > 0.01 for s in ("train", "dev"))]
    return ("Added to agreement, " + ", ".join(ahead) + " is ahead by more than 0.01 on both splits." if ahead else
            "No signal added to agreement (budget fill, concept weight, source closeness, words per sentence) "
            "is ahead of agreement alone by more than 0.01 tau on both train and dev.")


def ordering_quality(d: dict) -> list[str]:
    """Quality and the own-candidate choice from the run after the ranking rework (a slice)."""
    out = ["A slice run after the ranking rework, before the key-word rules now in use were merged; the run "
           "was cut after the documents shown:", ""]
    for key, title in QUALITY_SETS.items():
        block = d["results"].get(key)
        if not block:
            continue
        own = block.get("own_candidates") or {}
        out += quality_set(key, d)
        if own:
            out += [f"Among boildown's own candidates on these {block.get('documents', len(own['documents']))} "
                    f"documents ({title}): the one chosen has ROUGE-2 {own['chosen']:.2f}, their mean "
                    f"{own['mean']:.2f}, their best (by the references) {own['best']:.2f}: the choice closes "
                    f"**{100 * own['share_of_gap_closed']:.0f}%** of the mean-to-best gap (target 50%); its "
                    f"order agrees with ROUGE-2 at mean tau {own['mean_kendall_tau_rank_vs_rouge2']:.3f}.", ""]
    return out or ["No set in this file yet.", ""]


def compression(d: dict) -> list[str]:
    comp = d["results"]["compression"]
    n = d.get("compression_limit") or max(v["documents"] for v in comp.values())
    limit_arg = f" --limit {d['limit']}" if d.get("limit") else ""
    out = [f"Compression figures: {when(d)}, commit {d.get('commit') or 'not recorded'}, "
           f"`{PYTHON} bench/quality.py --parts compression{limit_arg} "
           f"--compression-limit {n} --name quality_compression`.", "",
           "Compression on vs off (the `balanced` recipe, same budget, first documents of each set; "
           "\"unchanged\" counts documents where the compressed draft named no more key words, so the "
           "uncompressed one was kept):", "",
           "| set | documents | coverage on | coverage off | higher with compression | unchanged | lower "
           "| fluency on | fluency off | fluency lower by > 0.05 |",
           "|---|---|---|---|---|---|---|---|---|---|"]
    for key, v in comp.items():
        lower = v["documents"] - v["coverage_higher_with_compression"] - v.get("identical", 0)
        drops = v.get("fluency_lower_by_over_0_05")
        out.append(f"| {key} | {v['documents']} | {v['coverage_on']:.1f}% | {v['coverage_off']:.1f}% | "
                   f"{v['coverage_higher_with_compression']} | {v.get('identical', 0)} | {lower} | "
                   f"{v['fluency_on']:.3f} | {v['fluency_off']:.3f} | {'—' if drops is None else drops} |")
    out.append("")
    most = all(2 * v["coverage_higher_with_compression"] > v["documents"] and v["coverage_on"] > v["coverage_off"]
               for v in comp.values())
    if not most:
        return out + ["**Compression does not earn its place on coverage on both sets** (it must raise coverage on "
                      "most documents of each). `--no-compress` turns it off.", ""]
    return out + ["Compression raises coverage on most documents of both sets. It works by buying room: "
                  "deletions never take the last mention of a key word out of the summary, the freed words go "
                  "to sentences that name key words the summary lacked, and the compressed draft is kept only "
                  "when it names more key-word salience than the uncompressed one. Mean fluency changes by "
                  + " and ".join(f"{v['fluency_on'] - v['fluency_off']:+.3f} ({k})" for k, v in comp.items())
                  + "; the last column counts the documents where it fell by more than 0.05.", ""]


SECTIONS = (
    Section("Coverage against human judgements (REALSumm)", "coverage_validity", "bench/coverage_validity.py",
            coverage_validity),
    Section("Coverage totals side by side (REALSumm, first 40 documents)", "coverage_validity_40",
            "bench/coverage_validity.py --docs 40 --name coverage_validity_40", coverage_totals),
    Section("Coverage speed", "coverage_speed", "bench/coverage_speed.py", coverage_speed),
    Section("Coverage settings on long sources", "coverage_settings",
            "bench/coverage_settings.py --set defaults --set window=24", coverage_settings),
    Section("Key-word states against containment", "keyword_states", "bench/keyword_states.py", keyword_states),
    Section("Key words that matter: findings against names", "keyword_pairs", "bench/keyword_pairs.py",
            keyword_pairs),
    Section("Fluency", "fluency_validity", "bench/fluency_validity.py", fluency),
    Section("Summary quality against human summaries", "quality", "bench/quality.py --parts main", quality),
    Section("Reference-free ranking", "quality_ranking", "bench/quality.py --parts ranking --name quality_ranking",
            ranking),
    Section("Fitting the ordering score", "ranking_fit", "bench/ranking_fit.py", ranking_fit),
    Section("After the ranking rework: SQuALITY test (slice)", "quality_ordering_squality_test",
            "bench/quality.py --parts main --sets squality_test --limit 8 --name quality_ordering_squality_test",
            ordering_quality),
    Section("After the ranking rework: LongSciVerify (slice)", "quality_ordering_longsciverify",
            "bench/quality.py --parts main --sets longsciverify --limit 8 --name quality_ordering_longsciverify",
            ordering_quality),
    Section("Compression", "quality_compression",
            "bench/quality.py --parts compression --compression-limit 20 --name quality_compression", compression),
    Section("Summarizer speed and memory", "summarize_speed", "bench/summarize_speed.py", summarizer_speed),
    Section("The word budget", "budget_check", "bench/budget_check.py", budget),
    Section("Model passes against this machine's peak", "model_rates", "bench/model_rates.py", model_rates),
    Section("Batch throughput", "batch_speed", "bench/batch_speed.py", batch),
    Section("The editor's comparison against scoring", "compare_speed", "bench/compare_speed.py", compare_speed),
    Section("Readers under fuzzed and adversarial input", "fuzz_readers", "bench/fuzz_readers.py", fuzz_readers),
    Section("Assessing systems", "assess_bench", "bench/assess_bench.py", assess),
)
"""The page's sections, in order (later ones refer to earlier ones as "above")."""
