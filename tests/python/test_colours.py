"""One colour per regime everywhere (issue 10, the shared vocabulary): the
same regime has the same colour in the model API (/api/v1/model "colour"),
the live page's palette (PALETTE, filled in by the server), every regime map
(rect.regime-swatch) and the verification report written by `isohypse verify
--html`; regime k (R1 first) is palette.regimes[k-1], the no-regime state is
palette.no_regime, and nothing that is not a regime (the report's score
lines, the page's styles and script) uses a regime colour. The rendered page
is checked in a real browser by test_service_browser.py."""
import json
import os
import re
import shutil

from common import BIN, check, finish, run, scratch
from service_data import Server, world_and_model

HEX = r"#[0-9A-Fa-f]{6}\b|#[0-9A-Fa-f]{3}\b"

tmp = scratch()
world, model_path = world_and_model(tmp)
server = Server(tmp, world, model_path)


def low(c):
    return c.lower()


try:
    # --- the model API and the palette
    status, m = server.get_json("/api/v1/model")
    palette = m["palette"]
    regimes, series = [low(c) for c in palette["regimes"]], [low(c) for c in palette["series"]]
    grey = low(palette["no_regime"])
    check(status == 200 and len(m["regimes"]) == 4, f"/api/v1/model: 4 regimes ({status})")
    check(not set(series) & set(regimes) and grey not in regimes and grey not in series and
          len(set(regimes)) == len(regimes), "the palette: regime, series and no-regime colours all differ")
    want = {r["id"]: regimes[i % len(regimes)] for i, r in enumerate(m["regimes"])}
    check([r["id"] for r in m["regimes"]] == ["R1", "R2", "R3", "R4"], "regimes R1..R4 in the model's order")
    for r in m["regimes"]:
        check(low(r["colour"]) == want[r["id"]],
              f"API: {r['id']} colour {r['colour']} = palette.regimes[{r['id'][1:]}-1]")

    # --- the page: the palette it is given, and no colour of its own that could be a regime's
    status, _, page = server.get("/")
    page = page.decode()
    got = re.search(r"const PALETTE = (\{.*?\});", page)
    check(status == 200 and got is not None and json.loads(got.group(1)) == palette,
          "the page's PALETTE is the API's palette")
    script = page[page.index("<script>"):page.index("</script>")].replace(got.group(0) if got else "", "")
    literals = sorted(set(low(c) for c in re.findall(HEX, script)))
    check(literals == ["#fff"], f"the page's script has no colour but the palette's (and white separators): {literals}")
    style = page[page.index("<style>"):page.index("</style>")]
    clash = [c for c in re.findall(HEX, style) if low(c) in regimes or low(c) == grey]
    check(not clash, f"no style colour is a regime's or the no-regime grey: {clash}")

    # --- the regime maps
    for r in m["regimes"]:
        status, _, svg = server.get(r["map"])
        fill = re.findall(r'<rect class="regime-swatch"[^>]*fill="([^"]+)"', svg.decode())
        check(status == 200 and len(fill) == 1 and low(fill[0]) == want[r["id"]],
              f"map {r['map']}: swatch {fill} = {want[r['id']]}")

    # --- a verification report on a small archive made by classify
    arch = os.path.join(tmp, "archive-cli")
    os.makedirs(arch)
    for iso in ("2025-12-02", "2025-12-03"):
        r = run([BIN, "classify", "--model", model_path, "--forecasts", f"{world}/forecasts/*.nc", "--lag", "2",
                 "--issue-date", iso, "--quiet", "--out", f"{arch}/{iso}.json"])
        check(r.returncode == 0, f"classify {iso} ({r.stderr.strip()[-200:]})")
    out, html = os.path.join(tmp, "verify.json"), os.path.join(tmp, "verify.html")
    r = run([BIN, "verify", "--model", model_path, "--guidance", arch, "--observed", f"{world}/analysis/*.nc",
             "--out", out, "--html", html, "--bootstrap", "20"])
    check(r.returncode == 0, f"verify --html on the small archive ({r.stderr.strip()[-200:]})")
    report = open(html).read() if r.returncode == 0 else ""
    table = dict((s, low(c)) for c, s in re.findall(
        r'<td class="l" style="color:(#[0-9A-Fa-f]{6})">(R\d+)</td>', report))
    check(table == want, f"report: the regime table's colours equal the API's: {table}")
    legend = dict((s, low(c)) for c, s in re.findall(
        r'<rect [^>]*width="12" height="12" fill="(#[0-9A-Fa-f]{6})"/><text[^>]*>([^<]+)</text>', report))
    check(legend == dict(want, no_regime=grey), f"report: the sequence legend's colours equal the API's: {legend}")
    lines = set(low(c) for c in re.findall(r'<polyline class="series"[^>]*stroke="([^"]+)"', report))
    check(lines and lines <= set(series) and not lines & set(regimes),
          f"report: score lines use series colours, never a regime's: {sorted(lines)}")
finally:
    server.stop()
    shutil.rmtree(tmp, ignore_errors=True)
finish()
