"""Located messages for bad input: a pydantic validation failure -> InputErrors naming
the file, the line and the field path, what was wrong and what would fit.

Among the alternatives of a union (``cd0: number | table``) it keeps the one
the user evidently meant.
"""
from __future__ import annotations

import difflib
import re

from ..common.errors import FieldError, InputError


def _child(node, item):
    """(True, child) when ``item`` is a key or index of ``node``, else (False, None)."""
    if isinstance(node, dict):
        try:
            if item in node:
                return True, node[item]
        except TypeError:
            return False, None
    elif isinstance(node, list) and isinstance(item, int) and not isinstance(item, bool) \
            and 0 <= item < len(node):
        return True, node[item]
    return False, None


def _locate(loc, data, lines, tail=()):
    """Map a pydantic error location to (line, readable field path, data path, node).

    Items of ``loc`` that are not keys of the data (pydantic's names of union
    members) are skipped; ``tail`` items (a FieldError's field, a missing
    key) are shown even where the data lack them.
    """
    path: tuple = ()
    shown = ""
    node = data
    for k, item in enumerate(tuple(loc) + tuple(tail)):
        is_tail = k >= len(loc)
        found, nxt = _child(node, item)
        if not found:
            if is_tail:
                shown += f"[{item}]" if isinstance(item, int) else ("." if shown else "") + str(item)
                node = None
            continue
        if isinstance(node, list):
            label = f"[{item}]"
            if isinstance(nxt, dict) and isinstance(nxt.get("id"), (str, int, float)):
                ident = str(nxt["id"])
                label += f" (id {ident if ident.isprintable() else repr(ident)})"   # never raw escapes
            shown += label
        else:
            shown += ("." if shown else "") + str(item)
        path = path + (item,)
        node = nxt
    line = None
    for k in range(len(path), -1, -1):
        if path[:k] in lines:
            line = lines[path[:k]]
            break
    return line, shown or "(top level)", path, node


def _model_for(root, path, data):
    """The pydantic model class that validates the mapping at ``path`` (best effort)."""
    model = root
    node = data
    pending = None
    for item in path:
        if isinstance(item, int):
            node = node[item] if isinstance(node, list) and 0 <= item < len(node) else None
            if pending is not None:
                model = _pick_model(pending, node)
                pending = None
            continue
        field = model.model_fields.get(item) if model is not None else None
        if field is None:
            return None
        node = node.get(item) if isinstance(node, dict) else None
        if isinstance(node, list):
            pending = field.annotation
            continue
        model = _pick_model(field.annotation, node)
        if model is None:
            return None
    return model


def _candidates(annotation) -> list:
    import typing

    from pydantic import BaseModel

    out, stack = [], [annotation]
    while stack:
        a = stack.pop()
        if isinstance(a, type) and issubclass(a, BaseModel):
            out.append(a)
        else:
            stack.extend(reversed(typing.get_args(a)))
    return out


def _pick_model(annotation, node):
    import typing

    candidates = _candidates(annotation)
    if not candidates:
        return None
    if isinstance(node, dict):
        for c in candidates:
            for disc in ("kind", "model"):
                f = c.model_fields.get(disc)
                if f is not None and node.get(disc) in typing.get_args(f.annotation):
                    return c
    return candidates[0]


def _tags_for(root, path, data, disc: str) -> list:
    """Valid discriminator values (kinds, models) of the union at ``path``."""
    import typing

    strs = [k for k, item in enumerate(path) if isinstance(item, str)]
    if not strs:
        return []
    k = strs[-1]
    parent = _model_for(root, path[:k], data)
    field = parent.model_fields.get(path[k]) if parent is not None else None
    if field is None:
        return []
    tags = []
    for c in _candidates(field.annotation):
        f = c.model_fields.get(disc)
        if f is not None:
            tags.extend(typing.get_args(f.annotation))
    return tags


