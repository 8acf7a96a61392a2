"""Output files and folders: modes that follow the umask, places checked before any work,
a study's files replaced as one set (never mixed with an earlier or a concurrent study's),
reports that are what their suffix says, escape what the user wrote, and rerun byte for byte.

POSIX defines the umask (a new file's mode is 0666 & ~umask); the rest is the project's
contract.  # common practice, no source
"""
from __future__ import annotations

import contextlib
import io
import multiprocessing as mp
import os
import stat
from pathlib import Path

import pytest

from sizing import cli
from sizing.common.errors import InputError
from sizing.common.fileio import FolderSwap, atomic_write
from sizing.inputs.spec import load_text
from sizing.problem import solve
from sizing.reports import review as R
from sizing.studies import plots

ROOT = Path(__file__).resolve().parents[1]
TRAINER = ROOT / "requirements" / "trainer-jet.yaml"
READ_ONLY = Path("/sys/kernel")          # sysfs: no one, not even root, creates files there


def _main(argv):
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        rc = cli.main(argv)
    return rc, out.getvalue(), err.getvalue()


@contextlib.contextmanager
def _umask(mask):
    old = os.umask(mask)
    try:
        yield
    finally:
        os.umask(old)


def _mode(p):
    return stat.S_IMODE(Path(p).stat().st_mode)


# ------------------------------------------------------------------ file modes

def test_new_files_follow_the_umask_and_replaced_files_keep_their_mode(tmp_path):
    # Source: POSIX open() and umask(): a created file's mode is the requested mode & ~umask
    # (docs/references.md §17.9)
    with _umask(0o022):
        assert _mode(atomic_write(tmp_path / "a.txt", "x")) == 0o644
    with _umask(0o027):
        assert _mode(atomic_write(tmp_path / "b.txt", "x")) == 0o640
        f = tmp_path / "shared.html"
        f.write_text("old")
        f.chmod(0o664)
        atomic_write(f, "new")
        assert _mode(f) == 0o664 and f.read_text() == "new"


# ------------------------------------------------------------------ places checked first

@pytest.fixture
def no_solving(monkeypatch):
    """Fail if a study or a solve starts: the output place must be refused before."""
    import sizing.problem
    import sizing.studies.runner

    def boom(*_a, **_k):
        raise AssertionError("the work started before the output place was checked")
    monkeypatch.setattr(sizing.studies.runner, "run_study", boom)
    monkeypatch.setattr(sizing.problem, "solve", boom)


STUDY = ROOT / "studies" / "trainer-turn-field.yaml"


def test_study_output_that_is_a_file_or_unwritable_is_refused_first(tmp_path, no_solving, monkeypatch):
    f = tmp_path / "results"
    f.write_text("x")
    cases = [(f, "it is a file, not a folder"), (f / "sub", f"{f} is a file, not a folder")]
    if READ_ONLY.is_dir():
        cases.append((READ_ONLY / "sizing-out", "cannot write the outputs to"))
    for target, words in cases:
        rc, out, err = _main(["study", str(STUDY), "-o", str(target)])
        assert rc == 2 and out == "" and words in err and "unexpected" not in err, err
    (tmp_path / "mine").mkdir()
    (tmp_path / "mine" / "notes.txt").write_text("keep me")
    rc, _out, err = _main(["study", str(STUDY), "-o", str(tmp_path / "mine")])
    assert rc == 2 and "notes.txt" in err and "empty or new folder" in err
    assert (tmp_path / "mine" / "notes.txt").read_text() == "keep me"
    monkeypatch.chdir(tmp_path / "mine")
    (tmp_path / "mine" / "notes.txt").unlink()
    for here in (".", ".."):        # the current folder (even empty) is never swapped away
        rc, _out, err = _main(["study", str(STUDY), "-o", here])
        assert rc == 2 and "current folder" in err, err


@pytest.mark.skipif(os.geteuid() == 0, reason="root writes into a mode-0555 folder")
def test_read_only_folder_is_refused_first(tmp_path, no_solving):
    ro = tmp_path / "ro"
    ro.mkdir()
    ro.chmod(0o555)
    try:
        rc, _out, err = _main(["study", str(STUDY), "-o", str(ro / "out")])
        assert rc == 2 and "Permission denied" in err
    finally:
        ro.chmod(0o755)


def test_report_and_figure_outputs_are_checked_before_the_solve(tmp_path, no_solving):
    for argv, words in [
            (["report", str(TRAINER), "-o", str(tmp_path / "r.pdf")], "HTML or Markdown"),
            (["report", str(TRAINER), "-o", str(tmp_path / "r.md"), "--format", "html"], "does not match"),
            (["report", str(TRAINER), "-o", str(tmp_path)], "it is a folder"),
            (["diagram", str(TRAINER), "-o", str(tmp_path)], "it is a folder"),
            (["diagram", str(TRAINER), "-o", str(tmp_path / "d.png"), "--data", str(tmp_path)], "it is a folder"),
            (["envelope", str(TRAINER), "-o", str(tmp_path / "e.png"), "--data", str(tmp_path)], "it is a folder")]:
        rc, out, err = _main(argv)
        assert rc == 2 and out == "" and words in err, (argv, err)
    if READ_ONLY.is_dir():
        rc, _out, err = _main(["report", str(TRAINER), "-o", str(READ_ONLY / "r.html")])
        assert rc == 2 and "cannot write" in err
    assert list(tmp_path.iterdir()) == []


