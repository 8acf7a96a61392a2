"""The project's documents stay in step with the code.

* docs/file-format.md documents every field of every model reachable from
  the requirement-file schema, under the heading of the model's place in the
  file, and documents no key the models lack.
* docs/file-format.md documents the study-file keys the study reader accepts.
* No file cites documents that are not part of the repository.

The heading convention is written out in docs/file-format.md §3: a heading
is the YAML path of a mapping (``[]`` marks a list entry), followed by
``(kind: a | b)`` for one member of a union that the ``kind`` (or ``model``)
key selects, or by ``(every kind)`` for keys that every member accepts. Each
documented key is a table row whose first cell is the key in backticks.
"""
from __future__ import annotations

import re
import types
import typing
from pathlib import Path

from pydantic import BaseModel

try:
    from sizing.inputs.schema import RequirementFile
except ImportError:
    from sizing.spec import RequirementFile

ROOT = Path(__file__).resolve().parents[1]
FILE_FORMAT = ROOT / "docs" / "file-format.md"
SCHEMA_SECTION = "Requirement file reference"
STUDY_SECTION = "Study file reference"
TOP = "(top level)"

_ROW = re.compile(r"^\|\s*`([^`]+)`\s*\|")


# --------------------------------------------------------------------------
# The models: every (heading -> fields) reachable from RequirementFile
# --------------------------------------------------------------------------

def _is_model(tp) -> bool:
    return isinstance(tp, type) and issubclass(tp, BaseModel)


def _model_groups(tp, in_list=False):
    """Yield (in_list, [models]) for every model, or union of models, in an annotation."""
    origin = typing.get_origin(tp)
    args = typing.get_args(tp)
    if origin is typing.Annotated:
        yield from _model_groups(args[0], in_list)
    elif origin in (list, tuple, set, frozenset):
        for a in args:
            if a is not Ellipsis:
                yield from _model_groups(a, True)
    elif origin is typing.Union or (hasattr(types, "UnionType") and origin is types.UnionType):
        models = [a for a in args if _is_model(a)]
        if models:
            yield in_list, models
        for a in args:
            if not _is_model(a):
                yield from _model_groups(a, in_list)
    elif _is_model(tp):
        yield in_list, [tp]


def _discriminator(models):
    """(key, {model: its values}) of the Literal key that tells union members apart."""
    if len(models) < 2:
        return None, {}
    for name in models[0].model_fields:
        values = {}
        for mdl in models:
            f = mdl.model_fields.get(name)
            if f is None or typing.get_origin(f.annotation) is not typing.Literal:
                break
            values[mdl] = typing.get_args(f.annotation)
        else:
            return name, values
    raise AssertionError(f"no Literal key tells {[m.__name__ for m in models]} apart")


def schema_headings():
    """{heading: (model, fields)} for every model, and {shared heading: [fields of each member]}."""
    models: dict = {}
    shared: dict = {}
    stack = [(RequirementFile, "", "")]
    while stack:
        model, path, qualifier = stack.pop()
        heading = (path or TOP) + (f" ({qualifier})" if qualifier else "")
        if heading in models:
            assert models[heading][0] is model, f"two models under one heading {heading!r}"
            continue
        # a field the file writes under an alias (``class``, a Python keyword) is documented by that name
        models[heading] = (model, {f.alias or n for n, f in model.model_fields.items()})
        for name, field in model.model_fields.items():
            name = field.alias or name
            sub = f"{path}.{name}" if path else name
            for in_list, group in _model_groups(field.annotation):
                where = sub + ("[]" if in_list else "")
                key, values = _discriminator(group)
                if key is not None:
                    shared.setdefault(f"{where} (every {key})", []).extend(
                        set(m.model_fields) for m in group)
                for m in group:
                    q = f"{key}: {' | '.join(values[m])}" if key is not None else ""
                    stack.append((m, where, q))
    return models, shared


# --------------------------------------------------------------------------
# The document: {heading: [keys]} inside one "## ..." section
# --------------------------------------------------------------------------

def documented(section: str, text: str | None = None) -> dict:
    """{### heading: [first-cell keys of its table rows]} of the ## section titled ``section``."""
    text = FILE_FORMAT.read_text(encoding="utf-8") if text is None else text
    out: dict = {}
    inside, heading = False, None
    for line in text.splitlines():
        if line.startswith("## "):
            inside = re.sub(r"^##\s+(\d+\.\s*)?", "", line).strip() == section
            heading = None
            continue
        if not inside:
            continue
        if line.startswith("### "):
            heading = line[4:].strip()
            assert heading not in out, f"heading {heading!r} appears twice in {FILE_FORMAT.name}"
            out[heading] = []
            continue
        m = _ROW.match(line)
        if m and heading is not None:
            out[heading].append(m.group(1))
    assert out, f"no section '## ... {section}' with ### headings in {FILE_FORMAT.name}"
    return out