def _model_names(root) -> set:
    """Names of every model reachable from ``root`` (pydantic names union members after them)."""
    seen, stack = {}, [root]
    while stack:
        m = stack.pop()
        if m.__name__ in seen:
            continue
        seen[m.__name__] = m
        for f in m.model_fields.values():
            stack.extend(_candidates(f.annotation))
    return set(seen)


def _union_split(e, data):
    """(data path of a union, name of the member) for an error inside a plain union, else None."""
    loc = tuple(e.get("loc", ()))
    node, prefix = data, ()
    for i, item in enumerate(loc):
        found, nxt = _child(node, item)
        if found:
            node, prefix = nxt, prefix + (item,)
            continue
        if e.get("type") == "missing" and i == len(loc) - 1:
            return None
        return prefix, str(item)
    return None


def _data_path(loc, data) -> tuple:
    """The items of a pydantic location that are keys or indices of the data."""
    node, path = data, ()
    for item in loc:
        found, nxt = _child(node, item)
        if found:
            node, path = nxt, path + (item,)
    return path


def _node_at(data, path):
    node = data
    for item in path:
        found, node = _child(node, item)
        if not found:
            return None
    return node


def _pick_branches(root, errors, data):
    """For a value that failed every member of a union (``cd0: number | table``),
    keep only the errors of the member the user evidently meant."""
    names = _model_names(root)
    groups: dict = {}
    for i, e in enumerate(errors):
        split = _union_split(e, data)
        if split is not None:
            groups.setdefault(split[0], {}).setdefault(split[1], []).append(i)
    drop = set()
    for prefix, branches in groups.items():
        if len(branches) < 2:
            continue
        is_map = isinstance(_node_at(data, prefix), dict)

        def is_model(tag):
            return any(n in names for n in re.findall(r"[A-Za-z_][A-Za-z0-9_]*", tag))

        keep = [t for t in branches if is_model(t) == is_map] or list(branches)
        best = min(keep, key=lambda t: len(branches[t]))
        for t, idx in branches.items():
            if t != best:
                drop.update(idx)
    return [e for i, e in enumerate(errors) if i not in drop]


def _show(node) -> str:
    if node is None:
        return "nothing (an empty value)"
    if isinstance(node, dict):
        return "a mapping"
    if isinstance(node, list):
        return "a list"
    text = repr(node)
    return text if len(text) <= 60 else text[:57] + "..."


def _near(word, valid) -> str:
    near = difflib.get_close_matches(str(word), [str(v) for v in valid], 1)
    return f" (did you mean {near[0]!r}?)" if near else ""


