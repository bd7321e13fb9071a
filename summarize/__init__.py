"""boildown's main job: condense a document to a strict word budget.

    >>> from summarize import summarize
    >>> result = summarize(text, words=150)          # or summarize(pathlib.Path("report.pdf"))
    >>> result.text, result.words, result.scores.coverage.share

Heavy libraries load only when a summary is first made.
"""


def summarize(source, words=None, **options):
    """Summarize text (str) or a file (pathlib.Path) to at most ``words`` words (150 unless a
    ratio or sentence count is given); see ``summarize.pipeline.summarize`` for the options."""
    from summarize.pipeline import summarize as run

    return run(source, words, **options)


__all__ = ["summarize"]
