#!/usr/bin/env python3
"""Headless checks of the evcxr (Rust) notebooks, in real Jupyter.

Run it through notebooks/tools/check.sh, which sets up the environment
(kernelspec, Jupyter folders, venv); see that script for the paths.

  nbcheck.py execute NOTEBOOK... [--write]
      Run every cell in the evcxr kernel with the notebook's folder as working
      directory; fail on an `error` output (compile errors, `:dep` failures),
      on a stderr stream containing `panicked at`, on a cell tagged
      `expect-svg` / `expect-html` / `expect-text` / `expect-png` /
      `expect-json` / `expect-markdown` / `expect-latex` that shows no output of
      that MIME type, and on a cell tagged `raises-exception` that does not
      fail (with the message in the cell's metadata `expect_error`). Other
      stderr output fails (an Err that `?` returns from a cell reaches only
      stderr) unless the cell is tagged `allow-stderr`. Hidden errors fail
      too: an Err(..) as a cell's value, error text on stdout, an empty SVG,
      NaN or inf in an HTML table; so does a cell that shows nothing and
      declares nothing (tag it `expect-nothing`), a code cell tagged
      `skip-execution` and a raw cell holding code. With --write, a notebook
      that passes is saved back, normalised.

  nbcheck.py reproduce NOTEBOOK... [--save-to DIR]
      Run each notebook again in memory and compare every output with the
      committed one (text, HTML and SVG byte for byte); print the cells that
      differ and exit non-zero on any difference or failed check.

  Both commands run the notebooks in an empty scratch folder
  (target/notebook-scratch; a folder already there is parked in
  target/nbcheck and put back afterwards), compare every file the notebooks
  wrote there with its committed counterpart (NAME written under
  target/notebook-scratch/STEM/ against NAME beside STEM.ipynb, when git
  tracks it), byte for byte, and fail when the run changed the working tree
  (`git status --porcelain` and the content of every file it lists, before
  and after; with --write, the notebooks written are expected to change).
  The files a check's notebooks wrote stay in target/nbcheck/scratch.
  --save-to DIR saves each executed notebook (normalised) in DIR, and the
  files they wrote in DIR/written, for a reviewer to open.

  nbcheck.py normalise NOTEBOOK... [--check]
      Rewrite notebooks in the normalised form without running them (or, with
      --check, only report which ones are not normalised).

A folder argument means every *.ipynb in it. Exit status: 0 all passed,
1 something failed, 2 bad usage.

Normalised form: no execution counts; no `execution`/`ExecuteTime` cell
metadata; evcxr's `:timing` output ("Took 12ms") dropped; all stdout of a cell
in one stream output, then all stderr, then rich results, then errors (evcxr
sends stdout and stderr from two threads, so their interleaving is not
stable); in stderr, panic backtraces (evcxr sets RUST_BACKTRACE=1; they hold
toolchain hashes and this machine's paths) and the thread id in "thread 'x'
(1234) panicked at" removed; the kernelspec set to evcxr's ("rust"); JSON
with sorted keys and one-space indent, as nbformat writes it.
"""

from __future__ import annotations

import argparse
import asyncio
import atexit
import fcntl
import hashlib
import json
import os
import re
import shutil
import subprocess
import sys
import time
from dataclasses import dataclass, field
from pathlib import Path

import nbformat
from nbclient import NotebookClient
from nbclient.exceptions import CellTimeoutError, DeadKernelError

ROOT = Path(__file__).resolve().parents[2]
# evcxr's build folder (EVCXR_TMPDIR): one of the build folders set-up gives
# the kernels Jupyter starts (env.sh's NB_BUILD_SLOTS and NB_SLOT_COUNT;
# check.sh sources env.sh), so a check starts from what set-up compiled
# there. take_lock picks the first free one and holds its lock for the whole
# run, the lock start-kernel.sh takes, so a checker and a kernel never share
# a folder. $NBCHECK_BUILD_DIR names a folder of its own instead. Outside the
# repo: cargo parses every Cargo.toml above a package while looking for a
# workspace (a repo manifest with a [workspace] table, or a broken one, would
# break evcxr's build) and applies every .cargo/config.toml above the build
# folder.
BUILD_DIR: Path | None = None  # set by take_lock
KERNEL_LOG = ROOT / "target" / "nbcheck" / "kernel.log"
# Where notebooks write (`../target/notebook-scratch/STEM/...` from
# notebooks/). A check runs them in an empty one, so a rerun starts where a
# reviewer's fresh clone starts (no hold-out ledger with earlier looks, no
# file of an earlier run); the folder a person's own runs left is parked
# meanwhile and put back.
SCRATCH = ROOT / "target" / "notebook-scratch"
PARKED_SCRATCH = ROOT / "target" / "nbcheck" / "scratch-parked"
LAST_SCRATCH = ROOT / "target" / "nbcheck" / "scratch"
INTERRUPTED_SCRATCH = ROOT / "target" / "nbcheck" / "scratch-interrupted"