def _message(root, e, data, path, node, field):
    """One readable message for one pydantic error; returns (message, field)."""
    t, ctx, loc = e.get("type"), e.get("ctx") or {}, tuple(e.get("loc", ()))
    msg = e.get("msg", "invalid")
    if msg.startswith("Value error, "):
        msg = msg[len("Value error, "):]
    if t == "extra_forbidden":
        key = loc[-1]
        parent = _model_for(root, path[:-1], data) if path and path[-1] == key else _model_for(root, path, data)
        valid = list(parent.model_fields) if parent else []
        msg = f"unknown key {key!r}" + _near(key, valid)
        if valid:
            msg += f"; valid keys here: {', '.join(valid)}"
    elif t == "missing":
        parent = _model_for(root, path, data)
        f = parent.model_fields.get(loc[-1]) if parent is not None else None
        what = f" ({f.description})" if f is not None and f.description else ""
        msg = f"missing required field {loc[-1]!r}{what}"
    elif t == "union_tag_invalid":
        disc = str(ctx.get("discriminator", "kind")).strip("'")
        tags = _tags_for(root, path, data, disc)
        msg = (f"unknown {disc} {ctx.get('tag')!r}" + _near(ctx.get("tag"), tags) +
               f"; valid: {', '.join(tags) or ctx.get('expected_tags')}")
    elif t == "union_tag_not_found":
        disc = str(ctx.get("discriminator", "kind")).strip("'")
        tags = _tags_for(root, path, data, disc)
        if isinstance(node, dict):
            msg = f"missing {disc!r}; valid: {', '.join(tags)}"
        else:
            msg = f"expected a mapping with {disc!r} ({', '.join(tags)}), got {_show(node)}"
    elif t == "literal_error":
        valid = re.findall(r"'([^']*)'", str(ctx.get("expected", "")))
        msg = f"{_show(node)} is not valid{_near(node, valid)}; valid: {', '.join(valid)}"
    elif t in ("model_type", "dict_type", "model_attributes_type"):
        msg = f"expected a mapping (indented 'key: value' lines), got {_show(node)}"
    elif t == "list_type":
        msg = f"expected a list (lines starting with '- '), got {_show(node)}"
    elif t == "tuple_type":
        msg = f"expected a pair [low, high], got {_show(node)}"
    elif t in ("too_short", "too_long"):
        n, lo, hi = ctx.get("actual_length"), ctx.get("min_length"), ctx.get("max_length")
        want = f"at least {lo}" if t == "too_short" else f"at most {hi}"
        msg = f"has {n} entr{'y' if n == 1 else 'ies'}; needs {want}"
    elif t in ("int_type", "int_parsing", "int_from_float"):
        msg = f"expected a whole number, got {_show(node)}"
    elif t in ("greater_than_equal", "greater_than"):
        msg = f"{_show(node)} is too small: the smallest allowed value is {ctx.get('ge', ctx.get('gt'))}"
    elif t in ("less_than_equal", "less_than"):
        msg = f"{_show(node)} is too large: the largest allowed value is {ctx.get('le', ctx.get('lt'))}"
    elif t in ("bool_type", "bool_parsing"):
        msg = f"expected true or false, got {_show(node)}"
    elif t == "string_type":
        msg = f"expected text, got {_show(node)}"
    elif t == "invalid_key":
        parent = _model_for(root, path[:-1], data)
        valid = f"; valid keys here: {', '.join(parent.model_fields)}" if parent is not None else ""
        msg = f"key {loc[-1]!r} is not a name{valid}"
    elif t == "recursion_loop":
        msg = "a value refers to itself (cyclic alias)"
    return msg, field


def located(err, data, lines, filename, root) -> list:
    """Located :class:`InputError` s for a pydantic ValidationError, in file order.

    ``root`` is the pydantic model the data were validated against; ``lines``
    maps key paths to line numbers (:func:`sizing.inputs.reader.read_yaml`).
    """
    errors = _pick_branches(root, err.errors(include_url=False), data)
    out = []
    for e in errors:
        loc = tuple(e.get("loc", ()))
        exc = (e.get("ctx") or {}).get("error")
        tail = ()
        if isinstance(exc, FieldError) and isinstance(_node_at(data, _data_path(loc, data)), dict):
            tail = exc.path       # a model-level check blaming one of the model's fields
        missing = e.get("type") == "missing"
        if missing:
            loc, tail = loc[:-1], (e["loc"][-1],)
        line, field, path, node = _locate(loc, data, lines, tail)
        if missing:
            key = e["loc"][-1]
        else:
            key = path[-1] if path else None
        msg, field = _message(root, e, data, path, node, field)
        parent = path if missing else path[:-1]
        out.append((e, InputError(msg, filename, line, field), parent, key))
    # a misspelt key also shows up as a missing one: keep only the spelling hint
    suggested = set()
    for e, ie, parent, key in out:
        m = re.search(r"did you mean '([^']+)'", ie.message)
        if e.get("type") == "extra_forbidden" and m:
            suggested.add((parent, m.group(1)))
    kept = [ie for e, ie, parent, key in out
            if not (e.get("type") == "missing" and (parent, key) in suggested)]
    kept.sort(key=lambda ie: ie.line if ie.line is not None else 10 ** 9)
    return kept
