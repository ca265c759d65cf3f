"""Building blocks of the HTML report: its style sheet, tables and embedded figures (see :mod:`.document`)."""

import base64
import html
from pathlib import Path

__all__ = []

_CSS = """
body{font-family:system-ui,-apple-system,Segoe UI,Helvetica,Arial,sans-serif;max-width:66rem;margin:1.5rem auto;
padding:0 1rem;line-height:1.45;color:#1b1b1b}
h1{font-size:1.45rem;margin-bottom:.3rem}h2{font-size:1.2rem;border-bottom:1px solid #ddd;padding-bottom:.2rem;
margin-top:2rem}h3{font-size:1.02rem;margin:1.2rem 0 .4rem}
.caution{background:#fff8e6;border-left:4px solid #E69F00;padding:.45rem .9rem;font-size:.9rem}
.summary{background:#f4f7fb;border-left:4px solid #0072B2;padding:.5rem 1rem}
.summary dt{font-weight:600;margin-top:.4rem}.summary dd{margin-left:0}
.verdict-line{font-weight:600;border-left:3px solid #0072B2;padding-left:.6rem}
table{border-collapse:collapse;font-size:.85rem;margin:.3rem 0}td,th{border:1px solid #ddd;padding:.18rem .45rem;
text-align:left;vertical-align:top}th{background:#f6f6f6}
.pair{display:flex;flex-wrap:wrap;gap:1rem;align-items:flex-start;margin:.8rem 0 1.2rem}
.pair figure{margin:0;flex:0 1 auto}.pair .nums{flex:1 1 18rem;min-width:16rem}
figcaption{font-size:.85rem;color:#333;max-width:40rem;margin-top:.2rem}img{max-width:100%;height:auto}
.failed{background:#fff3f0;border-left:4px solid #D55E00;padding:.5rem 1rem}.meta{color:#555;font-size:.85rem}
ul.small,.small{font-size:.85rem}code{font-size:.82rem}.prov td:first-child{white-space:nowrap}
"""


def _html_rows(header, rows):
    e = html.escape
    if not rows:
        return ""
    if header:
        return ("<table><tr>" + "".join(f"<th>{e(h)}</th>" for h in header) + "</tr>"
                + "".join("<tr>" + "".join(f"<td>{e(str(c))}</td>" for c in r) + "</tr>" for r in rows) + "</table>")
    return ("<table><tr><th>quantity</th><th>value</th></tr>"
            + "".join(f"<tr><td>{e(k)}</td><td>{e(str(v))}</td></tr>" for k, v in rows) + "</table>")


def _img(fig, caption):
    e = html.escape
    raw = Path(fig).read_bytes()
    data = base64.b64encode(raw).decode("ascii")
    px = _png_width_px(raw)
    # same scale for every figure: 7.5rem per inch of the figure's size at 200 dpi
    width = f" style='width:{px / 200 * 7.5:.1f}rem'" if px else ""
    return (f"<figure><img alt='{e(caption)}'{width} src='data:image/png;base64,{data}'>"
            f"<figcaption>{e(caption)}</figcaption></figure>")


def _png_width_px(raw):
    """Width in pixels from a PNG's IHDR chunk (0 if not a PNG)."""
    if raw[:8] != b"\x89PNG\r\n\x1a\n" or len(raw) < 24:
        return 0
    return int.from_bytes(raw[16:20], "big")
