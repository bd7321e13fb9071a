"""The chart beside the table: each system's mean with its interval, one panel per score that
every row has (combined, coverage, fluency), systems in the table's order, best at the top.
Written as systems.svg and systems.png with matplotlib (imported here only, Agg backend)."""

from __future__ import annotations

from pathlib import Path
from typing import Callable

from summarize.assess.table import LABELS, Table

PANELS = ("combined", "coverage", "fluency")
CHART_NAMES = {"chart": "systems.svg", "chart PNG": "systems.png"}


def draw(table: Table, out_dir: Path, say: Callable[[str], None] | None = None) -> dict:
    """Write the chart; the files' paths by what they are ({} with a message when matplotlib is
    missing: the table is written all the same)."""
    try:
        import matplotlib

        matplotlib.use("Agg")
        import matplotlib.pyplot as plt
    except ImportError:
        if say:
            say("no chart: matplotlib is not installed (pip install matplotlib); the table is written")
        return {}
    panels = [m for m in PANELS if m in table.metrics] or table.metrics[:1]
    systems = table.systems
    height = max(2.5, 0.32 * len(systems) + 1.4)
    fig, axes = plt.subplots(1, len(panels), figsize=(3.6 * len(panels) + 1.2, height), sharey=True, squeeze=False)
    ys = list(range(len(systems)))[::-1]
    for ax, metric in zip(axes[0], panels):
        shown = [(y, table.intervals[s].get(metric)) for y, s in zip(ys, systems)]
        shown = [(y, iv) for y, iv in shown if iv is not None]
        means = [iv.mean for _, iv in shown]
        errors = [[iv.mean - iv.low for _, iv in shown], [iv.high - iv.mean for _, iv in shown]]
        ax.errorbar(means, [y for y, _ in shown], xerr=errors, fmt="o", color="#1f4e79", ecolor="#7a9cc6",
                    elinewidth=2, capsize=3, markersize=5)
        ax.set_title(LABELS[metric] + (" (ranks)" if metric == table.metric else ""), fontsize=10)
        ax.grid(axis="x", color="#dddddd", linewidth=0.6)
        ax.set_axisbelow(True)
    axes[0][0].set_yticks(ys)
    axes[0][0].set_yticklabels(systems, fontsize=9)
    s = table.settings
    fig.suptitle(f"Mean over {table.documents} document(s) with {int(round(100 * s['confidence']))}% bootstrap "
                 f"intervals ({s['samples']} resamples, seed {s['seed']})", fontsize=9)
    fig.tight_layout()
    out = {}
    for what, name in CHART_NAMES.items():
        path = Path(out_dir) / name
        tmp = path.with_name(f".{name}.boildown-tmp")
        fig.savefig(tmp, format=path.suffix[1:], dpi=120, metadata={"Date": None} if path.suffix == ".svg" else None)
        tmp.replace(path)
        out[what] = path
    plt.close(fig)
    return out
