"""`isohypse classify` with reforecasts and initialisations of different
lengths in one lagged ensemble (12 and 10 lead days, started a day apart, so
the same reforecasts are near both). Each initialisation's model climate has
its own number of lead days: the members of each must get exactly the labels
and correlations they get when that initialisation is classified alone.
(Before issue 10 the second initialisation reused the first one's climate,
cached by the reforecasts it was made of, with the wrong number of lead
days.) Both orders are tried: the longer first and the shorter first.
Invented data."""
import json
import os

import numpy as np

from common import check, finish, scratch
from classify_data import classify, planted_forecast, reference, small_model, write_forecast

tmp = scratch()
lat = np.arange(20.0, 80.1, 5.0)
lon = np.arange(170.0, 320.1, 5.0)
rng = np.random.default_rng(23)

model_path = small_model(tmp, lat, lon)
if not model_path:
    finish()
model = reference.Model(model_path)


def forecast(name, init, leads):
    path = os.path.join(tmp, name)
    write_forecast(path, planted_forecast(model, init, "noleap", 3, leads, rng), lat, lon, init, "noleap")
    return path


rf_dir = os.path.join(tmp, "rf")
os.makedirs(rf_dir)
for year in (2017, 2018, 2019):
    path = os.path.join(rf_dir, f"rf_{year}1201.nc")
    write_forecast(path, planted_forecast(model, (year, 12, 1), "noleap", 3, 16, rng), lat, lon, (year, 12, 1))


def members(files, issue, tag):
    out = os.path.join(tmp, f"guidance_{tag}.json")
    r = classify("--model", model_path, "--forecasts", *files, "--reforecasts", os.path.join(rf_dir, "*.nc"),
                 "--issue-date", issue, "--members", "--threads", "2", "--quiet", "--out", out)
    check(r.returncode == 0, f"{tag}: classify exits 0 (exit {r.returncode}) {r.stderr.strip()[-300:]}")
    if r.returncode != 0:
        return {}
    g = json.load(open(out))
    return {(m["initialisation"], m["member"]): (m["regimes"], m["correlation"]) for m in g["members"]}


for first_leads, second_leads in ((12, 10), (10, 12)):
    order = f"{first_leads} then {second_leads} lead days"
    a = forecast(f"fc_{first_leads}_{second_leads}_a.nc", (2025, 12, 1), first_leads)
    b = forecast(f"fc_{first_leads}_{second_leads}_b.nc", (2025, 12, 2), second_leads)
    together = members([a, b], "2025-12-02", f"together {order}")
    alone = {}
    alone.update(members([a], "2025-12-02", f"first alone {order}"))
    alone.update(members([b], "2025-12-02", f"second alone {order}"))
    check(len(together) == 6 and set(together) == set(alone),
          f"{order}: the same 6 members together and alone ({len(together)} and {len(alone)})")
    for key in sorted(set(together) & set(alone)):
        (lt, ct), (la, ca) = together[key], alone[key]
        check(lt == la and len(lt) == (first_leads if key[0] == "2025-12-01" else second_leads)
              and np.allclose(ct, ca, rtol=0, atol=1e-12),
              f"{order}: member {key[1]} of {key[0]} has the labels and correlations it has alone ({len(lt)} days)")
finish()
