"""Small inline SVG charts for the dossier: no script, no external request, greyscale-safe.

Every text that reaches a chart is escaped here; the template inserts the result as markup.
"""

from __future__ import annotations

import html
import math
from typing import Any

from markupsafe import Markup

__all__ = [
    "bin_bars",
    "lag_strip",
    "driver_bars",
    "auc_interval",
    "distance_dots",
    "stat_pairs",
    "impact_bars",
]

INK, MUTED, GRID = "#1f2a44", "#8a93a6", "#d9dde5"
W = 520


def _t(text: Any) -> str:
    return html.escape("" if text is None else str(text), quote=True)


def _svg(height: int, body: str, label: str) -> Markup:
    return Markup(
        f'<svg class="chart" viewBox="0 0 {W} {height}" width="100%" role="img" '
        f'aria-label="{_t(label)}" xmlns="http://www.w3.org/2000/svg">'
        f"<title>{_t(label)}</title>{body}</svg>"
    )


def _num(x: float) -> str:
    if x is None or not math.isfinite(x):
        return "–"
    return f"{x:.3g}" if abs(x) < 1e4 else f"{x:,.0f}"


def bin_bars(bins: list[dict], prior: float | None, stat_name: str) -> Markup | str:
    """Target rate (or mean) per bin as bars, with the overall level as a dashed line."""
    bins = [b for b in bins if b.get("rows")][:30]
    if not bins:
        return ""
    stats = [float(b["stat"]) for b in bins]
    top = max(stats + ([prior] if prior is not None else [])) or 1.0
    low = min(0.0, *stats)
    span = (top - low) or 1.0
    h, base, left = 170, 130, 40
    step = (W - left - 10) / len(bins)
    body = [f'<line x1="{left}" y1="{base}" x2="{W - 10}" y2="{base}" stroke="{GRID}"/>']
    for i, (b, v) in enumerate(zip(bins, stats, strict=True)):
        x = left + i * step + 1
        bar = (v - low) / span * 110
        body.append(
            f'<rect x="{x:.1f}" y="{base - bar:.1f}" width="{max(step - 2, 1):.1f}" '
            f'height="{bar:.1f}" fill="{INK}"><title>{_t(b["bin"])}: {_num(v)} '
            f"({b['rows']} rows)</title></rect>"
        )
        if len(bins) <= 12:
            body.append(
                f'<text x="{x + step / 2:.1f}" y="{base + 14}" font-size="9" '
                f'text-anchor="middle" fill="{MUTED}">{_t(str(b["bin"])[:14])}</text>'
            )
    if prior is not None:
        y = base - (prior - low) / span * 110
        body.append(
            f'<line x1="{left}" y1="{y:.1f}" x2="{W - 10}" y2="{y:.1f}" stroke="{MUTED}" '
            f'stroke-dasharray="4 3"/><text x="2" y="{y + 3:.1f}" font-size="9" '
            f'fill="{MUTED}">{_num(prior)}</text>'
        )
    body.append(
        f'<text x="2" y="{h - 8}" font-size="10" fill="{MUTED}">{_t(stat_name)} by bin, '
        f"left to right; dashed: overall</text>"
    )
    return _svg(h, "".join(body), f"{stat_name} by bin")


def lag_strip(quantiles: dict[str, float], label: str) -> Markup | str:
    """Quantiles of a lag in days (5–95 % band, 25–75 % box, median), against zero."""
    if not quantiles:
        return ""
    q = {k: float(v) for k, v in quantiles.items()}
    lo, hi = min(q.values()), max(q.values())
    lo, hi = min(lo, 0.0), max(hi, 0.0)
    span = (hi - lo) or 1.0
    left, right = 30, W - 30

    def x(v: float) -> float:
        return left + (v - lo) / span * (right - left)

    body = [
        f'<line x1="{x(q["q00"]):.1f}" y1="40" x2="{x(q["q100"]):.1f}" y2="40" stroke="{MUTED}"/>',
        f'<rect x="{x(q["q05"]):.1f}" y="33" width="{x(q["q95"]) - x(q["q05"]):.1f}" '
        f'height="14" fill="{GRID}"/>',
        f'<rect x="{x(q["q25"]):.1f}" y="30" width="{max(x(q["q75"]) - x(q["q25"]), 1):.1f}" '
        f'height="20" fill="{INK}"/>',
        f'<line x1="{x(q["q50"]):.1f}" y1="26" x2="{x(q["q50"]):.1f}" y2="54" stroke="#fff" '
        f'stroke-width="2"/>',
        f'<line x1="{x(0):.1f}" y1="15" x2="{x(0):.1f}" y2="65" stroke="{INK}" '
        f'stroke-dasharray="3 2"/>',
        f'<text x="{x(0) + 3:.1f}" y="14" font-size="10" fill="{INK}">0</text>',
        f'<text x="{left}" y="80" font-size="10" fill="{MUTED}">{_num(q["q00"])} d</text>',
        f'<text x="{right}" y="80" font-size="10" text-anchor="end" fill="{MUTED}">'
        f"{_num(q['q100'])} d</text>",
        f'<text x="{W / 2}" y="80" font-size="10" text-anchor="middle" fill="{MUTED}">'
        f"{_t(label)}: median {_num(q['q50'])} d</text>",
    ]
    return _svg(88, "".join(body), label)


