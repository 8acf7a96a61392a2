"""Changed values written back into a requirement file's own text (comments, units and layout kept).

:func:`replace_values` splices new scalars into the YAML text at the exact
character positions of the old ones (the YAML parser's marks), so every
comment, blank line, flow mapping and unit the user wrote stays as it was.
The result is read back and compared with the expected data; when an edit
cannot be made in place (a value shared through an alias, say), the whole
file is written out instead (:func:`dump`), keeping the leading comment block.
"""
from __future__ import annotations

import copy
import re

from ..common.errors import InputError
from .reader import read_yaml

# a plain (unquoted) YAML scalar that reads back as the same string or number
_PLAIN_SAFE = re.compile(r"^[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?(\s+[A-Za-z%][A-Za-z0-9%/*^()._ -]*)?$")


def set_value(data, raw_path, value):
    """Copy of YAML ``data`` with the leaf at ``raw_path`` (keys and list indices) set to ``value``."""
    out = copy.deepcopy(data)
    node = out
    for k in raw_path[:-1]:
        node = node[k]
    node[raw_path[-1]] = value
    return out


def scalar_text(value) -> str:
    """YAML text of a number or a ``"<number> <unit>"`` string (quoted only where needed).

    >>> scalar_text(95), scalar_text(0.85), scalar_text("95 kn"), scalar_text("2.4 %")
    ('95', '0.85', '95 kn', '2.4 %')
    """
    if isinstance(value, bool) or not isinstance(value, (int, float, str)):
        raise TypeError(f"only numbers and strings are written back, got {type(value).__name__}")
    if isinstance(value, str):
        return value if _PLAIN_SAFE.match(value) else '"' + value.replace("\\", "\\\\").replace('"', '\\"') + '"'
    return repr(value) if isinstance(value, float) else str(value)


def _node_at(root, raw_path):
    import yaml

    node = root
    for k in raw_path:
        if isinstance(node, yaml.MappingNode):
            nxt = next((v for kn, v in node.value if isinstance(kn, yaml.ScalarNode) and kn.value == k), None)
        elif isinstance(node, yaml.SequenceNode) and isinstance(k, int) and k < len(node.value):
            nxt = node.value[k]
        else:
            nxt = None
        if nxt is None:
            return None
        node = nxt
    return node if isinstance(node, yaml.ScalarNode) else None


def _spliced(text, changes):
    """Text with each (raw_path, value) spliced in place, or None if one has no scalar of its own."""
    import yaml

    loader = yaml.SafeLoader(text)
    try:
        root = loader.get_single_node()
    finally:
        loader.dispose()
    cuts = []
    for path, value in changes:
        node = _node_at(root, path)
        if node is None or node.start_mark.index >= node.end_mark.index:
            return None
        new = scalar_text(value)
        if node.style in ("'", '"'):         # keep the user's quotes
            q = node.style
            new = q + (str(value).replace("'", "''") if q == "'" else
                       str(value).replace("\\", "\\\\").replace('"', '\\"')) + q
        cuts.append((node.start_mark.index, node.end_mark.index, new))
    cuts.sort()
    if any(a[1] > b[0] for a, b in zip(cuts, cuts[1:])):
        return None
    for start, end, new in reversed(cuts):
        text = text[:start] + new + text[end:]
    return text


def leading_comments(text: str) -> str:
    """The comment block (and blank lines) at the top of a YAML text."""
    out = []
    for line in text.splitlines(keepends=True):
        if line.strip() == "" or line.lstrip().startswith("#"):
            out.append(line)
        else:
            break
    return "".join(out)


def dump(data) -> str:
    """YAML text of plain data, keys in their given order (block style)."""
    import yaml

    return yaml.safe_dump(data, sort_keys=False, allow_unicode=True, default_flow_style=None, width=100)


def replace_values(text: str, data, changes, filename: str = "<memory>"):
    """(new text, kept_in_place) with ``changes`` [(raw_path, value)] applied to a file's text.

    ``data`` is the text's parsed data (the reference the result is checked
    against). In place when every changed value is a scalar of its own in the
    text; otherwise the whole data is dumped below the original leading
    comment block (``kept_in_place`` False). The text returned always reads
    back as ``data`` with the changes.

    Examples
    --------
    Hand-worked: one value changed, the comment and the unit kept.

    >>> text = "# my concept\\nrequirements:\\n  - {id: stall, speed: 100 kn}  # approach\\n"
    >>> data = {"requirements": [{"id": "stall", "speed": "100 kn"}]}
    >>> new, in_place = replace_values(text, data, [(("requirements", 0, "speed"), "95 kn")])
    >>> print(new, end="")
    # my concept
    requirements:
      - {id: stall, speed: 95 kn}  # approach
    >>> in_place
    True
    """
    want = data
    for path, value in changes:
        want = set_value(want, path, value)
    new = _spliced(text, changes) if changes else text
    if new is not None:
        try:
            got, _lines = read_yaml(new, filename)
        except InputError:
            got = None
        if got == want:
            return new, True
    out = leading_comments(text) + dump(want)
    got, _lines = read_yaml(out, filename)
    if got != want:      # cannot happen for plain data; never write what does not read back
        raise InputError("the changed file could not be written as YAML that reads back the same", filename)
    return out, False
