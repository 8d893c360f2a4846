"""`isohypse serve` end to end (issue 6): a real server on a free loopback port
with a temporary inbox and archive, a model derived from the small demo
world, and a real HTTP client (urllib, http.client).

Checks every endpoint; 401 without or with a wrong token (and nothing
changes); 404s; traversal attempts ('..', '%2e%2e', absolute paths, encoded
slashes) refused without reaching a file; an oversized body (413); forecasts
copied into the inbox appear in the archive and the API within a bounded
wait; a truncated file lands in quarantine with its reason while the service
carries on; 8 concurrent clients during a run see no error and no partial
JSON; the guidance validates against config/guidance.schema.json
(jsonschema, Debian's python3-jsonschema); a restart loses nothing. The model
view is compared with the model file read by netCDF4-python, and /health's
sha256 with Python's hashlib."""
import hashlib
import http.client
import json
import os
import shutil
import threading
import time

import jsonschema
import netCDF4
import numpy as np

from common import SOURCE, check, finish, scratch
from service_data import TOKEN, Server, deliver, world_and_model

tmp = scratch()
t0 = time.time()
world, model_path = world_and_model(tmp)
print(f"demo world and model ready in {time.time() - t0:.1f} s")
server = Server(tmp, world, model_path)
with open(os.path.join(SOURCE, "config", "guidance.schema.json")) as f:
    schema = json.load(f)


def raw_get(path):
    """GET with the path sent exactly as written (urllib would normalise some)."""
    conn = http.client.HTTPConnection(server.base.split("//")[1], timeout=30)
    conn.request("GET", path)
    r = conn.getresponse()
    body = r.read()
    conn.close()
    return r.status, body


def archive_files():
    return sorted(os.listdir(os.path.join(server.archive, "guidance")))