MIME_TAGS = {
    "expect-svg": "image/svg+xml",
    "expect-html": "text/html",
    "expect-text": "text/plain",
    "expect-png": "image/png",
    "expect-json": "application/json",
    "expect-markdown": "text/markdown",
    "expect-latex": "text/latex",
}
ERROR_TAG = "raises-exception"  # nbclient's own name for "this cell fails"
STDERR_TAG = "allow-stderr"
NOTHING_TAG = "expect-nothing"
EXPECT_ERROR_KEY = "expect_error"  # cell metadata: text the raised error must contain  # the cell is meant to show nothing
SKIP_TAGS = ("skip-execution",)  # nbclient never runs such a cell
# What a cell's shown value or printed text looks like when it holds an error
# that nobody raised: an `Err(..)` as the cell's value, or an error message
# printed to stdout.
ERR_VALUE = re.compile(r"^\s*Err\(")
STDOUT_ERROR = re.compile(r"^\s*(error|Error)(\[E\d+\])?:|panicked at")
# A set-up cell: only evcxr commands (`:dep`, `:timing`), `use` lines and
# comments. It cannot show a result, so it needs no tag.
SETUP_LINE = re.compile(r"^\s*(:[a-z_]+\b.*|use\s[^;]*;|//.*)?\s*$")
# A table cell that shows a number that is not one.
HTML_NOT_A_NUMBER = re.compile(r"<t[dh][^>]*>\s*[-+]?(nan|inf|infinity)\s*%?\s*</t[dh]>", re.IGNORECASE)
# Source that is code: a Rust statement or an evcxr command.
LOOKS_LIKE_CODE = re.compile(r"^\s*(:dep|let |use |fn |println!|[A-Za-z_][A-Za-z0-9_:.]*\(.*\)\s*;?\s*$)", re.MULTILINE)
PANIC = "panicked at"
TIMING_LINE = re.compile(r"^Took \d+ms\s*$")
TIMING_HTML = re.compile(r"^\s*(<span[^>]*>)?\s*Took \d+ms\s*(</span>)?\s*$")
ANSI = re.compile(r"\x1b\[[0-9;]*[A-Za-z]")
# Rust >= 1.89 names the thread's OS id in panic messages: thread 'x' (5562) panicked at
PANIC_THREAD_ID = re.compile(r"(thread '[^']*') \(\d+\) (panicked at)")
DROP_CELL_METADATA = ("execution", "ExecuteTime")
KERNELSPEC = {"display_name": "Rust", "language": "rust", "name": "rust"}


def out(line: str = "") -> None:
    print(line, flush=True)


def plain(text: str) -> str:
    return ANSI.sub("", text)


def first_line(source: str) -> str:
    for line in source.splitlines():
        if line.strip():
            return line.strip()
    return ""


def short(text: str, width: int = 100) -> str:
    return text if len(text) <= width else text[: width - 1] + "…"


# --------------------------------------------------------------------------
# Normalisation
# --------------------------------------------------------------------------


def is_timing_output(output) -> bool:
    if output.get("output_type") not in ("execute_result", "display_data"):
        return False
    data = output.get("data", {})
    return set(data) == {"text/html"} and bool(TIMING_HTML.match(data["text/html"]))


def drop_backtraces(lines: list[str]) -> list[str]:
    """evcxr runs cells with RUST_BACKTRACE=1, so a panic prints a backtrace
    with toolchain hashes and absolute paths of this machine: drop it (the
    `stack backtrace:` line, the indented frames, and rustc's closing note)."""
    kept, in_trace = [], False
    for line in lines:
        if line.rstrip("\n") == "stack backtrace:":
            in_trace = True
            continue
        if in_trace:
            if line[:1].isspace() and line.strip():
                continue
            in_trace = False
            if line.startswith("note: Some details are omitted"):
                continue
        kept.append(line)
    return kept


def normalise_outputs(outputs: list) -> list:
    streams: dict[str, str] = {"stdout": "", "stderr": ""}
    rich, errors = [], []
    for o in outputs:
        kind = o.get("output_type")
        if kind == "stream":
            name = o.get("name", "stdout")
            streams[name] = streams.get(name, "") + o.get("text", "")
        elif kind in ("execute_result", "display_data"):
            if is_timing_output(o):
                continue
            o = nbformat.from_dict(dict(o))
            if kind == "execute_result":
                o["execution_count"] = None
            o.setdefault("metadata", {})
            rich.append(o)
        elif kind == "error":
            errors.append(o)
        else:
            rich.append(o)
    result = []
    for name, text in streams.items():
        lines = [l for l in text.splitlines(keepends=True) if not TIMING_LINE.match(l)]
        if name == "stderr":
            lines = drop_backtraces(lines)
        text = PANIC_THREAD_ID.sub(r"\1 \2", "".join(lines))
        if text:
            result.append(nbformat.v4.new_output("stream", name=name, text=text))
    return result + rich + errors


def normalise_notebook(nb) -> None:
    nb.nbformat_minor = max(nb.get("nbformat_minor", 5), 5)
    nb.metadata["kernelspec"] = dict(KERNELSPEC)
    used = {c.get("id") for c in nb.cells if c.get("id")}
    for index, cell in enumerate(nb.cells):
        if not cell.get("id"):
            cid = f"cell-{index}"
            while cid in used:
                cid += "x"
            used.add(cid)
            cell["id"] = cid
        for key in DROP_CELL_METADATA:
            cell.metadata.pop(key, None)
        if cell.cell_type == "code":
            cell.execution_count = None
            cell.outputs = normalise_outputs(cell.get("outputs", []))


def notebook_text(nb) -> str:
    text = nbformat.writes(nb, version=4)
    return text if text.endswith("\n") else text + "\n"


def write_atomically(path: Path, text: str) -> None:
    tmp = path.with_name(f".{path.name}.{os.getpid()}.tmp")
    tmp.write_text(text, encoding="utf-8")
    os.replace(tmp, path)


# --------------------------------------------------------------------------
# Running a notebook
# --------------------------------------------------------------------------


@dataclass
class CellResult:
    index: int
    source: str
    ran: bool = False
    seconds: float = 0.0
    checks_passed: int = 0
    failures: list[str] = field(default_factory=list)
    warnings: list[str] = field(default_factory=list)


@dataclass
class Run:
    path: Path
    nb: object = None
    cells: list[CellResult] = field(default_factory=list)
    fatal: str | None = None
    first_cell_seconds: float | None = None
    cold: bool = False
    seconds: float = 0.0

    @property
    def passed(self) -> bool:
        return self.fatal is None and all(not c.failures for c in self.cells)


