"""No run destroys an input, and a run that fails leaves none of its outputs (issue 15, "Inputs are sacred").

Each case runs a command on the small invented world with an output that clashes with an input (the same path,
a symbolic link, a hard link, a file inside the guidance folder), with two outputs naming one file, or with an
output folder that is missing, not writable (/proc: not even root can create a file there) or a file. Each must:
exit non-zero before any work, with one error line naming the flag and the path; leave every input byte for
byte as it was; and leave no output (nor temporary) behind. Then: a successful run removes the temporary files
that a killed run (a process that no longer exists) left beside its outputs, and keeps one of a live process.
The expected behaviour is the project's own contract (include/isohypse/base/run_outputs.hpp)."""
import glob
import hashlib
import json
import os
import shutil

from common import BIN, check, finish, run, scratch
from daily_season import small_world_model

tmp = scratch()
world, cfg, model = small_world_model(tmp)
forecasts = sorted(glob.glob(f"{world}/forecasts/*.nc"))[:3]
reanalysis = sorted(glob.glob(f"{world}/reanalysis/*.nc"))
reforecasts = sorted(glob.glob(f"{world}/reforecasts/*.nc"))[:6]
out = os.path.join(tmp, "out")
os.makedirs(out)
guidance_dir = os.path.join(tmp, "guidance")
os.makedirs(guidance_dir)
r = run([BIN, "classify", "--quiet", "--model", model, "--forecasts", *forecasts, "--lag", "3",
         "--out", os.path.join(guidance_dir, "g.json")])
assert r.returncode == 0, r.stderr
symlink_to_forecast = os.path.join(out, "link_to_forecast.json")
os.symlink(forecasts[0], symlink_to_forecast)
hardlink_to_model = os.path.join(tmp, "model_hardlink.nc")
os.link(model, hardlink_to_model)
a_file = os.path.join(tmp, "plain_file")
open(a_file, "w").write("not a folder\n")


def digest(paths):
    return {p: hashlib.sha256(open(p, "rb").read()).hexdigest() for p in paths}


inputs = [model, *forecasts, *reanalysis, *reforecasts, os.path.join(guidance_dir, "g.json"), cfg]
before = digest(inputs)


def classify(*args):
    return [BIN, "classify", "--quiet", "--model", model, "--forecasts", *forecasts, "--lag", "3", *args]


def derive(*args):
    return [BIN, "derive", "--config", cfg, "--input", *reanalysis, "--domain", "20,80,170,-40", "--k", "4", *args]


def calibrate(*args):
    return [BIN, "calibrate", "--quiet", "--model", model, "--reforecasts", *reforecasts, "--lag", "2", *args]


def verify(*args):
    return [BIN, "verify", "--model", model, "--guidance", guidance_dir, *args]


J = lambda name: os.path.join(out, name)
cases = [
    ("classify --out is a forecast", classify("--out", forecasts[1]), ["--out", forecasts[1], "--forecasts"], []),
    ("classify --out is the model", classify("--out", model), ["--out", "--model"], []),
    ("classify --out is a symbolic link to a forecast", classify("--out", symlink_to_forecast),
     ["--out", symlink_to_forecast, "--forecasts"], []),
    ("classify --out is a hard link to the model (another name, the same file)",
     classify("--out", hardlink_to_model), ["--out", hardlink_to_model, "--model"], []),
    ("classify --csv is a forecast file", classify("--out", J("c1.json"), "--csv", forecasts[0]),
     ["--csv", forecasts[0]], [J("c1.json")]),
    ("classify --csv is a file", classify("--out", J("c2.json"), "--csv", a_file), ["--csv", a_file, "not a folder"],
     [J("c2.json")]),
    ("classify --out in a missing folder", classify("--out", J("missing/g.json")), ["--out", "does not exist"], []),
    ("classify --out in a folder nobody may write", classify("--out", "/proc/isohypse-guidance.json"),
     ["--out", "not writable"], []),
    ("derive --out is a reanalysis file", derive("--out", reanalysis[2]), ["--out", reanalysis[2], "--input"], []),
    ("derive --summary is --out", derive("--out", J("m.nc"), "--summary", J("m.nc")),
     ["--summary", "--out", "same file"], [J("m.nc")]),
    ("derive --summary in a missing folder", derive("--out", J("m2.nc"), "--summary", J("nowhere/s.json")),
     ["--summary", "does not exist"], [J("m2.nc")]),
    ("derive --out is the config file", derive("--out", cfg), ["--out", "--config"], []),
    ("calibrate --cases is a reforecast", calibrate("--out", J("cal.nc"), "--cases", reforecasts[0]),
     ["--cases", reforecasts[0], "--reforecasts"], [J("cal.nc")]),
    ("calibrate --out is the model", calibrate("--out", model), ["--out", "--model"], []),
    ("verify --out inside the guidance folder", verify("--out", os.path.join(guidance_dir, "report.json")),
     ["--out", "--guidance", "inside"], [os.path.join(guidance_dir, "report.json")]),
    ("verify --out is a guidance file", verify("--out", os.path.join(guidance_dir, "g.json")), ["--out", "--guidance"],
     []),
    ("verify --html in a folder nobody may write", verify("--out", J("v.json"), "--html", "/proc/isohypse.html"),
     ["--html", "not writable"], [J("v.json")]),
]
for name, args, words, absent in cases:
    r = run(args)
    lines = [l for l in r.stderr.splitlines() if l.startswith("isohypse: error")]
    message = lines[0] if lines else r.stderr.strip()[-300:]
    check(r.returncode != 0, f"{name}: refused (exit {r.returncode})")
    check(len(lines) == 1 and all(w in message for w in words), f"{name}: one error naming {words}: {message}")
    left = [p for p in absent if os.path.exists(p)]
    check(not left, f"{name}: no output left ({left})")
    temps = glob.glob(os.path.join(out, ".*.tmp.*")) + glob.glob(os.path.join(guidance_dir, ".*.tmp.*"))
    check(not temps, f"{name}: no temporary left ({temps})")
    after = digest(inputs)
    changed = [p for p in inputs if after[p] != before[p]]
    check(not changed, f"{name}: every input unchanged ({changed})")
check(os.path.islink(symlink_to_forecast) and os.readlink(symlink_to_forecast) == forecasts[0],
      "the symbolic link is still a link to the forecast")

# A killed run's temporaries are removed by the next run with the same output; a live process's are kept.
pid_max = int(open("/proc/sys/kernel/pid_max").read())
dead = next(p for p in range(pid_max - 1, 1, -1) if not os.path.exists(f"/proc/{p}"))
stale = J(f".g.json.tmp.{dead}.0")
live = J(f".g.json.tmp.{os.getpid()}.0")
for p in (stale, live):
    open(p, "w").write("half a document")
r = run(classify("--out", J("g.json"), "--csv", J("csv")))
check(r.returncode == 0 and json.load(open(J("g.json"))).get("daily"), f"a good run writes its outputs ({r.stderr[-200:]})")
check(sorted(os.listdir(J("csv"))) == ["daily.csv", "windows.csv"], "and its CSV folder, created by the run")
check(not os.path.exists(stale) and os.path.exists(live),
      "it removed the temporary of a dead process and kept that of a live one")
os.remove(live)
finish()
