"""Outputs are written atomically: a run killed mid-way leaves no partial file.

Every writer writes through :mod:`siteexposure.atomic` (a temporary file in the target
folder, then ``os.replace`` onto the target). A process killed with SIGKILL cannot clean
up, so it may leave its temporary file behind; those are always named
``.<target name>.<random>.part`` (hidden, and never taken for an output). What it must
never leave is a target file that is incomplete: each output present after the kill is
byte-for-byte the file a complete run writes (the outputs are reproducible, see
test_reproducible.py), and the PDF report is either absent or complete.

The static half of the test reads the package's source: every call that writes a file
(``savefig``, ``write_text``/``write_bytes``, ``open(..., "w")``, reportlab documents,
``os.replace`` ...) must sit inside a ``with atomic_path(...)`` block, or in a helper that
is only called from inside one.
"""

from __future__ import annotations

import ast
import os
import re
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest
import sitegen

import siteexposure

PACKAGE = Path(siteexposure.__file__).resolve().parent
PART = re.compile(r"^\.(?P<target>.+)\.[A-Za-z0-9_]+\.part$")

# --------------------------------------------------------------------------------------
# static: every file-writing call goes through siteexposure.atomic
# --------------------------------------------------------------------------------------

_WRITE_METHODS = {"savefig", "write_text", "write_bytes", "tofile", "to_csv", "to_file", "save"}
_WRITE_FUNCS = {("os", "replace"), ("os", "rename"), ("shutil", "copy"), ("shutil", "copyfile"),
                ("shutil", "copy2"), ("shutil", "move"), ("np", "save"), ("numpy", "save"),
                ("np", "savez"), ("np", "savetxt")}


def _is_write(call: ast.Call, in_memory: set[str], doc_classes: set[str]) -> bool:
    f = call.func
    if isinstance(f, ast.Name) and f.id == "open":
        mode = call.args[1] if len(call.args) > 1 else next(
            (k.value for k in call.keywords if k.arg == "mode"), None)
        return isinstance(mode, ast.Constant) and any(c in str(mode.value) for c in "wax+")
    if isinstance(f, ast.Name) and (f.id in doc_classes or f.id.endswith("DocTemplate")):
        return True
    if isinstance(f, ast.Attribute):
        if isinstance(f.value, ast.Name) and (f.value.id, f.attr) in _WRITE_FUNCS:
            return True
        if f.attr in _WRITE_METHODS:
            if f.attr == "save" and not call.args:  # a reportlab canvas: its file is its doc's
                return False
            first = call.args[0] if call.args else None
            return not (isinstance(first, ast.Name) and first.id in in_memory)
    return False


def _atomic_with(node: ast.AST) -> bool:
    return isinstance(node, ast.With) and any(
        isinstance(item.context_expr, ast.Call)
        and getattr(item.context_expr.func, "id", getattr(item.context_expr.func, "attr", ""))
        == "atomic_path" for item in node.items)


def unguarded_writes(source: str) -> list[str]:
    """File-writing calls of a module not under ``with atomic_path(...)`` (one level of
    helpers allowed: a helper holding the write must only be called under one)."""
    tree = ast.parse(source)
    parents = {child: node for node in ast.walk(tree) for child in ast.iter_child_nodes(node)}
    in_memory = {t.id for node in ast.walk(tree) if isinstance(node, ast.Assign)
                 and isinstance(node.value, ast.Call)
                 and getattr(node.value.func, "attr", getattr(node.value.func, "id", ""))
                 in ("BytesIO", "StringIO") for t in node.targets if isinstance(t, ast.Name)}
    doc_classes = {n.name for n in ast.walk(tree) if isinstance(n, ast.ClassDef) and any(
        "DocTemplate" in ast.unparse(b) for b in n.bases)}

    def ancestors(node):
        while node in parents:
            node = parents[node]
            yield node

    def guarded(node) -> bool:
        return any(_atomic_with(a) for a in ancestors(node))

    def function_of(node):
        return next((a for a in ancestors(node)
                     if isinstance(a, ast.FunctionDef | ast.AsyncFunctionDef)), None)

    calls = [n for n in ast.walk(tree) if isinstance(n, ast.Call)]
    bad, helpers = [], {}
    for call in calls:
        if _is_write(call, in_memory, doc_classes) and not guarded(call):
            fn = function_of(call)
            if fn is not None and not any(isinstance(a, ast.ClassDef) for a in ancestors(fn)):
                helpers[fn.name] = call  # a helper: every call of it must be guarded
            else:
                bad.append(f"line {call.lineno}: {ast.unparse(call)[:80]}")
    for name, write in helpers.items():
        uses = [c for c in calls if getattr(c.func, "id", None) == name]
        if not uses or not all(guarded(c) for c in uses):
            bad.append(f"line {write.lineno}: {ast.unparse(write)[:80]} (in {name}(), called "
                       "outside a with atomic_path block)")
    return bad


