#!/usr/bin/env python3
"""Kernel-free self-test of the notebook checker's verdicts (issue 19): each
kind of broken notebook is planted as cells with the outputs a kernel would
have given, and the checker must fail it, for its own reason; the good
cells beside them must pass. Run by self_test.sh (also with --quick), or
alone with the venv's python. Prints one line per case and exits 1 if any
breakage passes.
"""

from __future__ import annotations

import shutil
import subprocess
import sys
import tempfile
from pathlib import Path

import nbformat
from nbformat.v4 import new_code_cell, new_notebook, new_output, new_raw_cell

sys.path.insert(0, str(Path(__file__).resolve().parent))
import nbcheck  # noqa: E402

SVG = '<svg xmlns="http://www.w3.org/2000/svg" width="10" height="10"><rect width="5" height="5"/></svg>'
EMPTY_SVG = '<svg xmlns="http://www.w3.org/2000/svg" width="10" height="10"></svg>'


def cell(tags=(), outputs=(), metadata=None):
    c = new_code_cell("let x = 1;")
    c.metadata["tags"] = list(tags)
    c.metadata.update(metadata or {})
    c.outputs = list(outputs)
    return c


def setup_cell():
    c = new_code_cell(':dep stratanet = { path = ".." }\nuse stratanet::prelude::*;\n// set-up')
    c.outputs = []
    return c


def value(mime, text):
    return new_output("execute_result", data={mime: text}, execution_count=1)


def stream(name, text):
    return new_output("stream", name=name, text=text)


def verdict(c):
    result = nbcheck.CellResult(index=0, source=c.source)
    nbcheck.check_cell(c, result, "ok", strict_stderr=False)
    return result


# (name, cell, a piece of the failure message it must give; None: must pass)
CASES = [
    ("good: SVG as declared", cell(["expect-svg"], [value("image/svg+xml", SVG)]), None),
    ("good: nothing shown, as declared", cell(["expect-nothing"]), None),
    ("good: a set-up cell needs no tag", setup_cell(), None),
    ("good: table with numbers", cell(["expect-html"], [value("text/html", "<table><tr><td>0.93</td></tr></table>")]), None),
    ("good: the expected error",
     cell(["raises-exception"], [new_output("error", ename="Error", evalue="no column \"x\"", traceback=[])],
          {"expect_error": "no column"}), None),
    ("error text printed to stdout",
     cell(["expect-text"], [stream("stdout", "Error: cannot read \"12a\" as a number\n"), value("text/plain", "()")]),
     "error text on stdout"),
    ("an Err(..) shown as the cell's value",
     cell(["expect-text"], [value("text/plain", "Err(Error { kind: Io })")]), "the cell's value is an error"),
    ("an empty SVG", cell(["expect-svg"], [value("image/svg+xml", EMPTY_SVG)]), "an empty SVG"),
    ("an SVG that is not XML", cell(["expect-svg"], [value("image/svg+xml", "<svg")]), "an empty SVG"),
    ("an untagged cell with no output", cell([]), "shows nothing and declares nothing"),
    ("expect-nothing but shows a value",
     cell(["expect-nothing"], [value("text/html", "<b>x</b>")]), "tagged expect-nothing but shows"),
    ("NaN in an HTML table",
     cell(["expect-html"], [value("text/html", "<table><tr><td>NaN</td></tr></table>")]), "not a number"),
    ("inf in an HTML table",
     cell(["expect-html"], [value("text/html", "<table><tr><td> -inf </td></tr></table>")]), "not a number"),
    ("an Err from ? (stderr only), without --strict-stderr",
     cell(["expect-nothing"], [stream("stderr", "invalid digit found in string\n")]), "stderr output"),
    ("raises-exception without naming the message",
     cell(["raises-exception"], [new_output("error", ename="Error", evalue="boom", traceback=[])]),
     "without naming the message"),
    ("raises-exception with another message",
     cell(["raises-exception"], [new_output("error", ename="Error", evalue="boom", traceback=[])],
          {"expect_error": "no column"}), "not the expected one"),
    ("raises-exception that raised nothing",
     cell(["raises-exception"], [], {"expect_error": "x"}), "raised no error"),
    ("a panic", cell(["expect-nothing"], [stream("stderr", "thread 'main' panicked at src/lib.rs:1:1:\nboom\n")]),
     "panic on stderr"),
    ("expect-svg without SVG", cell(["expect-svg"], [value("text/plain", "1")]), "produced no image/svg+xml"),
]


def notebook_cases():
    skipped = new_notebook(cells=[cell(["skip-execution", "expect-nothing"])])
    raw = new_notebook(cells=[new_raw_cell('let data = Dataset::from_csv("a.csv", "y")?;')])
    prose = new_notebook(cells=[new_raw_cell("A note for the reader, not code.")])
    return [
        ("a cell tagged to be skipped", skipped, "never runs"),
        ("a raw cell holding code", raw, "a raw cell holds code"),
        ("good: a raw cell of prose", prose, None),
    ]


