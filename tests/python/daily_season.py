"""A daily season of guidance for the post-mortem tests: issues overlap as a desk's do.

isohypse-demo-world --size small --forecasts 60 (invented world: 60 daily initialisations from 2025-12-01, 4
members), a 4-regime model derived from its reanalysis, and one guidance issue a day from 2025-12-04 with the
latest 4 initialisations (lag 4, weights exp:3, reforecast drift removed), as the README demo makes its season:
consecutive issues share 3 of their 4 initialisations."""
import concurrent.futures
import datetime
import glob
import json
import os

from common import BIN, BUILD, run

LAG = 4
INITIALISATIONS = 60


def small_world_model(tmp, *world_args):
    """The small invented world (isohypse-demo-world --size small, plus world_args) under tmp/world and a quick
    4-regime model of its reanalysis; returns (world folder, derive config file, model file)."""
    world = os.path.join(tmp, "world")
    r = run([os.path.join(BUILD, "isohypse-demo-world"), "--out", world, "--size", "small", *world_args])
    assert r.returncode == 0, r.stderr
    cfg = os.path.join(tmp, "derive.json")
    json.dump({"regimes": {"classifiability_runs": 4, "surrogates": 4, "restarts": 20}}, open(cfg, "w"))
    model = os.path.join(tmp, "model.nc")
    r = run([BIN, "derive", "--config", cfg, "--input", f"{world}/reanalysis/*.nc", "--domain", "20,80,170,-40",
             "--k", "4", "--out", model])
    assert r.returncode == 0, r.stderr
    return world, cfg, model


def make_daily_season(tmp):
    """Builds the season under tmp; returns (model, archive folder, observed analysis glob, issue count)."""
    world, _, model = small_world_model(tmp, "--forecasts", str(INITIALISATIONS))
    archive = os.path.join(tmp, "archive")
    os.makedirs(archive, exist_ok=True)
    first = datetime.date(2025, 12, 1) + datetime.timedelta(days=LAG - 1)
    days = [(first + datetime.timedelta(days=i)).isoformat() for i in range(INITIALISATIONS - LAG + 1)]

    def issue(day):
        return run([BIN, "classify", "--quiet", "--threads", "1", "--model", model, "--forecasts",
                    f"{world}/forecasts/*.nc", "--reforecasts", f"{world}/reforecasts/*.nc", "--lag", str(LAG),
                    "--weights", "exp:3", "--issue-date", day, "--out", os.path.join(archive, day + ".json")])

    with concurrent.futures.ThreadPoolExecutor(max_workers=max(1, min(4, os.cpu_count() or 1))) as pool:
        for day, r in zip(days, pool.map(issue, days)):
            assert r.returncode == 0, f"classify {day}: {r.stderr}"
    assert len(glob.glob(os.path.join(archive, "*.json"))) == len(days)
    return model, archive, f"{world}/analysis/*.nc", len(days)
