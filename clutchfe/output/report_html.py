"""HTML pieces of report.html: one self-contained page, pictures as data URIs, no script.

The page and every section are jinja2 templates in ``templates/`` (``page.html`` the page with
its Content-Security-Policy and style, ``report.html`` the layout, one template per section,
``macros.html`` the table and picture), rendered by :func:`render` with autoescape on and
undefined names an error.  Every number that comes from summary.json is written by :func:`num` as
``<span class="num" data-key="dotted.key" data-value="repr" data-scale="100">text</span>`` (markup,
so autoescape leaves it alone) so a test (or a reviewer's script) can check the page against
summary.json.  Everything a user typed is escaped by autoescape.
"""
from __future__ import annotations

import base64
import functools
import html
import math
from pathlib import Path

from markupsafe import Markup

TEMPLATES = Path(__file__).resolve().parent / "templates"

# No network, no script: the browser itself refuses anything but inline styles and data: pictures
# (the meta tag itself is written in templates/page.html; tests/test_library_parity.py checks
# that the page carries this policy).
CSP = "default-src 'none'; img-src data:; style-src 'unsafe-inline'"


def esc(value) -> str:
    return html.escape(str(value), quote=True)


def _finalize(value):
    """Every ``{{ … }}`` of a template: markup (num, sig, macros) as it is, anything else escaped
    with :func:`esc`'s entities (``&#x27;`` for a quote, as the page always wrote it; autoescape
    would write ``&#39;``), so the page's text reads exactly as before the templates."""
    return value if hasattr(value, "__html__") else Markup(esc(value))


@functools.cache
def environment():
    """The templates' jinja2 environment, made on first use: jinja2 is imported then, not by the
    commands that only import this module on the way (``clutchfe check``: start-up)."""
    from jinja2 import Environment, FileSystemLoader, StrictUndefined

    env = Environment(loader=FileSystemLoader(TEMPLATES), autoescape=True, undefined=StrictUndefined,
                      finalize=_finalize, trim_blocks=True, lstrip_blocks=True, keep_trailing_newline=True)
    env.globals.update(num=num, sig=sig, data_uri=data_uri)     # what every template may call
    return env


def render(template: str, **context) -> Markup:
    """A template of ``templates/`` rendered with ``context`` (markup: a section of the page)."""
    return Markup(environment().get_template(template).render(**context))


def data_uri(path: Path) -> str | None:
    """A PNG of the results folder as a data: URI; None when the run did not write it."""
    path = Path(path)
    if not path.exists():
        return None
    return "data:image/png;base64," + base64.b64encode(path.read_bytes()).decode("ascii")


def num(key: str, value, digits: int = 4, scale: float = 1.0, signed: bool = False) -> Markup:
    """A number from summary.json, shown with ``digits`` decimals after multiplying by ``scale``
    (markup: a span carrying the key and the exact value)."""
    key = str(key)
    if value is None or isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        return Markup(f'<span class="num-missing" data-key="{esc(key)}">—</span>')
    shown = f"{value * scale:+.{digits}f}" if signed else f"{value * scale:.{digits}f}"
    scale_attr = f' data-scale="{scale:g}"' if scale != 1.0 else ""
    return Markup(f'<span class="num" data-key="{esc(key)}" data-value="{value!r}"{scale_attr}>{shown}</span>')


def sig(value, digits: int = 4) -> Markup:
    """A number not taken from summary.json (verification rows), in significant digits."""
    if value is None or not math.isfinite(value):
        return Markup("—")
    return Markup(esc(f"{value:.{digits}g}"))


def table(header: list[str], rows: list[list[str]], numeric_from: int = 1) -> str:
    """For callers that build HTML strings themselves (cells and headers are HTML already, escaped
    by the caller): the table of templates/macros.html as a plain string (a plain string added to
    markup would be escaped).  Templates call the macro directly."""
    macro = environment().get_template("macros.html").module.table
    return str.__str__(macro([Markup(h) for h in header], [[Markup(c) for c in row] for row in rows], numeric_from))


def picture(path: Path, alt: str, caption: str) -> str:
    """For callers that build HTML strings themselves (``caption`` is HTML already): the picture
    of templates/macros.html as a plain string.  Templates call the macro directly."""
    macro = environment().get_template("macros.html").module.picture
    return str.__str__(macro(data_uri(path), Path(path).name, alt, caller=lambda: Markup(caption)))


def page(title: str, body: str) -> str:
    """The whole page (templates/page.html) around ``body``, HTML already (escaped by the caller)."""
    return environment().get_template("page.html").render(title=title, body=Markup(body))
