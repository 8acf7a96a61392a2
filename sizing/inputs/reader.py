"""YAML text -> data, with the line of every key (so every error can name its line)."""
from __future__ import annotations

from ..common.errors import InputError

MAX_NODES = 100_000      # more values than this (through aliases) is not a requirement file

_YAML_HINTS = (
    ("'\\t'", "indent with spaces, not tabs"),
    ("mapping values are not allowed", "a missing space after ':', a missing quote, or a wrong indent?"),
    ("could not find expected ':'", "a key without ':' or an unclosed quote?"),
    ("expected <block end>", "the indentation does not line up with the lines above"),
    ("found undefined alias", "an alias (*name) needs an anchor (&name) above it"),
)


def read_yaml(text: str, filename: str, empty: str = "the file is empty (it holds no YAML data)"):
    """Parse YAML text into (data, lines): lines maps key paths to line numbers.

    Rejects, as located :class:`~sizing.errors.InputError` s, syntax errors
    (with a hint for the usual slips), control characters, duplicate keys,
    aliases that contain themselves or expand past :data:`MAX_NODES`, and an
    empty document (message ``empty``).
    """
    import yaml

    try:
        loader = yaml.SafeLoader(text)
        try:
            node = loader.get_single_node()
            if node is None:
                raise InputError(empty, filename, 1)
            lines = _node_lines(node, filename)
            data = loader.construct_document(node)
        finally:
            loader.dispose()
    except yaml.MarkedYAMLError as e:
        mark = e.problem_mark or e.context_mark
        line = mark.line + 1 if mark else None
        problem = e.problem or str(e)
        hint = next((h for key, h in _YAML_HINTS if key in problem), "")
        col = f" (column {mark.column + 1})" if mark else ""
        cm = e.context_mark
        if e.context and cm is not None and mark is not None and cm.line != mark.line:
            problem += f"{col}, {e.context} that starts on line {cm.line + 1}"
        else:
            problem += col
        raise InputError(f"YAML syntax: {problem}" + (f"; {hint}" if hint else ""), filename, line) from None
    except yaml.reader.ReaderError as e:
        line = text.count("\n", 0, max(e.position, 0)) + 1
        ch = chr(e.character) if isinstance(e.character, int) else e.character
        raise InputError(f"not YAML text: the control character {ch!r} cannot appear in a YAML file "
                         f"(is it a binary file?)", filename, line) from None
    except yaml.YAMLError as e:
        raise InputError(f"YAML: {e}", filename) from None
    except RecursionError:
        raise InputError("the YAML is nested too deeply to be a requirement file", filename) from None
    return data, lines


def _node_lines(root, filename):
    """Line of every key path; rejects duplicate keys, cyclic and exploding aliases."""
    import yaml

    lines: dict = {(): root.start_mark.line + 1}
    stack = [(root, (), frozenset(), False)]
    count = 0
    while stack:
        n, path, ancestors, merged = stack.pop()
        count += 1
        if count > MAX_NODES:
            raise InputError(f"the file expands to more than {MAX_NODES:,} values (through aliases); "
                             f"a requirement file is much smaller", filename, n.start_mark.line + 1)
        if not isinstance(n, (yaml.MappingNode, yaml.SequenceNode)):
            continue
        if id(n) in ancestors:
            raise InputError("an alias refers to a value that contains it (a cycle)", filename,
                             n.start_mark.line + 1, _show_path(path))
        inner = ancestors | {id(n)}
        if isinstance(n, yaml.SequenceNode):
            for i, item in enumerate(n.value):
                lines.setdefault(path + (i,), item.start_mark.line + 1)
                stack.append((item, path + (i,), inner, merged))
            continue
        seen: dict = {}
        for k, v in n.value:
            if isinstance(k, yaml.ScalarNode) and k.tag == "tag:yaml.org,2002:merge":
                for m in (v.value if isinstance(v, yaml.SequenceNode) else [v]):
                    stack.append((m, path, inner, True))
                continue
            key = k.value if isinstance(k, yaml.ScalarNode) else repr(k.value)
            line = k.start_mark.line + 1
            if key in seen and not merged:
                raise InputError(f"duplicate key {key!r} (first on line {seen[key]}); YAML would keep only "
                                 f"the last one, so remove or rename one", filename, line,
                                 _show_path(path + (key,)))
            seen[key] = line
            if merged:
                lines.setdefault(path + (key,), line)
            else:
                lines[path + (key,)] = line
            stack.append((v, path + (key,), inner, merged))
    return lines


def _show_path(path) -> str:
    out = ""
    for item in path:
        out += f"[{item}]" if isinstance(item, int) else ("." if out else "") + str(item)
    return out or "(top level)"
