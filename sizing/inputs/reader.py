"""Input files -> text -> YAML data, with the line of every key (so every error can name its line).

:func:`read_text` reads a file the way an untrusted one must be read: only a
regular file (a folder, a device such as ``/dev/zero`` or a named pipe is
refused by name, and opening a pipe never waits for a writer), at most a
size limit plus one byte, UTF-8 (or UTF-16/UTF-32 with a byte-order mark).
:func:`read_yaml` parses the text.
"""
from __future__ import annotations

import codecs
import os
import stat

from ..common.errors import InputError

MAX_NODES = 100_000      # more values than this (through aliases) is not a requirement file
MAX_DEPTH = 64           # a requirement file nests a few levels; deeper is not one
MAX_BYTES = 5_000_000    # a requirement or study file is a few kilobytes

_KINDS = ((stat.S_ISDIR, "a folder"), (stat.S_ISCHR, "a character device"), (stat.S_ISBLK, "a block device"),
          (stat.S_ISFIFO, "a named pipe"), (stat.S_ISSOCK, "a socket"))
# byte-order marks, longest first (the UTF-32 LE mark starts with the UTF-16 LE one)
_BOMS = ((codecs.BOM_UTF32_LE, "utf-32"), (codecs.BOM_UTF32_BE, "utf-32"), (codecs.BOM_UTF8, "utf-8-sig"),
         (codecs.BOM_UTF16_LE, "utf-16"), (codecs.BOM_UTF16_BE, "utf-16"))


def read_text(path, what: str = "a requirement file", max_bytes: int = MAX_BYTES) -> str:
    """The text of an input file; a located :class:`InputError` for anything else.

    Refuses what is not a regular file (opened non-blocking, so a named pipe
    with no writer does not hang), reads at most ``max_bytes + 1`` bytes (a
    device reporting size 0 cannot exhaust memory), and decodes UTF-8, or
    UTF-16/UTF-32 when the file starts with their byte-order mark.
    """
    name = str(path)
    try:
        fd = os.open(path, os.O_RDONLY | getattr(os, "O_NONBLOCK", 0) | getattr(os, "O_NOCTTY", 0))
    except OSError as e:
        raise InputError(f"cannot read the file: {e.strerror or e}", name) from None
    try:
        mode = os.fstat(fd).st_mode
        if not stat.S_ISREG(mode):
            kind = next((k for test, k in _KINDS if test(mode)), "not a regular file")
            raise InputError(f"cannot read the file: it is {kind}, not a file; {what} is YAML text "
                             f"saved in a file", name)
        chunks, size = [], 0
        while size <= max_bytes:
            chunk = os.read(fd, min(1 << 20, max_bytes + 1 - size))
            if not chunk:
                break
            chunks.append(chunk)
            size += len(chunk)
    except OSError as e:
        raise InputError(f"cannot read the file: {e.strerror or e}", name) from None
    finally:
        os.close(fd)
    if size > max_bytes:
        raise InputError(f"the file has more than {max_bytes:,} bytes; {what} is YAML text of a few "
                         f"kilobytes (is this the right file?)", name)
    return decode(b"".join(chunks), name, what)


def decode(raw: bytes, filename: str, what: str = "a requirement file") -> str:
    """UTF-8 text (a byte-order mark dropped), or UTF-16/UTF-32 with a byte-order mark."""
    encoding = next((enc for bom, enc in _BOMS if raw.startswith(bom)), "utf-8")
    if encoding in ("utf-16", "utf-32"):
        try:
            return raw.decode(encoding)
        except UnicodeDecodeError as e:
            raise InputError(f"not {encoding.upper()} text although it starts with that byte-order mark "
                             f"(bad bytes at offset {e.start}); save {what} as UTF-8", filename) from None
    if b"\x00" in raw:
        line = raw.count(b"\n", 0, raw.index(b"\x00")) + 1
        raise InputError(f"not a text file (it contains NUL bytes); {what} is YAML text, saved as UTF-8 "
                         f"(or UTF-16/UTF-32 with a byte-order mark)", filename, line)
    try:
        return raw.decode(encoding)
    except UnicodeDecodeError as e:
        line = raw.count(b"\n", 0, e.start) + 1
        raise InputError(f"not UTF-8 text (byte {raw[e.start]:#04x} at offset {e.start}); {what} "
                         f"is YAML text, saved as UTF-8", filename, line) from None


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
        raise InputError(f"the YAML nests more than {MAX_DEPTH} levels deep; a requirement file nests a "
                         f"few", filename, _too_deep(text)) from None
    return data, lines


def _too_deep(text):
    """Line where the nesting first passes :data:`MAX_DEPTH` (PyYAML's event stream, which
    unlike its composer does not recurse), or None."""
    import yaml

    depth = 0
    try:
        for event in yaml.parse(text, Loader=yaml.SafeLoader):
            if isinstance(event, (yaml.MappingStartEvent, yaml.SequenceStartEvent)):
                depth += 1
                if depth > MAX_DEPTH:
                    return event.start_mark.line + 1
            elif isinstance(event, (yaml.MappingEndEvent, yaml.SequenceEndEvent)):
                depth -= 1
    except (yaml.YAMLError, RecursionError):
        pass
    return None


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
        if len(path) >= MAX_DEPTH:
            raise InputError(f"the YAML nests more than {MAX_DEPTH} levels deep here; a requirement file "
                             f"nests a few", filename, n.start_mark.line + 1, _show_path(path[:3]) + "...")
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