def driver_bars(drivers: list[dict]) -> Markup | str:
    """Share of the adversarial model's gain per column."""
    if not drivers:
        return ""
    rows = drivers[:8]
    h = 22 * len(rows) + 10
    body = []
    for i, d in enumerate(rows):
        y = 6 + i * 22
        width = max(1.0, float(d["gain_share"]) * (W - 230))
        body.append(
            f'<text x="0" y="{y + 12}" font-size="11" fill="{INK}">'
            f"{_t(str(d['column'])[:28])}</text>"
            f'<rect x="200" y="{y + 2}" width="{width:.1f}" height="13" fill="{INK}"/>'
            f'<text x="{205 + width:.1f}" y="{y + 12}" font-size="10" fill="{MUTED}">'
            f"{float(d['gain_share']):.0%}</text>"
        )
    return _svg(h, "".join(body), "share of the model's gain by column")


def auc_interval(auc: float, ci: list[float] | None) -> Markup | str:
    """An AUC with its 95 % interval on the 0.5–1 scale."""
    if auc is None:
        return ""
    left, right = 30, W - 30

    def x(v: float) -> float:
        return left + (min(max(v, 0.4), 1.0) - 0.4) / 0.6 * (right - left)

    body = [f'<line x1="{left}" y1="30" x2="{right}" y2="30" stroke="{GRID}" stroke-width="6"/>']
    for tick in (0.5, 0.6, 0.7, 0.8, 0.9, 1.0):
        body.append(
            f'<text x="{x(tick):.1f}" y="52" font-size="10" text-anchor="middle" '
            f'fill="{MUTED}">{tick:.1f}</text>'
        )
    if ci:
        body.append(
            f'<line x1="{x(ci[0]):.1f}" y1="30" x2="{x(ci[1]):.1f}" y2="30" '
            f'stroke="{INK}" stroke-width="6"/>'
        )
    body.append(
        f'<circle cx="{x(auc):.1f}" cy="30" r="6" fill="#fff" stroke="{INK}" '
        f'stroke-width="3"/><text x="{x(auc):.1f}" y="16" font-size="11" '
        f'text-anchor="middle" fill="{INK}">AUC {_num(auc)}</text>'
    )
    return _svg(60, "".join(body), f"AUC {auc:.3f} with 95 % interval")


def distance_dots(
    distances: list[float], threshold: float | None, median: float | None
) -> Markup | str:
    """Near-twin distances against the copy threshold and the typical neighbour distance."""
    if not distances or not threshold:
        return ""
    top = max([*distances, threshold, median or 0.0]) or 1.0
    left, right = 30, W - 30

    def x(v: float) -> float:
        return left + v / top * (right - left)

    body = [f'<line x1="{left}" y1="30" x2="{right}" y2="30" stroke="{GRID}"/>']
    body += [
        f'<circle cx="{x(d):.1f}" cy="30" r="3" fill="{INK}" fill-opacity="0.6"/>'
        for d in distances[:200]
    ]
    body.append(
        f'<line x1="{x(threshold):.1f}" y1="14" x2="{x(threshold):.1f}" y2="46" '
        f'stroke="{INK}" stroke-dasharray="3 2"/><text x="{x(threshold) + 3:.1f}" y="14" '
        f'font-size="10" fill="{INK}">copy threshold</text>'
    )
    if median:
        body.append(
            f'<text x="{right}" y="58" font-size="10" text-anchor="end" '
            f'fill="{MUTED}">typical neighbour distance {_num(median)}</text>'
        )
    return _svg(64, "".join(body), "near-twin distances")


def stat_pairs(all_rows: dict | None, training_rows: dict | None) -> Markup | str:
    """All-rows against training-row statistics, side by side."""
    if not isinstance(all_rows, dict) or not isinstance(training_rows, dict):
        return ""
    keys = [
        k
        for k in all_rows
        if k in training_rows
        and isinstance(all_rows[k], (int, float))
        and not isinstance(all_rows[k], bool)
    ]
    if not keys:
        return ""
    cells = "".join(
        f"<tr><th>{_t(k)}</th><td>{float(all_rows[k]):.6g}</td>"
        f"<td>{float(training_rows[k]):.6g}</td></tr>"
        for k in keys
    )
    return Markup(
        '<table class="pairs"><thead><tr><th></th><th>all rows</th>'
        f"<th>training rows</th></tr></thead><tbody>{cells}</tbody></table>"
    )