def build_dir_is_cold() -> bool:
    """Cold: no dependency compiled yet (a notebook without `:dep` builds only
    evcxr's own cdylib, no .rlib), so a `:dep` cell compiles everything."""
    return not any((BUILD_DIR / "target").glob("*/debug/deps/*.rlib"))


def prepare_build_dir(fresh: bool) -> bool:
    """evcxr builds in EVCXR_TMPDIR (BUILD_DIR), kept between runs so later
    runs reuse compiled dependencies, and seeded with the repo's Cargo.lock so
    `:dep` resolves the same dependency versions as `cargo build` does."""
    if fresh and BUILD_DIR.exists():
        shutil.rmtree(BUILD_DIR)
    cold = build_dir_is_cold()
    BUILD_DIR.mkdir(parents=True, exist_ok=True)
    lock = ROOT / "Cargo.lock"
    if lock.is_file():
        shutil.copyfile(lock, BUILD_DIR / "Cargo.lock")
    return cold


def check_cell(cell, result: CellResult, reply_status: str | None, strict_stderr: bool) -> None:
    outputs = cell.get("outputs", [])
    tags = set(cell.metadata.get("tags", []))
    errors = [o for o in outputs if o.get("output_type") == "error"]
    stderr = "".join(
        o.get("text", "") for o in outputs if o.get("output_type") == "stream" and o.get("name") == "stderr"
    )
    stderr_lines = plain(stderr).splitlines()
    panics = [
        " ".join(x.strip() for x in stderr_lines[i : i + 2])
        for i, l in enumerate(stderr_lines)
        if PANIC in l
    ]
    mimes = set()
    for o in outputs:
        if o.get("output_type") in ("execute_result", "display_data") and not is_timing_output(o):
            mimes.update(o.get("data", {}))

    def ok() -> None:
        result.checks_passed += 1

    if ERROR_TAG in tags:
        expected = cell.metadata.get(EXPECT_ERROR_KEY)
        said = "\n".join(
            [plain(e.get("evalue", "")) for e in errors]
            + [plain(l) for e in errors for l in e.get("traceback", [])]
            + stderr_lines
        )
        if not (errors or panics):
            result.failures.append(f"tagged {ERROR_TAG} but raised no error and did not panic")
        elif not isinstance(expected, str) or not expected.strip():
            result.failures.append(
                f"tagged {ERROR_TAG} without naming the message: set the cell's metadata "
                f"{EXPECT_ERROR_KEY!r} to a piece of the expected error text"
            )
        elif expected not in said:
            result.failures.append(f"raised an error, but not the expected one ({expected!r} not in its text)")
        else:
            ok()
    else:
        if errors:
            for e in errors:
                trace = [plain(l) for l in e.get("traceback", [])]
                detail = "\n".join("        " + short(l, 160) for l in trace[:12] if l.strip())
                msg = f"error output: {e.get('ename', '')}: {plain(e.get('evalue', ''))}".rstrip(": ")
                result.failures.append(msg + ("\n" + detail if detail else ""))
        elif reply_status == "error":
            result.failures.append("kernel replied status=error without an error output")
        else:
            ok()
        if panics:
            result.failures.append("panic on stderr: " + short(panics[0].strip(), 200))
        else:
            ok()
        # evcxr reports an Err returned by `?` in a cell only as stderr text
        # (status ok, no error output), so stderr is the only trace of it.
        text = [l for l in stderr_lines if l.strip() and not TIMING_LINE.match(l)]
        if text and not panics and STDERR_TAG not in tags:
            what = f"stderr output (an Err from `?` shows only this way): {short(text[0].strip(), 120)!r}"
            # Strict always (issue 19): a warning let `--write` save a
            # notebook whose cell failed. `--strict-stderr` is kept as a no-op.
            result.failures.append(what + f"; tag the cell {STDERR_TAG} if it is meant")
        else:
            ok()
    for tag in sorted(tags):
        if tag.startswith("expect-") and tag != NOTHING_TAG:
            mime = MIME_TAGS.get(tag)
            if mime is None:
                result.failures.append(f"unknown tag {tag!r} (known: {', '.join(sorted([*MIME_TAGS, NOTHING_TAG]))})")
            elif mime in mimes:
                ok()
            else:
                shown = ", ".join(sorted(mimes)) or "no rich output"
                result.failures.append(f"tagged {tag} but produced no {mime} (got: {shown})")
    check_shown_values(outputs, tags, mimes, result)


def svg_is_empty(svg: str) -> bool:
    """An SVG with no drawing in it: not XML, no <svg> root, or a root with no
    child element other than metadata."""
    import xml.etree.ElementTree as ET

    try:
        root = ET.fromstring(svg)
    except ET.ParseError:
        return True
    if not root.tag.endswith("svg"):
        return True
    drawn = [c for c in root.iter() if c is not root and c.tag.split("}")[-1] not in ("title", "desc", "metadata", "defs", "style")]
    return not drawn


def is_setup_cell(source: str) -> bool:
    return all(SETUP_LINE.match(line) for line in source.splitlines())