def run_level_cases():
    """The checks of a whole run, without a kernel: a tracked file changed
    during the run, and a written file that differs from its committed
    counterpart. Each case: (name, failures found, a piece of the expected
    failure or None: must pass)."""
    cases = []
    tracked = {"notebooks/parts-model.json": "M 1111"}
    cases.append(("good: an unchanged working tree",
                  nbcheck.worktree_changes(tracked, dict(tracked)), None))
    cases.append(("a tracked file changed by the run",
                  nbcheck.worktree_changes({}, {"notebooks/parts-model.json": "M 2222"}),
                  "notebooks/parts-model.json: clean before the run, M after"))
    cases.append(("a modified file changed again during the run",
                  nbcheck.worktree_changes(tracked, {"notebooks/parts-model.json": "M 3333"}),
                  "its content changed during the run"))
    cases.append(("an untracked file left by the run",
                  nbcheck.worktree_changes({}, {"notebooks/stray.txt": "?? 4444"}),
                  "notebooks/stray.txt: clean before the run, ?? after"))
    cases.append(("good: a notebook that --write saved",
                  nbcheck.worktree_changes({}, {"notebooks/a.ipynb": "M 5555"}, {"notebooks/a.ipynb"}), None))
    work = Path(tempfile.mkdtemp(prefix="nbcheck-planted-"))
    try:
        notebooks, scratch = work / "notebooks", work / "scratch"
        (scratch / "a").mkdir(parents=True)
        notebooks.mkdir()
        (notebooks / "a.ipynb").write_text("{}")
        (notebooks / "model.json").write_text('{"w": 1}\n')
        (notebooks / "results.json").write_text('{"r": 1}\n')
        (scratch / "a" / "model.json").write_text('{"w": 2}\n')
        (scratch / "a" / "results.json").write_text('{"r": 1}\n')
        (scratch / "a" / "chart.svg").write_text("<svg/>")
        same, differ, alone = nbcheck.compare_written(scratch, [notebooks / "a.ipynb"])
        cases.append(("a written file that differs from the committed one", differ,
                      "DIFFERS: a/model.json against the committed"))
        cases.append(("good: a written file equal to the committed one", [] if (len(same), alone) == (1, 1)
                      else [f"expected 1 same and 1 without a counterpart, got {len(same)} and {alone}"], None))
        # The scratch folder of a check: a person's folder is parked and put
        # back; the notebooks see an empty one; what they wrote is kept.
        own, parked, last, interrupted = (work / n for n in ("own", "parked", "last", "interrupted"))
        own.mkdir()
        (own / "ledger.json").write_text("earlier looks")
        seen = []
        with nbcheck.FreshScratch(own, parked, last, interrupted):
            seen = sorted(p.name for p in own.iterdir())
            (own / "written.txt").write_text("by the check")
        problems = []
        if seen:
            problems.append(f"the notebooks saw {seen} in their scratch folder")
        if not (own / "ledger.json").is_file() or (own / "written.txt").exists():
            problems.append("the person's scratch folder was not put back as it was")
        if not (last / "written.txt").is_file():
            problems.append("the check's written files were not kept")
        cases.append(("good: a check parks the scratch folder and puts it back", problems, None))
        # A real git work tree: a tracked file rewritten between two states.
        if shutil.which("git"):
            repo = work / "repo"
            repo.mkdir()
            g = ["git", "-c", "user.name=planted", "-c", "user.email=planted@example.invalid"]
            subprocess.run(g + ["init", "-q"], cwd=repo, check=True)
            (repo / "tracked.txt").write_text("committed\n")
            subprocess.run(g + ["add", "tracked.txt"], cwd=repo, check=True)
            subprocess.run(g + ["commit", "-q", "-m", "x"], cwd=repo, check=True)
            before = nbcheck.worktree_state(repo)
            (repo / "tracked.txt").write_text("rewritten by a notebook\n")
            cases.append(("a tracked file rewritten in a real git work tree",
                          nbcheck.worktree_changes(before, nbcheck.worktree_state(repo)),
                          "tracked.txt: clean before the run, M after"))
    finally:
        shutil.rmtree(work, ignore_errors=True)
    return cases


def main() -> int:
    bad = 0

    def report(name, failures, want):
        nonlocal bad
        joined = " | ".join(failures)
        ok = (not failures) if want is None else (want in joined)
        bad += not ok
        shown = joined or "passes"
        print(f"{'planted ok:  ' if ok else 'planted FAIL:'} {name}: {shown[:150]}")

    for name, c, want in CASES:
        report(name, verdict(c).failures, want)
    for name, nb, want in notebook_cases():
        report(name, nbcheck.check_notebook_cells(nb), want)
    run_cases = run_level_cases()
    for name, failures, want in run_cases:
        report(name, failures, want)
    total = len(CASES) + len(notebook_cases()) + len(run_cases)
    print(f"planted: {total - bad} passed, {bad} failed")
    return 1 if bad else 0


if __name__ == "__main__":
    sys.exit(main())
