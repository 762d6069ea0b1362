"""The report's chart: token recall per label with its interval, as inline SVG.

matplotlib draws with the Agg backend (no display needed) and writes SVG with
text converted to paths, so the report needs no font and no network. The SVG's
metadata block is dropped and its id salt fixed, so the same numbers give the
same bytes.
"""

from __future__ import annotations

import io
import re
from collections.abc import Sequence

from deid.eval.metrics import LabelScores

_HEADER = re.compile(r"^.*?(?=<svg)", re.DOTALL)
_METADATA = re.compile(r"\s*<metadata>.*?</metadata>", re.DOTALL)


def recall_chart_svg(
    rows: Sequence[LabelScores], threshold: float | None = None, confidence: float = 0.95
) -> str:
    """Horizontal bars of token recall per label, whiskers at the bootstrap interval.

    Labels without gold tokens are left out. Returns an ``<svg>`` element
    (without XML declaration or doctype) ready to embed in HTML, or an empty
    string when no label has gold tokens.

    Args:
        rows: Per-label rows, in the order to draw them (top to bottom).
        threshold: The gate's overall recall threshold, drawn as a dashed line.
        confidence: The intervals' level, for the axis title.
    """
    rows = [r for r in rows if r.token_recall.value is not None]
    if not rows:
        return ""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    with matplotlib.rc_context({"svg.hashsalt": "chartveil", "svg.fonttype": "path", "font.size": 9}):
        fig, ax = plt.subplots(figsize=(9.0, 0.32 * len(rows) + 1.1))
        try:
            positions = list(range(len(rows)))[::-1]
            values = [r.token_recall.value or 0.0 for r in rows]
            low = [
                v - (r.recall_bootstrap.low if r.recall_bootstrap else v)
                for v, r in zip(values, rows, strict=True)
            ]
            high = [
                (r.recall_bootstrap.high if r.recall_bootstrap else v) - v
                for v, r in zip(values, rows, strict=True)
            ]
            colours = ["#2f6f73" if threshold is None or v >= threshold else "#b5543c" for v in values]
            ax.barh(positions, values, color=colours, height=0.6)
            ax.errorbar(
                values, positions, xerr=[low, high], fmt="none", ecolor="#1d2433", capsize=3, linewidth=1
            )
            for value, position in zip(values, positions, strict=True):
                # NOTE: a value label keeps a zero-recall label visible, where the bar has no length.
                ax.text(
                    1.01,
                    position,
                    f"{value:.1%}",
                    va="center",
                    fontsize=8,
                    transform=ax.get_yaxis_transform(),
                )
            if threshold is not None:
                ax.axvline(threshold, color="#1d2433", linestyle="--", linewidth=1)
            ax.set_yticks(positions, [r.label for r in rows])
            ax.set_xlim(0.0, 1.0)
            ax.set_xlabel(f"token recall (bars), {confidence:.0%} note-bootstrap interval (whiskers)")
            for side in ("top", "right"):
                ax.spines[side].set_visible(False)
            fig.tight_layout()
            buffer = io.StringIO()
            fig.savefig(buffer, format="svg", metadata={"Date": None})
        finally:
            plt.close(fig)
    # NOTE: the <metadata> block names matplotlib's web site; the page must not carry URLs.
    return _METADATA.sub("", _HEADER.sub("", buffer.getvalue(), count=1), count=1)