def check_shown_values(outputs: list, tags: set, mimes: set, result: CellResult) -> None:
    """What a cell shows must be what it declares, and hold no hidden error:
    an Err(..) as the value, error text on stdout, an empty SVG, NaN or inf in
    an HTML table; a cell declares its output with an expect-* tag (or
    expect-nothing, or raises-exception)."""
    stdout = plain("".join(
        o.get("text", "") for o in outputs if o.get("output_type") == "stream" and o.get("name") == "stdout"
    ))
    rich = [o for o in outputs if o.get("output_type") in ("execute_result", "display_data") and not is_timing_output(o)]
    if ERROR_TAG not in tags:
        for o in rich:
            text = o.get("data", {}).get("text/plain", "")
            text = text if isinstance(text, str) else "".join(text)
            if ERR_VALUE.match(plain(text)):
                result.failures.append(f"the cell's value is an error: {short(plain(text).strip(), 120)!r}")
        bad = [l for l in stdout.splitlines() if STDOUT_ERROR.search(l)]
        if bad:
            result.failures.append(f"error text on stdout: {short(bad[0].strip(), 120)!r}")
    for o in rich:
        data = o.get("data", {})
        svg = data.get("image/svg+xml")
        if svg is not None:
            svg = svg if isinstance(svg, str) else "".join(svg)
            if svg_is_empty(svg):
                result.failures.append("an empty SVG (nothing drawn in it)")
        html = data.get("text/html")
        if html is not None:
            html = html if isinstance(html, str) else "".join(html)
            m = HTML_NOT_A_NUMBER.search(html)
            if m:
                result.failures.append(f"an HTML table shows a value that is not a number: {m.group(0)!r}")
    declared = any(t.startswith("expect-") for t in tags) or ERROR_TAG in tags or is_setup_cell(result.source)
    shown = bool(rich) or bool(stdout.strip())
    if NOTHING_TAG in tags and rich:
        result.failures.append(f"tagged {NOTHING_TAG} but shows {', '.join(sorted(mimes))}")
    if not declared:
        if shown:
            result.warnings.append(f"declares no expected output: tag it expect-KIND or {NOTHING_TAG}")
        else:
            result.failures.append(
                f"shows nothing and declares nothing: tag it {NOTHING_TAG} if that is meant, "
                "or expect-KIND for what it should show"
            )


def check_notebook_cells(nb) -> list[str]:
    """Failures of the notebook as written, before any cell runs: cells that
    would never run (tagged to be skipped) and raw cells that hold code."""
    problems = []
    for index, cell in enumerate(nb.cells):
        tags = set(cell.get("metadata", {}).get("tags", []))
        skipped = sorted(tags.intersection(SKIP_TAGS))
        if cell.get("cell_type") == "code" and skipped:
            problems.append(f"cell {index}: tagged {skipped[0]}: it never runs, so nothing checks it")
        if cell.get("cell_type") == "raw" and LOOKS_LIKE_CODE.search(cell.get("source", "")):
            problems.append(f"cell {index}: a raw cell holds code ({short(first_line(cell.get('source', '')), 60)!r}): it never runs; make it a code cell")
    return problems


async def collect_late_streams(client, cell, msg_id, settle: float) -> None:
    """evcxr forwards the cell's stderr from its own thread and does not wait
    for it before replying, so the last stderr lines (e.g. the Err that `?`
    returned) can arrive after the cell is "idle": nbclient would drop them,
    or they would land in the next cell. Wait `settle` seconds for them."""
    deadline = time.monotonic() + settle
    while (left := deadline - time.monotonic()) > 0:
        try:
            msg = await client.kc.get_iopub_msg(timeout=left)
        except Exception:  # queue.Empty on timeout
            return
        if msg.get("parent_header", {}).get("msg_id") != msg_id:
            continue
        if msg.get("msg_type") == "stream":
            content = msg["content"]
            cell.outputs.append(nbformat.v4.new_output("stream", name=content["name"], text=content["text"]))


async def run_notebook(path: Path, args) -> Run:
    run = Run(path=path)
    nb = nbformat.read(path, as_version=4)
    run.nb = nb
    replies: dict[int, str] = {}
    starts: dict[int, float] = {}

    def on_execute(cell, cell_index, **_):
        starts[cell_index] = time.monotonic()
        out(f"  cell {cell_index}: running `{short(first_line(cell.source), 60)}`")

    def on_executed(cell, cell_index, execute_reply, **_):
        replies[cell_index] = (execute_reply or {}).get("content", {}).get("status")

    client = NotebookClient(
        nb,
        timeout=args.timeout,
        startup_timeout=args.startup_timeout,
        kernel_name=args.kernel,
        allow_errors=True,
        record_timing=False,
        on_cell_execute=on_execute,
        on_cell_executed=on_executed,
    )
    env = dict(os.environ, EVCXR_TMPDIR=str(BUILD_DIR))
    run.cold = prepare_build_dir(args.fresh)
    t_nb = time.monotonic()
    code_cells = [(i, c) for i, c in enumerate(nb.cells) if c.cell_type == "code" and c.source.strip()]
    problems = check_notebook_cells(nb)
    if problems:  # refused as written: no kernel is started
        run.fatal = "; ".join(problems)
        run.cells = [CellResult(index=i, source=c.source, failures=["not run"]) for i, c in code_cells]
        return run
    for c in nb.cells:  # a cell that is not reached must not keep its old outputs
        if c.cell_type == "code":
            c.outputs = []
    KERNEL_LOG.parent.mkdir(parents=True, exist_ok=True)
    log = open(KERNEL_LOG, "a", encoding="utf-8")
    log.write(f"==== {time.strftime('%Y-%m-%d %H:%M:%S')} {rel(path)}\n")
    log.flush()
    log_start = log.tell()
    try:
        # The kernel's own stdout/stderr (not the cells') go to the log.
        async with client.async_setup_kernel(cwd=str(path.parent), env=env, stdout=log, stderr=log):
            info = await client.async_wait_for_reply(client.kc.kernel_info())
            if info and "language_info" in info.get("content", {}):
                nb.metadata["language_info"] = info["content"]["language_info"]
            last_request = [None]
            kc_execute = client.kc.execute

            def execute_and_remember(*a, **k):
                last_request[0] = kc_execute(*a, **k)
                return last_request[0]

            client.kc.execute = execute_and_remember
            for n, (index, cell) in enumerate(code_cells):
                result = CellResult(index=index, source=cell.source)
                run.cells.append(result)
                try:
                    await client.async_execute_cell(cell, index, execution_count=n + 1)
                except CellTimeoutError:
                    result.failures.append(f"timed out after {args.timeout} s (--timeout)")
                    run.fatal = f"cell {index} timed out; later cells not run"
                except DeadKernelError:
                    result.failures.append("the kernel died")
                    run.fatal = f"kernel died in cell {index}; later cells not run"
                if run.fatal is None:
                    await collect_late_streams(client, cell, last_request[0], args.settle)
                result.ran = True
                result.seconds = time.monotonic() - starts.get(index, time.monotonic())
                if n == 0:
                    run.first_cell_seconds = result.seconds
                out(f"  cell {index}: {result.seconds:.1f} s")
                if run.fatal:
                    break
                check_cell(cell, result, replies.get(index), args.strict_stderr)
    except Exception as exc:  # kernel failed to start, connection trouble, ...
        if run.fatal is None:
            run.fatal = f"{type(exc).__name__}: {exc} (kernel log: {rel(KERNEL_LOG)})"
    finally:
        log.close()
        atexit.unregister(client._cleanup_kernel)  # nbclient's, noisy once the kernel is gone
    if run.fatal:
        with open(KERNEL_LOG, encoding="utf-8", errors="replace") as f:
            f.seek(log_start)
            tail = [l.rstrip() for l in f.read().splitlines() if l.strip()]
        picked = [
            l for l in tail
            if not l.lstrip()[:1].isdigit()  # backtrace frames
            and not l.strip().startswith("at ")
            and not l.startswith("No configuration file found")  # evcxr's greeting
        ]
        if picked:
            run.fatal += "\n    kernel said: " + "\n    kernel said: ".join(short(l, 160) for l in picked[:8])
    for index, cell in code_cells:
        if not any(r.index == index for r in run.cells):
            run.cells.append(CellResult(index=index, source=cell.source, failures=["not run"]))
    run.cells.sort(key=lambda r: r.index)
    run.seconds = time.monotonic() - t_nb
    normalise_notebook(nb)
    return run