try:
    # --- before any forecast
    status, h = server.get_json("/health")
    with open(model_path, "rb") as f:
        sha = hashlib.sha256(f.read()).hexdigest()
    check(status == 200 and h["status"] == "ok", f"/health 200 ok ({status})")
    check(h["model"]["sha256"] == sha, f"/health model sha256 equals hashlib's {sha[:12]}")
    check(h["latest_issue_date"] is None and h["version"], f"/health: no issue yet, version {h.get('version')}")
    status, body = server.get_json("/api/v1/guidance/latest")
    check(status == 404 and "error" in body, f"latest on an empty archive: 404 {body}")

    # --- the model, against the file read by netCDF4-python
    status, m = server.get_json("/api/v1/model")
    with netCDF4.Dataset(model_path) as ds:
        lat, lon, pattern = ds["lat"][:], ds["lon"][:], np.asarray(ds["pattern"][:], float)
        freq = np.asarray(ds["frequency"][:], float)
    api_pattern = np.array([r["pattern_m"] for r in m["regimes"]])
    check(status == 200 and len(m["regimes"]) == 4, f"/api/v1/model: 4 regimes ({status})")
    check(np.allclose(m["grid"]["lat"], lat) and np.allclose(m["grid"]["lon"], lon),
          f"model grid {len(m['grid']['lat'])} x {len(m['grid']['lon'])} equals the file's")
    err = float(np.abs(api_pattern - pattern).max())
    check(err <= 0.05 + 1e-9, f"patterns equal the file's within the 0.1 m rounding (max error {err:.3f} m)")
    check(np.allclose([r["frequency"] for r in m["regimes"]], freq), "frequencies equal the file's")
    t = np.array(m["transitions"]["probabilities"], dtype=float)
    check(t.shape == (5, 5) and np.allclose(np.nansum(t, axis=1)[:4], 1.0, atol=1e-6),
          "transition matrix 5 x 5, regime rows sum to 1")
    check(len(m["regime_count_table"]["rows"]) >= 1, "k table present")
    check(m["regime_count_table"]["reason"].startswith("k = "), f"the reason for k is served: {m['regime_count_table']['reason'][:60]!r}")

    # --- maps
    status, hd, svg = server.get("/api/v1/model/regimes/R1.svg")
    svg = svg.decode()
    check(status == 200 and hd.get("Content-Type", "").startswith("image/svg+xml") and svg.startswith("<svg"),
          f"R1.svg: 200 image/svg+xml ({status}, {hd.get('Content-Type')})")
    check('class="coast"' in svg and svg.count("<rect") > 10, "the map has coloured cells and coastlines")
    check("http://" not in svg.replace('xmlns="http://www.w3.org/2000/svg"', ""), "the map refers to nothing external")
    for path, want in [("/api/v1/model/regimes/R9.svg", 404), ("/api/v1/model/regimes/R1.png", 400),
                       ("/api/v1/model/regimes/x.svg", 400), ("/api/v1/nothing", 404), ("/api/v1/guidance/2025-02-30", 400),
                       ("/api/v1/guidance/2025-12-31", 404)]:
        status, _, body = server.get(path)
        check(status == want and "error" in json.loads(body), f"GET {path}: {want} with a JSON error ({status})")

    # --- traversal: nothing outside the archive is ever served
    for path in ["/api/v1/guidance/../../../../etc/passwd", "/api/v1/guidance/..%2f..%2f..%2fetc%2fpasswd",
                 "/api/v1/guidance/%2e%2e/%2e%2e/etc/passwd", "/api/v1/guidance/%2e%2e", "/api/v1/guidance/..",
                 "/api/v1/guidance//etc/passwd", "/api/v1/guidance/%2fetc%2fpasswd",
                 "/api/v1/model/regimes/..%2f..%2fR1.svg", "/api/v1/guidance?from=../../etc&to=2025-12-31",
                 "/api/v1/verification?from=%2e%2e%2f&to=2025-12-31", "/../../../etc/passwd", "/%2e%2e/%2e%2e/etc/passwd"]:
        status, body = raw_get(path)
        check(status in (400, 404) and b"root:" not in body and "error" in json.loads(body),
              f"GET {path}: refused with {status}")

    # --- runs need the token; without it nothing changes
    deliver_name = "fc_20251201.nc"
    req_body = json.dumps({"files": [deliver_name]}).encode()
    for headers, what in [({}, "no token"), ({"Authorization": "Bearer wrong"}, "a wrong token"),
                          ({"Authorization": TOKEN}, "no Bearer")]:
        status, _, body = server.request("POST", "/api/v1/runs", req_body, dict(headers, **{"Content-Type": "application/json"}))
        check(status == 401 and "error" in json.loads(body), f"POST /api/v1/runs with {what}: 401 ({status})")
    check(archive_files() == [], "the archive is unchanged after the refused runs")
    big = json.dumps({"files": ["x" * 100_000 + ".nc"]}).encode()
    status, _, body = server.request("POST", "/api/v1/runs", big, {"Authorization": "Bearer " + TOKEN})
    check(status in (400, 413), f"a 100 kB body is refused ({status})")
    for bad in [b"not json", b'{"files": ["../../etc/passwd.nc"]}', b'{"files": ["/tmp/x.nc"]}', b'{"files": []}']:
        status, _, body = server.request("POST", "/api/v1/runs", bad, {"Authorization": "Bearer " + TOKEN})
        check(status == 400, f"POST body {bad[:40]!r}: 400 ({status})")
    status, _, _ = server.request("POST", "/api/v1/runs", b'{"files": ["absent.nc"]}', {"Authorization": "Bearer " + TOKEN})
    check(status == 404, f"POST naming a file not in the inbox: 404 ({status})")

    # --- forecasts through the inbox
    t0 = time.time()
    for day in (1, 2, 3):
        deliver(world, server.inbox, day)
    ok = server.wait_for(lambda: server.get_json("/health")[1]["latest_issue_date"] == "2025-12-03" and
                         len(archive_files()) == 3, 300, "three issues")
    check(ok, f"three initialisations classified and archived in {time.time() - t0:.1f} s: {archive_files()}")
    processed = sorted(f for f in os.listdir(os.path.join(server.inbox, "processed")) if f.endswith(".nc"))
    check(processed == ["fc_20251201.nc", "fc_20251202.nc", "fc_20251203.nc"], f"inputs moved to processed/: {processed}")
    status, g = server.get_json("/api/v1/guidance/latest")
    try:
        jsonschema.validate(g, schema)
        valid = True
    except jsonschema.ValidationError as e:
        valid = False
        print(e)
    check(status == 200 and valid, "the latest guidance validates against config/guidance.schema.json")
    check(g["issue_date"] == "2025-12-03" and g["ensemble"]["lag"] == 3 and g["ensemble"]["members"] == 12,
          f"issue 2025-12-03 from 3 initialisations, 12 members ({g['ensemble']['lag']}, {g['ensemble']['members']})")
    check(g["bias_correction"]["applied"], "reforecasts applied")
    status, g1 = server.get_json("/api/v1/guidance/2025-12-01")
    check(status == 200 and g1["issue_date"] == "2025-12-01" and g1["ensemble"]["lag"] == 1,
          "2025-12-01 was issued from its own initialisation (nothing earlier was processed)")
    status, lst = server.get_json("/api/v1/guidance?from=2025-12-02&to=2025-12-03")
    check(status == 200 and [i["issue_date"] for i in lst["issues"]] == ["2025-12-02", "2025-12-03"] and
          lst["issues"][0]["href"] == "/api/v1/guidance/2025-12-02", f"the range lists two issues with links: {lst}")
    status, _ = server.get_json("/api/v1/guidance?from=2025-12-04&to=2025-12-01")
    check(status == 400, f"from after to: 400 ({status})")

    # --- verification against the demo analysis
    status, rep = server.get_json("/api/v1/verification?issued_from=2025-12-01&issued_to=2025-12-03")
    check(status in (200, 400, 422) and isinstance(rep, dict),
          f"verification answers 200, 400 or 422 ({status}: {str(rep)[:200]})")
    check(status == 200, "verification of three issues against the demo analysis succeeds")
    # from/to are valid dates, as verify's --from/--to (issue 12): one meaning everywhere.
    status, rep = server.get_json("/api/v1/verification?from=2025-12-10&to=2025-12-12")
    period = rep.get("period", {}) if isinstance(rep, dict) else {}
    check(status == 200 and period.get("from", "") >= "2025-12-10" and "2025-12-10" <= period.get("to", "") <= "2025-12-12",
          f"from/to select valid dates ({status}: {str(rep.get('period', rep))[:200]})")
    status, rep = server.get_json("/api/v1/verification?from=2030-01-01&to=2030-02-01")
    check(status == 400 and "no guidance valid between 2030-01-01 and 2030-02-01" in rep.get("error", ""),
          f"valid dates the guidance does not reach: 400 saying which side is empty ({status}: {rep})")
    status, rep = server.get_json("/api/v1/verification?issued_from=2030-01-01&issued_to=2030-02-01")
    check(status == 404 and "no guidance issued between" in rep.get("error", ""),
          f"an issue range with no guidance: 404 ({status}: {rep})")
    status, rep = server.get_json("/api/v1/verification?from=2025-13-01")
    check(status == 400, f"verification with a bad date: 400 ({status})")
    # all_months=true: verify's --all-months, every valid month against its monthly climatology.
    status, rep = server.get_json("/api/v1/verification?issued_from=2025-12-01&issued_to=2025-12-03&all_months=true")
    filt = rep.get("season_filter") if isinstance(rep, dict) else None
    months = rep.get("monthly_climatology", {}).get("months", {}) if isinstance(rep, dict) else {}
    check(status == 200 and filt == "all months, monthly climatology" and "12" in months,
          f"all_months=true scores against monthly climatology ({status}: {filt}, months {sorted(months)})")
    status, rep = server.get_json("/api/v1/verification?issued_from=2025-12-01&issued_to=2025-12-03")
    check(status == 200 and rep.get("season_filter") == "model season" and "monthly_climatology" not in rep,
          f"without it the cached default answer keeps the model season ({status}: {rep.get('season_filter')})")
    status, rep = server.get_json("/api/v1/verification?all_months=yes")
    check(status == 400 and "all_months must be true or false" in rep.get("error", ""),
          f"all_months=yes: 400 ({status}: {rep})")

    # --- a truncated file goes to quarantine, the service carries on
    src = os.path.join(world, "forecasts", "fc_20251204.nc")
    with open(src, "rb") as f:
        data = f.read()
    part = os.path.join(server.inbox, ".fc_20251204.nc.part")
    with open(part, "wb") as f:
        f.write(data[: len(data) // 2])
    os.rename(part, os.path.join(server.inbox, "fc_20251204.nc"))
    q = os.path.join(server.inbox, "quarantine")
    ok = server.wait_for(lambda: os.path.exists(os.path.join(q, "fc_20251204.nc.reason.txt")), 120, "quarantine")
    reason = open(os.path.join(q, "fc_20251204.nc.reason.txt")).read() if ok else ""
    check(ok and os.path.exists(os.path.join(q, "fc_20251204.nc")) and "fc_20251204.nc" in reason,
          f"the truncated file is in quarantine with a reason: {reason.strip()[:200]!r}")
    status, h = server.get_json("/health")
    check(status == 200 and h["latest_issue_date"] == "2025-12-03" and h["inbox"]["quarantined_files"] == 1,
          f"the service carries on: latest still 2025-12-03, 1 file quarantined ({h['inbox']})")

    # --- 8 concurrent clients while a run asked for by POST goes on
    errors, counts = [], [0] * 8
    stop = threading.Event()

    def client(i):
        paths = ["/api/v1/guidance/latest", "/health", "/api/v1/guidance?from=2025-12-01&to=2025-12-31",
                 "/api/v1/guidance/2025-12-02", "/api/v1/model"]
        n = 0
        while not stop.is_set() and n < 400:
            p = paths[n % len(paths)]
            try:
                status, _, body = server.get(p)
                doc = json.loads(body)  # a partial document would not parse
                if status != 200:
                    errors.append(f"{p}: {status}")
                elif p.endswith("latest") and doc["issue_date"] not in ("2025-12-03", "2025-12-05"):
                    errors.append(f"latest is {doc['issue_date']}")
            except Exception as e:  # noqa: BLE001  (any failure is what this check counts)
                errors.append(f"{p}: {e!r}")
            n += 1
        counts[i] = n

    # The POST goes first (the file must not wait a poll interval in the inbox, or the poller takes it); the
    # clients start while its run goes on.
    name = deliver(world, server.inbox, 5)
    posted = {}

    def post():
        t0 = time.time()
        posted["status"], _, body = server.request("POST", "/api/v1/runs", json.dumps({"files": [name]}).encode(),
                                                   {"Authorization": "Bearer " + TOKEN,
                                                    "Content-Type": "application/json"})
        posted["s"], posted["answer"] = time.time() - t0, json.loads(body)

    poster = threading.Thread(target=post)
    poster.start()
    threads = [threading.Thread(target=client, args=(i,)) for i in range(8)]
    for t in threads:
        t.start()
    poster.join()
    status, answer, run_s = posted["status"], posted["answer"], posted["s"]
    time.sleep(0.5)
    stop.set()
    for t in threads:
        t.join()
    check(status == 200 and answer["runs"][0]["outcome"] == "issued" and answer["runs"][0]["issue_date"] == "2025-12-05",
          f"POST /api/v1/runs with the token ran 2025-12-05 in {run_s:.1f} s ({status}: {str(answer)[:200]})")
    check(not errors and sum(counts) > 50, f"{sum(counts)} requests from 8 threads during the run: "
          f"{len(errors)} errors {errors[:3]}")
    status, g = server.get_json("/api/v1/guidance/latest")
    check(g["issue_date"] == "2025-12-05" and g["ensemble"]["lag"] == 3 and
          [i["date"] for i in g["ensemble"]["initialisations"]] == ["2025-12-02", "2025-12-03", "2025-12-05"],
          "2025-12-05 lags 12-02, 12-03 and itself (the quarantined 12-04 is not used)")

    # --- the web page
    status, hd, page = server.get("/")
    page = page.decode()
    check(status == 200 and hd.get("Content-Type", "").startswith("text/html"), f"/ is HTML ({status})")
    check("Regime guidance supports, and never replaces, official warnings and the judgement of licensed forecasters."
          in page, "the page carries the caution")
    check("<script src" not in page and "https://" not in page and "@import" not in page,
          "the page loads no external script, font or style")

    # --- the log: a line per request, never the token
    log = open(server.log_path).read()
    check("GET /health 200" in log and "POST /api/v1/runs 401" in log and " ms" in log,
          "the log has one line per request with method, path, status and ms")
    check(TOKEN not in log, "the token is never logged")

    # --- a restart loses nothing
    code = server.stop()
    check(code == 0, f"SIGTERM stops the server with exit code 0 ({code})")
    server = Server(tmp, world, model_path)
    status, lst = server.get_json("/api/v1/guidance")
    dates = [i["issue_date"] for i in lst["issues"]]
    check(dates == ["2025-12-01", "2025-12-02", "2025-12-03", "2025-12-05"], f"after a restart the archive lists {dates}")

    # --- one status for each kind of error (src/service/http_errors.hpp), the verification endpoint included:
    # documents planted in the archive while the service is down are indexed at the restart.
    server.stop()
    planted = os.path.join(server.archive, "guidance")
    with open(os.path.join(planted, "2025-12-06.json"), "w") as f:
        json.dump({"issue_date": "2025-12-06", "format": "something-else"}, f)  # a DataError: not guidance
    with open(os.path.join(planted, "2025-12-07.json"), "w") as f:  # an InputError: another model's guidance
        json.dump({"format": "isohypse-guidance", "issue_date": "2025-12-07", "states": [],
                   "provenance": {"model": {"sha256": "0" * 64}}}, f)
    server = Server(tmp, world, model_path)
    status, rep = server.get_json("/api/v1/verification?issued_from=2025-12-06&issued_to=2025-12-06")
    check(status == 422 and "2025-12-06.json" in rep.get("error", "") and list(rep) == ["error"],
          f"verifying a document that is not guidance (DataError): 422 naming the file ({status}: {rep})")
    status, rep = server.get_json("/api/v1/verification?issued_from=2025-12-07&issued_to=2025-12-07")
    check(status == 400 and "another regime model" in rep.get("error", "") and list(rep) == ["error"],
          f"verifying another model's guidance (InputError): 400 ({status}: {rep})")
    status, again = server.get_json("/api/v1/verification?issued_from=2025-12-07&issued_to=2025-12-07")
    check(status == 400 and again == rep, "the refusal is the same when asked again (kept with the archive's generation)")
    status, rep = server.get_json("/api/v1/verification?issued_from=2025-12-01&issued_to=2025-12-03")
    check(status == 200 and "windows" in rep, f"the rest of the archive still verifies ({status})")
finally:
    server.stop()
    shutil.rmtree(tmp, ignore_errors=True)
finish()
