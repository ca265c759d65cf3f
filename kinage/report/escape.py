"""Escape user-provided text (titles, star and association names, messages) for the Markdown report.

CommonMark (https://spec.commonmark.org, section 2.4) lets a backslash make
any ASCII punctuation character literal.  Escaping the characters that start
markup (emphasis, code, links, images, raw HTML, entities, tables, headings)
and folding line breaks into spaces keeps a user's string one inline run of
plain text: a name like ``<script>`` or one holding a newline and ``# Title``
cannot open HTML, a heading or a new table row.  The HTML report escapes with
:func:`html.escape`.
"""

import re

__all__ = ["md_text", "md_sentence", "md_code", "MARKUP", "SENTENCE_MARKUP"]

#: characters a backslash makes literal in the Markdown report
MARKUP = "\\`*_{}[]<>()#+-!|~&$\"'"
_BREAKS = re.compile(r"[\r\n\x0b\x0c\u0085\u2028\u2029]+")
_CONTROL = re.compile(r"[\x00-\x08\x0b-\x1f\x7f]")


def _one_line(text):
    return _CONTROL.sub("", _BREAKS.sub(" ", str(text))).strip()


def md_text(text):
    """``text`` as literal inline Markdown: markup characters escaped, line breaks folded into spaces.

    >>> md_text("<b>A*1</b>\\n# x")
    '\\\\<b\\\\>A\\\\*1\\\\</b\\\\> \\\\# x'
    """
    return "".join("\\" + ch if ch in MARKUP else ch for ch in _one_line(text))


#: characters escaped in kinage's own sentences that quote user names: only those that open HTML, entities,
#: links or code, so a sentence without them stays verbatim (the report quotes ``results.json``)
SENTENCE_MARKUP = "\\`[]<>&"


def md_sentence(text):
    """A sentence that may quote user text, safe in Markdown: breaks folded, HTML / link / code openers escaped."""
    return "".join("\\" + ch if ch in SENTENCE_MARKUP else ch for ch in _one_line(text))


def md_code(text):
    """``text`` as one inline code span, fenced with more backticks than any run inside it."""
    body = _one_line(text)
    longest = max((len(m) for m in re.findall(r"`+", body)), default=0)
    fence = "`" * (longest + 1)
    pad = " " if body.startswith("`") or body.endswith("`") or not body else ""
    return f"{fence}{pad}{body}{pad}{fence}"