# --------------------------------------------------------------------------
# Reports
# --------------------------------------------------------------------------


def describe(run: Run) -> tuple[int, int, int, int]:
    cells_ok = sum(1 for c in run.cells if c.ran and not c.failures)
    cells_bad = len(run.cells) - cells_ok
    checks_ok = sum(c.checks_passed for c in run.cells)
    checks_bad = sum(len(c.failures) for c in run.cells) + (1 if run.fatal else 0)
    return cells_ok, cells_bad, checks_ok, checks_bad


def rel(path: Path) -> str:
    try:
        return str(path.resolve().relative_to(ROOT))
    except ValueError:
        return str(path)


def report_run(run: Run, extra_failures: int = 0) -> None:
    cells_ok, cells_bad, checks_ok, checks_bad = describe(run)
    checks_bad += extra_failures
    verdict = "PASS" if run.passed and not extra_failures else "FAIL"
    first = (
        f"{run.first_cell_seconds:.1f} s ({'cold: no dependency compiled yet' if run.cold else 'warm: dependencies compiled before'})"
        if run.first_cell_seconds is not None
        else "not run"
    )
    out(
        f"{verdict} {rel(run.path)}: cells: {cells_ok} passed, {cells_bad} failed; "
        f"checks: {checks_ok} passed, {checks_bad} failed"
    )
    out(f"  first cell: {first}; whole notebook {run.seconds:.1f} s")
    if run.fatal:
        out(f"  fatal: {run.fatal}")
    for c in run.cells:
        for f in c.failures:
            out(f"  cell {c.index} (`{short(first_line(c.source), 60)}`): {f}")
        for w in c.warnings:
            out(f"  warning: cell {c.index} (`{short(first_line(c.source), 60)}`): {w}")


def first_difference(old: str, new: str) -> str:
    a, b = old.splitlines(), new.splitlines()
    for n in range(max(len(a), len(b))):
        la = a[n] if n < len(a) else None
        lb = b[n] if n < len(b) else None
        if la != lb:
            break
    else:
        return "      (only line endings differ)"
    if la is None or lb is None:
        which = "committed" if la is None else "new"
        text = lb if la is None else la
        return f"      line {n + 1}: only in {'new' if la is None else 'committed'} output ({which} ended): {short(text, 100)!r}"
    col = next((i for i, (x, y) in enumerate(zip(la, lb)) if x != y), min(len(la), len(lb)))
    lo = max(0, col - 30)

    def window(s: str) -> str:
        piece = s[lo : col + 50]
        return ("…" if lo else "") + piece + ("…" if col + 50 < len(s) else "")

    return (
        f"      line {n + 1}, column {col + 1} (committed {len(a)} lines, new {len(b)} lines):\n"
        f"      - committed: {window(la)!r}\n"
        f"      + new:       {window(lb)!r}"
    )


def output_items(outputs: list) -> dict[str, str]:
    """Each output as (label -> text): stream:stdout, text/html, error, ..."""
    items: dict[str, str] = {}

    def put(label: str, text: str) -> None:
        n, key = 2, label
        while key in items:
            key, n = f"{label} #{n}", n + 1
        items[key] = text

    for o in outputs:
        kind = o.get("output_type")
        if kind == "stream":
            put(f"stream {o.get('name')}", o.get("text", ""))
        elif kind in ("execute_result", "display_data"):
            for mime, value in sorted(o.get("data", {}).items()):
                put(mime, value if isinstance(value, str) else json.dumps(value, sort_keys=True, indent=1))
        elif kind == "error":
            put("error", "\n".join([o.get("ename", ""), o.get("evalue", "")] + list(o.get("traceback", []))))
    return items