def schema_problems(doc: dict) -> list:
    """Every disagreement between the models and the document, as sentences."""
    models, shared = schema_headings()
    problems = []
    for heading, keys in doc.items():
        dup = {k for k in keys if keys.count(k) > 1}
        if dup:
            problems.append(f"{heading}: documented twice: {sorted(dup)}")
        if heading in shared:
            common = set.intersection(*shared[heading])
            extra = sorted(set(keys) - common)
            if extra:
                problems.append(f"{heading}: not a key of every member: {extra}")
        elif heading in models:
            extra = sorted(set(keys) - models[heading][1])
            if extra:
                problems.append(f"{heading}: documented but not in {models[heading][0].__name__}: {extra}")
        else:
            problems.append(f"heading {heading!r} names no model (known: {sorted(models) + sorted(shared)})")
    for heading, (model, fields) in models.items():
        mine = set(doc.get(heading, ()))
        common = set()
        for sh in shared:
            if heading.startswith(sh.split(" (every ")[0] + " (") and sh in doc:
                common |= set(doc[sh])
        both = sorted(mine & common)
        if both:
            problems.append(f"{heading}: also documented under the shared heading: {both}")
        missing = sorted(fields - mine - common)
        if missing:
            problems.append(f"{heading} ({model.__name__}): fields not documented: {missing}")
    return problems


def test_every_schema_field_is_documented_under_its_model():
    # common practice, no source: the document is checked against the schema itself
    problems = schema_problems(documented(SCHEMA_SECTION))
    assert not problems, "docs/file-format.md and the schema disagree:\n" + "\n".join(problems)


def test_the_check_notices_a_missing_row():
    # common practice, no source: deleting any one documented row makes the check fail
    text = FILE_FORMAT.read_text(encoding="utf-8")
    lines = text.splitlines()
    doc = documented(SCHEMA_SECTION, text)
    assert not schema_problems(doc)
    rows = [i for i, line in enumerate(lines) if _ROW.match(line)]
    start = next(i for i, line in enumerate(lines) if line.startswith("## ") and line.endswith(SCHEMA_SECTION))
    end = next((i for i, line in enumerate(lines) if i > start and line.startswith("## ")), len(lines))
    rows = [i for i in rows if start < i < end]
    assert len(rows) > 50
    for i in rows:
        cut = "\n".join(lines[:i] + lines[i + 1:])
        assert schema_problems(documented(SCHEMA_SECTION, cut)), f"deleting line {i + 1} went unnoticed: {lines[i]}"


def test_an_unknown_key_in_the_document_is_reported():
    # common practice, no source
    text = FILE_FORMAT.read_text(encoding="utf-8")
    bad = text.replace("| `k2` |", "| `k3` |", 1)
    assert bad != text
    assert any("k3" in p for p in schema_problems(documented(SCHEMA_SECTION, bad)))


def _study_keys():
    from sizing.studies import definition

    return definition


def test_study_file_keys_are_documented():
    # common practice, no source: the study reader's own key lists against the document
    mod = _study_keys()
    doc = documented(STUDY_SECTION)
    assert set(doc.get("study file (top level)", ())) == set(mod.STUDY_KEYS)
    assert set(doc.get("sample", ())) == set(mod.SAMPLE_KEYS)
    assert set(doc.get("sample.vary distributions", ())) == set(mod.DISTRIBUTIONS)
    assert set(doc.get("sweep", ())) == {"from", "to", "steps"}


# --------------------------------------------------------------------------
# No citations of documents outside the repository
# --------------------------------------------------------------------------

# assembled from pieces, so that this file does not match itself
FORBIDDEN = ("REFERENCES" + ".md", "DESIGN" + " §", "DESIGN" + ".md", "STYLE" + ".md", "../" + "shared")
OLD_CHECK_IDS = re.compile(r"\b" + "C" + r"C(?:1[0-2]|[1-9])\b")    # the old numbered check cases
SCANNED = ("sizing", "tests", "requirements", "studies", "docs", "README.md", "DEVELOPERS.md")
SKIP_DIRS = {"__pycache__", ".hypothesis"}


def _files():
    for name in SCANNED:
        p = ROOT / name
        if p.is_file():
            yield p
        elif p.is_dir():
            for f in sorted(p.rglob("*")):
                if f.is_file() and not SKIP_DIRS & set(f.relative_to(ROOT).parts) and f.suffix != ".pyc":
                    yield f


def test_no_citation_of_documents_outside_the_repository():
    # common practice, no source: every citation points at the project's own documents
    hits = []
    for f in _files():
        try:
            text = f.read_text(encoding="utf-8")
        except UnicodeDecodeError:
            continue
        for n, line in enumerate(text.splitlines(), 1):
            for word in FORBIDDEN:
                if word in line:
                    hits.append(f"{f.relative_to(ROOT)}:{n}: {word}")
            for m in OLD_CHECK_IDS.finditer(line):
                hits.append(f"{f.relative_to(ROOT)}:{n}: {m.group(0)}")
    assert not hits, f"{len(hits)} citations of documents outside the repository:\n" + "\n".join(hits[:40])
