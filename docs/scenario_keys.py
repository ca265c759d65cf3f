"""Write the user guide's tables of scenario keys from :data:`kinage.io.schema.SCHEMA`."""

from pathlib import Path

INTRO = {
    "star": "The star: position, distance or parallax, proper motion, spin and thermal emission.",
    "campaign": "Question 1, a timing campaign: a plan to forecast, or a TOA table to fit.",
    "trace": "Question 2, tracing back to candidate birth associations.",
    "ages": "Question 3, the age comparison.",
}


def _cell(text):
    return str(text).replace("|", "\\|").replace("\n", " ")


def keys_rst():
    """The tables as reStructuredText (one list-table per scenario table)."""
    from kinage.io.schema import SCHEMA

    lines = []
    for table, keys in SCHEMA.items():
        title = f"[{table}]"
        lines += [title, "~" * len(title), "", INTRO.get(table, ""), "",
                  ".. list-table::", "   :header-rows: 1", "   :widths: 22 12 12 54", "",
                  "   * - key", "     - unit", "     - default", "     - meaning"]
        for k in keys.values():
            name = f"``{k.name}``" + (" (+ ``_error``)" if k.error else "")
            default = "" if k.default is None else f"``{k.default}``"
            lines += [f"   * - {name}", f"     - {_cell(k.unit) or '--'}", f"     - {_cell(default) or '--'}",
                      f"     - {_cell(k.doc + (f' (a unit is required, e.g. {k.example!r})' if k.example else ''))}"]
        lines.append("")
    return "\n".join(lines) + "\n"


def write_keys_page(path):
    """Write :func:`keys_rst` to ``path`` (only when it changed); returns the path."""
    path = Path(path)
    text = keys_rst()
    if not path.is_file() or path.read_text() != text:
        path.parent.mkdir(parents=True, exist_ok=True)
        path.write_text(text)
    return path
