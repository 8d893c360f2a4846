"""Shared helpers for the Python reference tests (run with /usr/bin/python3)."""
import atexit
import json
import os
import shutil
import subprocess
import sys
import tempfile

BIN = os.environ.get("ISOHYPSE_BIN", "")
TOOLS = os.environ.get("ISOHYPSE_TOOLS_DIR", "")
BUILD = os.environ.get("ISOHYPSE_BUILD_DIR", "")
SOURCE = os.environ.get("ISOHYPSE_SOURCE_DIR", os.path.dirname(os.path.dirname(os.path.dirname(__file__))))

failures = []


def check(cond, what):
    """Record one named check; print it so the ctest log shows what was compared."""
    print(("ok   " if cond else "FAIL ") + what, flush=True)
    if not cond:
        failures.append(what)


def finish():
    print(f"{len(failures)} failed" if failures else "all checks passed")
    sys.exit(1 if failures else 0)


def run(args, **kw):
    return subprocess.run(args, capture_output=True, text=True, **kw)


def tool(name, *args):
    r = run([os.path.join(TOOLS, name), *args])
    if r.returncode != 0:
        raise RuntimeError(f"{name} {' '.join(args)} failed: {r.stderr}")
    return json.loads(r.stdout)


def scratch():
    """A fresh directory, removed when the test ends unless ISOHYPSE_KEEP_SCRATCH is set
    (then its path stays in the log for a post-mortem)."""
    path = tempfile.mkdtemp(prefix="isohypse-test-")
    if os.environ.get("ISOHYPSE_KEEP_SCRATCH"):
        print(f"scratch kept: {path}", flush=True)
    else:
        atexit.register(shutil.rmtree, path, ignore_errors=True)
    return path