def test_every_file_write_of_the_package_goes_through_atomic():
    problems = {}
    for path in sorted(PACKAGE.rglob("*.py")):
        if path.name == "atomic.py":
            continue
        bad = unguarded_writes(path.read_text(encoding="utf-8"))
        if bad:
            problems[str(path.relative_to(PACKAGE))] = bad
    assert problems == {}


def test_the_static_check_catches_a_plain_write():
    """The check itself can fail: a direct savefig or write_text is reported, the guarded
    forms are not."""
    plain = "def f(fig, p):\n    fig.savefig(p)\n"
    guarded = ("from siteexposure.atomic import atomic_path\n"
               "def f(fig, p):\n    with atomic_path(p) as tmp:\n        fig.savefig(tmp)\n")
    helper = ("def _doc(t):\n    return SimpleDocTemplate(t)\n"
              "def g(p):\n    with atomic_path(p) as tmp:\n        _doc(tmp)\n"
              "def h(p):\n    _doc(p)\n")
    assert unguarded_writes(plain)
    assert unguarded_writes("import os\nos.replace('a', 'b')\n")
    assert unguarded_writes("def f(p):\n    open(p, 'w').write('x')\n")
    assert unguarded_writes(guarded) == []
    assert unguarded_writes("import io\nbuf = io.BytesIO()\ndef f(im):\n    im.save(buf)\n") == []
    assert len(unguarded_writes(helper)) == 1  # h() calls the helper unguarded


# --------------------------------------------------------------------------------------
# dynamic: kill a run while it writes
# --------------------------------------------------------------------------------------


def _start(args: list) -> subprocess.Popen:
    env = {**os.environ, "COLUMNS": "120"}
    return subprocess.Popen([sys.executable, "-m", "siteexposure", *map(str, args)], env=env,
                            stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)


def _kill_when(proc: subprocess.Popen, folder: Path, ready, timeout: float = 120.0) -> bool:
    """SIGKILL ``proc`` as soon as ``ready(names in folder)``; False if it ended first."""
    end = time.monotonic() + timeout
    while time.monotonic() < end:
        if proc.poll() is not None:
            return False
        try:
            names = os.listdir(folder)
        except FileNotFoundError:
            names = []
        if ready(names):
            os.kill(proc.pid, signal.SIGKILL)
            proc.wait(timeout=30)
            return True
        time.sleep(0.0005)
    proc.kill()
    raise AssertionError("the run neither ended nor reached the kill point in time")


def _leftovers_are_only_part_files(folder: Path, targets: set[str]) -> None:
    for name in os.listdir(folder):
        if name in targets:
            continue
        m = PART.match(name)
        assert m and m["target"] in targets, f"unexpected file {name!r} in {folder}"


@pytest.fixture(scope="module")
def map_reference(tmp_path_factory):
    """A complete `map` run of the invented deck: its files and their bytes."""
    folder = tmp_path_factory.mktemp("atomic")
    site = sitegen.write_site(folder / "site", sitegen.base_site())
    out = folder / "reference"
    proc = subprocess.run([sys.executable, "-m", "siteexposure", "map", str(site), "--out",
                           str(out), "--no-progress"], capture_output=True, text=True,
                          timeout=300)
    assert proc.returncode == 0, proc.stderr
    files = {p.name: p.read_bytes() for p in out.iterdir()}
    assert len(files) >= 5 and not any(PART.match(n) for n in files)
    return site, files


@pytest.mark.parametrize("kill_after", [0, 3, 8], ids=lambda n: f"after-{n}-files")
def test_map_killed_while_writing_leaves_no_partial_file(map_reference, tmp_path, kill_after):
    """Kill `map` when the (n+1)-th file is being written (a .part file exists): every target
    present is complete (identical to the reference run), the rest are absent."""
    site, reference = map_reference
    out = tmp_path / "maps"
    proc = _start(["map", site, "--out", out, "--no-progress"])

    def ready(names):
        done = [n for n in names if n in reference]
        return len(done) >= kill_after and any(PART.match(n) for n in names)

    killed = _kill_when(proc, out, ready)
    assert killed, "the run ended before the kill point; make the site larger"
    assert proc.returncode == -signal.SIGKILL
    present = {p.name for p in out.iterdir() if p.name in reference}
    assert len(present) >= kill_after and present != set(reference)
    for name in present:
        assert (out / name).read_bytes() == reference[name], f"{name} is not complete"
    _leftovers_are_only_part_files(out, set(reference))


def test_report_killed_while_writing_the_pdf_leaves_no_pdf(map_reference, tmp_path):
    """Kill `report` while its PDF is being written: no report.pdf, at most a .part file."""
    site, _ = map_reference
    target = tmp_path / "report.pdf"
    proc = _start(["report", site, "--out", target, "--no-progress"])
    killed = _kill_when(proc, tmp_path, lambda names: any(
        (m := PART.match(n)) and m["target"] == "report.pdf" for n in names))
    assert killed, "the report was complete before the kill"
    assert not target.exists()
    _leftovers_are_only_part_files(tmp_path, {"report.pdf"})
