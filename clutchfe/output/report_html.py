"""HTML pieces of report.html: one self-contained page, pictures as data URIs, no script.

Every number that comes from summary.json is written as
``<span class="num" data-key="dotted.key" data-value="repr" data-scale="100">text</span>`` so a
test (or a reviewer's script) can check the page against summary.json.  Everything a user typed
goes through :func:`esc`.
"""
from __future__ import annotations

import base64
import html
import math
from pathlib import Path

# No network, no script: the browser itself refuses anything but inline styles and data: pictures.
CSP = "default-src 'none'; img-src data:; style-src 'unsafe-inline'"

STYLE = """
body { font-family: sans-serif; margin: 2em auto; max-width: 62em; color: #1d232a; line-height: 1.4; }
h1 { font-size: 1.5em; border-bottom: 3px solid #2a5d84; padding-bottom: .2em; }
h2 { font-size: 1.15em; margin-top: 1.8em; color: #2a5d84; }
table { border-collapse: collapse; margin: .6em 0; font-size: .92em; }
th, td { border: 1px solid #c5ccd3; padding: .25em .55em; vertical-align: top; }
th { background: #edf1f5; text-align: left; }
td.n { text-align: right; font-variant-numeric: tabular-nums; }
.caution { border: 2px solid #b3261e; background: #fdf0ef; padding: .6em 1em; font-weight: bold; }
.verdict { background: #eef5ec; border-left: 5px solid #3c7a35; padding: .5em 1em; }
.bad { color: #b3261e; font-weight: bold; }
.warn { background: #fff6e0; border-left: 5px solid #c98a00; padding: .4em 1em; }
figure { margin: 1em 0; }
figure img { max-width: 100%; border: 1px solid #c5ccd3; }
figcaption { font-size: .9em; color: #4a545e; }
.small { font-size: .85em; color: #4a545e; }
"""


def esc(value) -> str:
    return html.escape(str(value), quote=True)


def num(key: str, value, digits: int = 4, scale: float = 1.0, signed: bool = False) -> str:
    """A number from summary.json, shown with ``digits`` decimals after multiplying by ``scale``."""
    if value is None or isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        return f'<span class="num-missing" data-key="{esc(key)}">—</span>'
    shown = f"{value * scale:+.{digits}f}" if signed else f"{value * scale:.{digits}f}"
    scale_attr = f' data-scale="{scale:g}"' if scale != 1.0 else ""
    return f'<span class="num" data-key="{esc(key)}" data-value="{value!r}"{scale_attr}>{shown}</span>'


def sig(value, digits: int = 4) -> str:
    """A number not taken from summary.json (verification rows), in significant digits."""
    if value is None or not math.isfinite(value):
        return "—"
    return esc(f"{value:.{digits}g}")


def table(header: list[str], rows: list[list[str]], numeric_from: int = 1) -> str:
    """Cells are HTML already (escaped by the caller); columns from ``numeric_from`` on align right."""
    head = "".join(f"<th>{h}</th>" for h in header)
    body = "".join("<tr>" + "".join(f'<td class="n">{c}</td>' if k >= numeric_from else f"<td>{c}</td>"
                                    for k, c in enumerate(row)) + "</tr>" for row in rows)
    return f"<table><thead><tr>{head}</tr></thead><tbody>{body}</tbody></table>"


def picture(path: Path, alt: str, caption: str) -> str:
    if not path.exists():
        return f'<p class="warn">{esc(path.name)} was not written by this run.</p>'
    data = base64.b64encode(path.read_bytes()).decode("ascii")
    return (f'<figure><img src="data:image/png;base64,{data}" alt="{esc(alt)}">'
            f"<figcaption>{caption}</figcaption></figure>")


def page(title: str, body: str) -> str:
    return ("<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">"
            f'<meta http-equiv="Content-Security-Policy" content="{CSP}">'
            '<meta name="viewport" content="width=device-width, initial-scale=1">'
            f"<title>{esc(title)}</title><style>{STYLE}</style></head>\n<body>\n{body}\n</body></html>\n")