def compare(committed, executed) -> list[str]:
    diffs = []
    old_cells = [c for c in committed.cells]
    if not any(c.get("outputs") for c in old_cells if c.cell_type == "code"):
        diffs.append("  the committed notebook has no outputs: run `check.sh execute --write` on it first")
    for index, (old, new) in enumerate(zip(old_cells, executed.cells)):
        if old.cell_type != "code":
            continue
        a, b = output_items(old.get("outputs", [])), output_items(new.get("outputs", []))
        head = f"  cell {index} (`{short(first_line(old.source), 60)}`)"
        for label in list(a) + [l for l in b if l not in a]:
            if label not in b:
                diffs.append(f"{head} {label}: in the committed notebook, not produced now")
            elif label not in a:
                diffs.append(f"{head} {label}: produced now, not in the committed notebook")
                diffs.append(first_difference("", b[label]))
            elif a[label] != b[label]:
                diffs.append(f"{head} {label} differs")
                diffs.append(first_difference(a[label], b[label]))
    return diffs



# --------------------------------------------------------------------------
# The scratch folder, written files and the working tree
# --------------------------------------------------------------------------


class FreshScratch:
    """Runs the notebooks of one check in an empty SCRATCH: a folder already
    there (a person's own runs) is parked and put back at the end; what the
    check's notebooks wrote is kept in LAST_SCRATCH. A check that was killed
    left its parked folder behind: it is put back first, and said so."""

    def __init__(self, scratch: Path = SCRATCH, parked: Path = PARKED_SCRATCH,
                 last: Path = LAST_SCRATCH, interrupted: Path = INTERRUPTED_SCRATCH):
        self.scratch, self.parked, self.last, self.interrupted = scratch, parked, last, interrupted

    def __enter__(self):
        self.parked.parent.mkdir(parents=True, exist_ok=True)
        if self.parked.exists():
            if self.scratch.exists():
                shutil.rmtree(self.interrupted, ignore_errors=True)
                os.replace(self.scratch, self.interrupted)
            os.replace(self.parked, self.scratch)
            out(f"nbcheck: an interrupted check had parked {rel(self.scratch)} in {rel(self.parked)}; put it back"
                + (f" (that check's own files: {rel(self.interrupted)})" if self.interrupted.exists() else ""))
        if self.scratch.exists():
            os.replace(self.scratch, self.parked)
            out(f"nbcheck: {rel(self.scratch)} parked in {rel(self.parked)} while the notebooks run "
                "in an empty one; it is put back at the end")
        self.scratch.mkdir(parents=True)
        return self

    def __exit__(self, *exc):
        shutil.rmtree(self.last, ignore_errors=True)
        if self.scratch.exists():
            os.replace(self.scratch, self.last)
        if self.parked.exists():
            os.replace(self.parked, self.scratch)
        return False


def git(*args: str, cwd: Path = ROOT) -> subprocess.CompletedProcess:
    return subprocess.run(["git", *args], cwd=cwd, capture_output=True)


def in_git_work_tree(path: Path) -> bool:
    folder = path if path.is_dir() else path.parent
    try:
        r = git("rev-parse", "--is-inside-work-tree", cwd=folder)
    except (FileNotFoundError, NotADirectoryError):
        return False
    return r.returncode == 0 and r.stdout.strip() == b"true"


def is_committed(path: Path) -> bool:
    """Tracked by git (in a git work tree); elsewhere, present."""
    if not path.is_file():
        return False
    if in_git_work_tree(path):
        return git("ls-files", "--error-unmatch", "--", path.name, cwd=path.parent).returncode == 0
    return True


def first_byte_difference(a: bytes, b: bytes) -> str:
    n = next((i for i, (x, y) in enumerate(zip(a, b)) if x != y), min(len(a), len(b)))
    line = a[:n].count(b"\n") + 1
    return f"first difference at byte {n + 1} (line {line}); committed {len(a)} bytes, written {len(b)} bytes"


def compare_written(scratch: Path, notebooks: list[Path]) -> tuple[list[str], list[str], int]:
    """Every file under scratch/STEM/ against its committed counterpart beside
    STEM.ipynb (same relative path), byte for byte. Returns (lines that
    report a match, lines that report a difference, files without a
    counterpart)."""
    folders = {nb.stem: nb.parent for nb in notebooks}
    same, differ, alone = [], [], 0
    if not scratch.is_dir():
        return same, differ, alone
    for f in sorted(p for p in scratch.rglob("*") if p.is_file()):
        parts = f.relative_to(scratch).parts
        if len(parts) < 2 or parts[0] not in folders:
            alone += 1
            continue
        counterpart = folders[parts[0]].joinpath(*parts[1:])
        if not is_committed(counterpart):
            alone += 1
            continue
        written, committed = f.read_bytes(), counterpart.read_bytes()
        shown = f"{'/'.join(parts)} against the committed {rel(counterpart)}"
        if written == committed:
            same.append(f"  same:    {shown}")
        else:
            differ.append(f"  DIFFERS: {shown}: {first_byte_difference(committed, written)}")
    return same, differ, alone


def worktree_state(root: Path = ROOT) -> dict[str, str] | None:
    """What `git status --porcelain` lists, each path with the SHA-256 of its
    content now (so a file changed again while already modified counts too).
    None outside a git work tree."""
    if not in_git_work_tree(root):
        return None
    r = git("status", "--porcelain=v1", "-z", "--untracked-files=all", cwd=root)
    if r.returncode != 0:
        return None
    state: dict[str, str] = {}
    entries = r.stdout.split(b"\0")
    i = 0
    while i < len(entries):
        entry = entries[i].decode("utf-8", "replace")
        i += 1
        if len(entry) < 4:
            continue
        code, path = entry[:2], entry[3:]
        if code[0] in "RC":  # a rename or copy: the source path follows
            i += 1
        file = root / path
        digest = hashlib.sha256(file.read_bytes()).hexdigest() if file.is_file() else "absent"
        state[path] = f"{code.strip()} {digest}"
    return state