# ------------------------------------------------------------------ a study's set, whole

def _write_set(path, tag, names):
    with FolderSwap(path, plots.OUTPUT_NAMES) as fs:
        for n in names:
            atomic_write(fs.staging / n, f"{tag}\n")
        fs.commit()


def _writer(path, tag, names, rounds):
    for _ in range(rounds):
        _write_set(path, tag, names)


def test_concurrent_writers_never_mix_their_sets(tmp_path):
    out = tmp_path / "out"
    sets = {"A": ("results.csv", "study.json", "mass.png", "costs.png"),
            "B": ("results.csv", "study.json", "carpet.png", "drivers-map.png", "mass.png")}
    ctx = mp.get_context("fork")
    procs = [ctx.Process(target=_writer, args=(out, tag, names, 25)) for tag, names in sets.items()]
    for p in procs:
        p.start()
    for p in procs:
        p.join(60)
    assert all(p.exitcode == 0 for p in procs)
    files = {f.name: f.read_text() for f in out.iterdir()}
    tags = set(files.values())
    assert len(tags) == 1, files                                     # one writer's set only
    tag = tags.pop().strip()
    assert sorted(files) == sorted(sets[tag])                        # and the whole of it
    assert [p.name for p in tmp_path.iterdir()] == ["out"]           # no staging folder left


def test_a_new_study_replaces_the_old_set_and_an_interrupted_one_leaves_it(tmp_path, monkeypatch):
    out = tmp_path / "out"
    with _umask(0o022):
        _write_set(out, "old", ("results.csv", "study.json", "carpet.png", "drivers-map.png"))
    out.chmod(0o750)
    real = plots.write_plots

    def interrupted(result, out_dir):
        atomic_write(Path(out_dir) / "mass.png", b"half a set", "wb")
        raise KeyboardInterrupt
    monkeypatch.setattr(plots, "write_plots", interrupted)
    limit = ["--limit", "3", "--workers", "1"]
    rc, out_text, _err = _main(["study", str(ROOT / "studies" / "trainer-uncertainty.yaml"), "-o", str(out), *limit])
    assert rc == 130 and out_text == ""
    assert sorted(p.name for p in out.iterdir()) == ["carpet.png", "drivers-map.png", "results.csv", "study.json"]
    assert (out / "results.csv").read_text() == "old\n"
    monkeypatch.setattr(plots, "write_plots", real)
    rc, out_text, _err = _main(["study", str(ROOT / "studies" / "trainer-uncertainty.yaml"), "-o", str(out), *limit])
    assert rc == 0, _err
    names = sorted(p.name for p in out.iterdir())
    assert names == ["costs.png", "mass-distribution.png", "mass-influence.png", "results.csv",
                     "study.json"]                                   # the sweep's plots gone
    assert all(f"wrote {out / n}" in out_text for n in names)
    assert set(names) <= set(plots.OUTPUT_NAMES)
    assert _mode(out) == 0o750                                       # the folder keeps its mode
    assert [p.name for p in tmp_path.iterdir()] == ["out"]


def test_write_outputs_into_a_file_is_an_input_error(tmp_path):
    f = tmp_path / "f"
    f.write_text("")
    with pytest.raises(InputError, match="is a file, not a folder"):
        plots.output_folder(f)


# ------------------------------------------------------------------ reports

def test_markdown_and_html_escape_what_the_user_wrote():
    text = TRAINER.read_text().replace("id: approach-stall", "id: '<script>alert(1)</script>'", 1)
    spec = load_text(text, "x.yaml")
    res = solve(spec)
    blocks = R.document(spec, res, diagram=False, envelope=False, flight=False)
    md = R.to_markdown(blocks)
    assert "<script>" not in md and "&lt;script&gt;alert(1)&lt;/script&gt;" in md
    page = R.to_html(blocks)
    assert "<script>" not in page and "&lt;script&gt;alert(1)&lt;/script&gt;" in page
    assert "\\" not in page.split("<body>", 1)[1].split("data:image")[0]   # no stray Markdown escapes


def test_html_report_is_byte_identical_on_a_rerun(solved):
    # the solve time was the one thing that changed between reruns (the figures are
    # deterministic PNGs, left out here for speed)
    spec, res = solved["trainer-jet.yaml"]
    again = solve(spec)
    assert again.stats["solve_time_s"] != res.stats["solve_time_s"]           # timing differs ...
    html = [R.to_html(R.document(spec, r, diagram=False, envelope=False, flight=False)) for r in (res, again)]
    assert html[0] == html[1] and "iterations" in html[0]                     # ... the report not
