"""`isohypse serve --config`: the config file's settings are used, and a flag
given on the command line overrides the file's key whatever its place on the
command line. Observed through serve's refusal before it listens (a model
file that does not exist, a poll interval out of range), so no model or
server is needed. Also: the file's unknown keys are refused by name, and
nothing is created when serve refuses."""
import json
import os
import shutil

from common import BIN, check, finish, run, scratch

tmp = scratch()


def config(name, **keys):
    path = os.path.join(tmp, name)
    base = {"model": os.path.join(tmp, "from-config.nc"), "inbox": os.path.join(tmp, "inbox"),
            "archive": os.path.join(tmp, "archive"), "listen": "127.0.0.1:0"}
    base.update(keys)
    with open(path, "w") as f:
        json.dump(base, f)
    return path


def serve(*args):
    r = run([BIN, "serve", *args], timeout=60, env=dict(os.environ, ISOHYPSE_TOKEN=""))
    return r.returncode, r.stderr


try:
    ok = config("ok.json")
    slow = config("slow.json", poll_seconds=0.01)
    flag_model = os.path.join(tmp, "from-flag.nc")

    code, err = serve("--config", ok)
    check(code == 2 and "from-config.nc" in err,
          f"the config's model is used without --model (exit {code}): {err[-200:]!r}")
    for args, where in [(["--config", ok, "--model", flag_model], "after"),
                        (["--model", flag_model, "--config", ok], "before")]:
        code, err = serve(*args)
        check(code == 2 and "from-flag.nc" in err and "from-config.nc" not in err,
              f"--model {where} --config overrides the file's model (exit {code}): {err[-200:]!r}")

    code, err = serve("--config", slow)
    check(code == 2 and "poll_seconds" in err, f"the config's poll_seconds 0.01 is read and refused (exit {code})")
    code, err = serve("--poll", "0.5", "--config", slow, "--model", flag_model)
    check(code == 2 and "poll_seconds" not in err and "from-flag.nc" in err,
          f"--poll 0.5 overrides the file's poll_seconds (exit {code}): {err[-200:]!r}")
    code, err = serve("--config", slow, "--lag", "-1", "--poll", "0.5")
    check(code == 2 and "lag" in err, f"a flag's value is checked like the file's (--lag -1, exit {code})")

    typo = os.path.join(tmp, "typo.json")
    with open(typo, "w") as f:
        json.dump({"model": "m.nc", "polling": 3}, f)
    code, err = serve("--config", typo)
    check(code == 2 and "polling" in err and "typo.json" in err,
          f"an unknown key is refused naming the file and the key (exit {code}): {err[-200:]!r}")
    check(not os.path.exists(os.path.join(tmp, "inbox")) and not os.path.exists(os.path.join(tmp, "archive")),
          "no inbox or archive folder is created when serve refuses")
finally:
    shutil.rmtree(tmp, ignore_errors=True)
finish()