def worktree_changes(before: dict[str, str] | None, after: dict[str, str] | None,
                     expected: set[str] = frozenset()) -> list[str]:
    """The paths whose status or content changed between two states, except
    `expected` (notebooks that --write saved)."""
    if before is None or after is None:
        return []
    changed = []
    for path in sorted(set(before) | set(after)):
        if path in expected or before.get(path) == after.get(path):
            continue
        status = (after.get(path) or "clean").split(" ")[0] or "?"
        was = (before.get(path) or "clean").split(" ")[0] or "?"
        changed.append(f"  {path}: {was} before the run, {status} after" if was != status
                       else f"  {path}: {status}, and its content changed during the run")
    return changed


def check_save_dir(path: Path) -> Path:
    """--save-to must not write over the repository's tracked files: a folder
    outside the repository, or one git ignores inside it."""
    path = path.resolve()
    try:
        inside = path.relative_to(ROOT)
    except ValueError:
        return path
    if in_git_work_tree(ROOT) and git("check-ignore", "-q", "--", str(inside) + "/x").returncode != 0:
        sys.exit(f"nbcheck: --save-to {path}: a folder git does not ignore, inside the repository; "
                 "saved notebooks would show as changes or replace tracked ones: choose a folder "
                 "outside the repository or under target/")
    return path


def finish_check(args, notebooks: list[Path], before, expected: set[str]) -> int:
    """After the notebooks ran (inside FreshScratch): the written files, the
    working tree, and --save-to. Returns the number of failures."""
    bad = 0
    same, differ, alone = compare_written(SCRATCH, notebooks)
    total = len(same) + len(differ) + alone
    out(f"written files: {total} in {rel(SCRATCH)} (kept in {rel(LAST_SCRATCH)}); "
        f"{len(same) + len(differ)} with a committed counterpart, compared byte for byte; {alone} without one")
    for line in same + differ:
        out(line)
    if differ:
        bad += len(differ)
        out(f"FAIL written files: {len(differ)} differ from the committed ones (if the change is meant, "
            f"copy them from {rel(LAST_SCRATCH)} over the committed files and rerun)")
    changes = worktree_changes(before, worktree_state(), expected)
    if before is None:
        out("working tree: not a git work tree; not checked")
    elif changes:
        bad += len(changes)
        out(f"FAIL working tree: the run changed {len(changes)} path(s) (`git status --porcelain`); "
            "notebooks must write only under target/notebook-scratch:")
        for line in changes:
            out(line)
    else:
        out("working tree: unchanged by the run" + (" (apart from the notebooks written)" if expected else ""))
    if args.save_to is not None and SCRATCH.exists():
        dest = args.save_to / "written"
        shutil.rmtree(dest, ignore_errors=True)
        shutil.copytree(SCRATCH, dest)
        out(f"saved: the executed notebooks in {args.save_to}, the files they wrote in {dest}")
    return bad


def save_executed(args, path: Path, nb) -> None:
    if args.save_to is not None:
        args.save_to.mkdir(parents=True, exist_ok=True)
        write_atomically(args.save_to / path.name, notebook_text(nb))


# --------------------------------------------------------------------------
# Commands
# --------------------------------------------------------------------------


def expand(paths: list[str]) -> list[Path]:
    result = []
    for p in paths:
        path = Path(p)
        if path.is_dir():
            result.extend(sorted(q for q in path.glob("*.ipynb") if not q.name.startswith(".")))
        elif path.is_file():
            result.append(path)
        else:
            sys.exit(f"nbcheck: no such notebook or folder: {p}")
    return [p.resolve() for p in result]


def build_dir_candidates() -> list[Path]:
    """The build folders a run may take, in order (see BUILD_DIR)."""
    if os.environ.get("NBCHECK_BUILD_DIR"):
        return [Path(os.environ["NBCHECK_BUILD_DIR"]).resolve()]
    slots = os.environ.get("NB_BUILD_SLOTS")
    if not slots:
        sys.exit("nbcheck: NB_BUILD_SLOTS is not set: run nbcheck through notebooks/tools/check.sh "
                 "(or set NBCHECK_BUILD_DIR to a build folder of its own)")
    return [Path(slots) / f"slot-{i}" for i in range(int(os.environ.get("NB_SLOT_COUNT", "8")))]


def take_lock():
    """Takes the first free build folder (its lock, `NAME.lock` beside it) and
    sets BUILD_DIR; waits for the first when all are held."""
    global BUILD_DIR
    candidates = build_dir_candidates()
    candidates[0].parent.mkdir(parents=True, exist_ok=True)
    handle = None
    for folder in candidates:
        handle = open(folder.with_name(folder.name + ".lock"), "w")
        try:
            fcntl.flock(handle, fcntl.LOCK_EX | fcntl.LOCK_NB)
            BUILD_DIR = folder
            break
        except BlockingIOError:
            handle.close()
    else:
        folder = candidates[0]
        handle = open(folder.with_name(folder.name + ".lock"), "w")
        out(f"nbcheck: every build folder under {folder.parent} is in use (kernels or another nbcheck); waiting for {folder.name}")
        fcntl.flock(handle, fcntl.LOCK_EX)
        BUILD_DIR = folder
    KERNEL_LOG.parent.mkdir(parents=True, exist_ok=True)
    KERNEL_LOG.write_text("", encoding="utf-8")  # one log per nbcheck run
    return handle