def _impact_rows(block: dict) -> list[tuple[str, float, list | None, str]]:
    """(label, score, its 95 % interval or None, how) for each corrected score, the score
    with the remedies applied first."""
    given = float(block["as_given"])
    rows = []
    rem = block.get("remedied")
    if rem and rem.get("value") is not None:
        rows.append(("with the remedies applied", float(rem["value"]), rem.get("ci95"), rem["how"]))
    if block.get("suspects_removed"):
        rows.append(
            ("without every suspect", float(block["without_suspects"]), block.get("ci95"), "")
        )
    for e in block.get("by_finding", []):
        if e.get("corrected") is None:
            continue
        ci = e.get("corrected_ci95")
        change = e.get("ci95") or [None, None]
        if not ci and None not in change[:2]:
            ci = [given - change[1], given - change[0]]
        name = e.get("column") or str(e.get("kind", "")).replace("_", " ")
        rows.append((str(name), float(e["corrected"]), ci, str(e.get("how") or "")))
    return rows[:14]


def _short(label: str, n: int = 30) -> str:
    return label if len(label) <= n else label[: n - 1] + "…"


def _ticks(lo: float, hi: float) -> list[float]:
    for step in (0.002, 0.005, 0.01, 0.02, 0.05, 0.1, 0.2, 0.5, 1.0):
        if (hi - lo) / step <= 6:
            break
    first = math.ceil(lo / step) * step
    return [round(first + i * step, 6) for i in range(int((hi - first) / step + 1e-9) + 1)]


def impact_bars(block: dict | None) -> Markup | str:
    """Each corrected validation score as a dot with its 95 % interval, on an axis that spans
    the scores themselves (not 0 or 0.5 up), so differences of a few hundredths show; the
    dashed line is the score as given."""
    if not block:
        return ""
    rows = _impact_rows(block)
    if not rows:
        return ""
    given = float(block["as_given"])
    points = [given] + [v for _, v, _, _ in rows]
    points += [c for _, _, ci, _ in rows if ci for c in ci[:2] if c is not None]
    lo, hi = min(points), max(points)
    pad = max((hi - lo) * 0.08, 0.005)
    lo, hi = lo - pad, hi + pad
    left, right = 200, W - 20

    def x(v: float) -> float:
        return left + (v - lo) / (hi - lo) * (right - left)

    top = 8
    h = top + 22 * len(rows) + 34
    axis = h - 26
    body = []
    for t in _ticks(lo, hi):
        body.append(
            f'<line x1="{x(t):.1f}" y1="{top}" x2="{x(t):.1f}" y2="{axis}" stroke="{GRID}"/>'
            f'<text x="{x(t):.1f}" y="{axis + 12}" font-size="9" text-anchor="middle" '
            f'fill="{MUTED}">{_num(t)}</text>'
        )
    body.append(
        f'<line x1="{x(given):.1f}" y1="{top - 4}" x2="{x(given):.1f}" y2="{axis}" '
        f'stroke="{INK}" stroke-dasharray="4 3"/>'
    )
    for i, (label, value, ci, how) in enumerate(rows):
        y = top + 22 * i + 10
        weight = ' font-weight="700"' if i == 0 and label.startswith("with the remedies") else ""
        body.append(
            f'<text x="0" y="{y + 4}" font-size="11" fill="{INK}"{weight}>'
            f"{_t(_short(label))}</text>"
        )
        if ci and None not in ci[:2]:
            body.append(
                f'<line x1="{x(ci[0]):.1f}" y1="{y}" x2="{x(ci[1]):.1f}" y2="{y}" '
                f'stroke="{INK}" stroke-width="2"/>'
            )
        body.append(
            f'<circle cx="{x(value):.1f}" cy="{y}" r="4.5" fill="{INK}"><title>{_t(how)}'
            f"</title></circle>"
        )
    metric = {"auc": "AUC", "macro_auc": "macro AUC", "r2": "R²"}.get(str(block.get("metric")), "")
    body.append(
        f'<text x="0" y="{h - 2}" font-size="10" fill="{MUTED}">validation {metric} '
        f"corrected (dot) with its 95 % interval (line); dashed: as given {_num(given)}</text>"
    )
    return _svg(h, "".join(body), "validation score as given and corrected")
