"""Escape user-provided text (titles, star and association names, messages) for the Markdown report.

CommonMark (https://spec.commonmark.org, section 2.4) lets a backslash make
any ASCII punctuation character literal.  Only characters that would change
the rendering where they stand are escaped, so report.md still reads as
plain text ("Tessaly-3 (invented demo)", not "Tessaly\\-3 \\(invented demo\\)"):

* always: `` ` `` (code) and ``|`` (table cells);
* ``]`` before ``(``, ``[`` or ``:`` and ``[`` at the start (links, images, link reference definitions: a
  bracketed word like "[star]" stays as it is, since the report defines no link references);
* ``*`` unless it is a single ``*`` inside a word ("ra*cos(dec)": nothing to pair with);
* ``_`` unless inside a word (CommonMark never opens emphasis with an intraword ``_``);
* ``<`` before a letter, ``/``, ``!`` or ``?`` (raw HTML, autolinks); ``&`` that spells an entity;
* ``\\`` before punctuation or at the end; ``~~`` (strikethrough in GitHub's dialect);
* at the start of the text, what opens a block inside a list item or a paragraph: ``#`` headings, ``>``
  quotes, ``-``/``+``/``*`` and ``1.`` list markers; a closing ``#`` run of a heading (not in table cells,
  which hold inline text only).

Line breaks are folded into spaces, so a user's string stays one inline run
of plain text: a name like ``<script>`` or one holding a newline and
``# Title`` cannot open HTML, a heading or a new table row.  The HTML report
escapes with :func:`html.escape`.
"""

import re
import string

__all__ = ["md_text", "md_sentence", "md_code", "ALWAYS"]

#: characters escaped wherever they stand
ALWAYS = "`|"
_PUNCT = set(string.punctuation)
_BREAKS = re.compile(r"[\r\n\x0b\x0c\u0085\u2028\u2029]+")
_CONTROL = re.compile(r"[\x00-\x08\x0b-\x1f\x7f]")
_ENTITY = re.compile(r"&(#[0-9]{1,7}|#[xX][0-9a-fA-F]{1,6}|[A-Za-z][A-Za-z0-9]{0,31});")
_ORDERED = re.compile(r"[0-9]{1,9}[.)](\s|$)")
_HEADING = re.compile(r"#{1,6}(\s|$)")


def _one_line(text):
    return _CONTROL.sub("", _BREAKS.sub(" ", str(text))).strip()


def _needs_escape(t, i, stars, cell=False):
    ch = t[i]
    prev = t[i - 1] if i else ""
    nxt = t[i + 1] if i + 1 < len(t) else ""
    if ch in ALWAYS:
        return True
    if ch == "[":
        return i == 0
    if ch == "]":
        return nxt in ("(", "[", ":")
    if ch == "*":
        return i == 0 or stars != 1 or not (prev.isalnum() and nxt.isalnum())
    if ch == "_":
        return not (prev.isalnum() and nxt.isalnum())
    if ch == "<":
        return nxt.isalpha() or nxt in ("/", "!", "?")
    if ch == "&":
        return bool(_ENTITY.match(t, i))
    if ch == "\\":
        return nxt == "" or nxt in _PUNCT
    if ch == "~":
        return "~" in (prev, nxt)
    if cell:  # a table cell holds inline text only: no block can start in it
        return False
    if ch == "#":
        return (i == 0 and bool(_HEADING.match(t))) or (prev == " " and set(t[i:]) == {"#"})
    if i == 0 and ch in "-+>":
        return ch == ">" or nxt in (" ", "")
    if ch in ".)" and _ORDERED.fullmatch(t[: i + 2].rstrip()) and t[:i].isdigit():
        return True
    return False


def md_text(text, cell=False):
    """``text`` as literal inline Markdown: only what would become markup escaped, line breaks folded.

    ``cell=True`` for a table cell, where no block (heading, list, quote) can start: "> 99.9%" stays as it is.

    >>> md_text("<b>A*1</b>\\n# x")
    '\\\\<b>A*1\\\\</b> # x'
    >>> md_text("Tessaly-3 (invented demo)")
    'Tessaly-3 (invented demo)'
    """
    t = _one_line(text)
    stars = t.count("*")
    return "".join("\\" + ch if _needs_escape(t, i, stars, cell) else ch for i, ch in enumerate(t))


#: kinage's own sentences quoting user names are escaped by the same rule
md_sentence = md_text


def md_code(text):
    """``text`` as one inline code span, fenced with more backticks than any run inside it."""
    body = _one_line(text)
    longest = max((len(m) for m in re.findall(r"`+", body)), default=0)
    fence = "`" * (longest + 1)
    pad = " " if body.startswith("`") or body.endswith("`") or not body else ""
    return f"{fence}{pad}{body}{pad}{fence}"