def cmd_execute(args) -> int:
    notebooks = expand(args.notebooks)
    args.save_to = check_save_dir(args.save_to) if args.save_to else None
    _lock = take_lock()
    passed = failed = 0
    timings = []
    written: set[str] = set()
    before = worktree_state()
    with FreshScratch():
        for path in notebooks:
            out(f"== execute {rel(path)}")
            run = asyncio.run(run_notebook(path, args))
            report_run(run)
            save_executed(args, path, run.nb)
            if run.first_cell_seconds is not None:
                timings.append((rel(path), run.first_cell_seconds, run.cold))
            if run.passed:
                passed += 1
                if args.write:
                    write_atomically(path, notebook_text(run.nb))
                    written.add(rel(path))
                    out(f"  wrote {rel(path)} (normalised)")
            else:
                failed += 1
                if args.write:
                    out(f"  not written: it failed")
        summary(timings)
        bad = finish_check(args, notebooks, before, written)
    out(f"notebooks: {passed} passed, {failed} failed" + (f"; {bad} failure(s) of the whole run above" if bad else ""))
    return 0 if failed == 0 and not bad else 1


def cmd_reproduce(args) -> int:
    notebooks = expand(args.notebooks)
    args.save_to = check_save_dir(args.save_to) if args.save_to else None
    _lock = take_lock()
    passed = failed = 0
    timings = []
    before = worktree_state()
    with FreshScratch():
        for path in notebooks:
            out(f"== reproduce {rel(path)}")
            committed = nbformat.read(path, as_version=4)
            normalise_notebook(committed)
            run = asyncio.run(run_notebook(path, args))
            save_executed(args, path, run.nb)
            diffs = compare(committed, run.nb)
            n_diff = sum(1 for d in diffs if d.startswith("  ") and not d.startswith("      "))
            report_run(run, extra_failures=n_diff)
            if run.first_cell_seconds is not None:
                timings.append((rel(path), run.first_cell_seconds, run.cold))
            if diffs:
                out(f"  {n_diff} output(s) differ from the committed notebook:")
                for d in diffs:
                    out(d)
            else:
                out("  every output matches the committed notebook")
            if run.passed and not diffs:
                passed += 1
            else:
                failed += 1
        summary(timings)
        bad = finish_check(args, notebooks, before, set())
    out(f"notebooks: {passed} passed, {failed} failed" + (f"; {bad} failure(s) of the whole run above" if bad else ""))
    return 0 if failed == 0 and not bad else 1


def cmd_normalise(args) -> int:
    bad = 0
    for path in expand(args.notebooks):
        original = path.read_text(encoding="utf-8")
        nb = nbformat.read(path, as_version=4)
        normalise_notebook(nb)
        text = notebook_text(nb)
        if text == original:
            out(f"ok {rel(path)}")
        elif args.check:
            bad += 1
            out(f"NOT NORMALISED {rel(path)}")
        else:
            write_atomically(path, text)
            out(f"normalised {rel(path)}")
    return 1 if bad else 0


def summary(timings) -> None:
    if timings:
        out("first-cell (:dep) wall times:")
        for name, seconds, cold in timings:
            out(f"  {seconds:7.1f} s  {'cold' if cold else 'warm'}  {name}")


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(prog="nbcheck", description=__doc__.split("\n\n")[0])
    sub = parser.add_subparsers(dest="command", required=True)

    def common(p):
        p.add_argument("notebooks", nargs="+", help="notebooks, or folders of notebooks")
        p.add_argument("--timeout", type=int, default=int(os.environ.get("NBCHECK_TIMEOUT", 1200)),
                       help="seconds per cell (default 1200, or $NBCHECK_TIMEOUT); the first :dep cell compiles the crate")
        p.add_argument("--startup-timeout", type=int, default=120, help="seconds for the kernel to start")
        p.add_argument("--settle", type=float, default=float(os.environ.get("NBCHECK_SETTLE", 0.5)),
                       help="seconds to wait after each cell for late stderr lines (default 0.5, or $NBCHECK_SETTLE)")
        p.add_argument("--kernel", default=os.environ.get("NBCHECK_KERNEL", "rust"), help="kernelspec name (default rust)")
        p.add_argument("--strict-stderr", action="store_true",
                       default=os.environ.get("NBCHECK_STRICT_STDERR", "") not in ("", "0"),
                       help=f"fail (not just warn) on stderr output in a cell not tagged {STDERR_TAG} "
                            "(or set NBCHECK_STRICT_STDERR=1)")
        p.add_argument("--fresh", action="store_true",
                       help="delete the build folder the run takes (a kernel build folder that set-up made, "
                            "or $NBCHECK_BUILD_DIR) first: a cold :dep compile")
        p.add_argument("--save-to", type=Path, metavar="DIR",
                       help="save each executed notebook (normalised) in DIR, and the files the notebooks wrote "
                            "in DIR/written, for a reviewer to open (DIR outside the repository, or under target/)")

    p = sub.add_parser("execute", help="run notebooks and check their outputs")
    common(p)
    p.add_argument("--write", action="store_true", help="save each notebook that passes, normalised")
    p.set_defaults(func=cmd_execute)
    p = sub.add_parser("reproduce", help="rerun notebooks and compare with the committed outputs")
    common(p)
    p.set_defaults(func=cmd_reproduce)
    p = sub.add_parser("normalise", help="normalise notebooks without running them")
    p.add_argument("notebooks", nargs="+")
    p.add_argument("--check", action="store_true", help="only report, do not write")
    p.set_defaults(func=cmd_normalise)
    args = parser.parse_args(argv)
    return args.func(args)


if __name__ == "__main__":
    sys.exit(main())
