"""The service's web page in a real browser (issue 6): headless Chromium
(Debian's chromium) loads / from a test server holding two issues, runs the
page's script, and the dumped DOM must hold the probability chart's SVG
areas, the regime maps and the regime names. Every regime-coloured element
the script drew (chart areas, legend, table and map-caption swatches) has
its regime's colour from the model API's palette (issue 10), and the chart's
other lines use the palette's series colours. A screenshot is kept under
$ISOHYPSE_BUILD_DIR/artefacts/service-page.png."""
import json
import os
import re
import shutil
import subprocess
import tempfile
import time

from common import BUILD, check, finish, scratch
from service_data import Server, deliver, world_and_model

CHROMIUM = "/usr/bin/chromium"
if not os.path.exists(CHROMIUM):
    check(False, f"{CHROMIUM} is not installed: run the test command (./setup.sh test), which installs chromium "
          "and chromium-driver")
    finish()

tmp = scratch()
world, model_path = world_and_model(tmp)
server = Server(tmp, world, model_path)


def colour_of(tag):
    """The fill or background colour of an element's start tag, as lower-case #rrggbb."""
    m = re.search(r'(?:fill="|background:\s*)(#[0-9A-Fa-f]{6}|rgb\(\s*\d+,\s*\d+,\s*\d+\s*\))', tag)
    if not m:
        return None
    c = m.group(1)
    if c.startswith("rgb"):
        return "#" + "".join(f"{int(v):02x}" for v in re.findall(r"\d+", c))
    return c.lower()


def chromium(*args):
    profile = tempfile.mkdtemp(prefix="isohypse-chromium-")
    try:
        return subprocess.run([CHROMIUM, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
                               "--disable-background-networking", "--disable-component-update", "--disable-sync",
                               f"--user-data-dir={profile}", "--virtual-time-budget=8000", *args],
                              capture_output=True, text=True, timeout=180)
    finally:
        shutil.rmtree(profile, ignore_errors=True)


try:
    for day in (1, 2):
        deliver(world, server.inbox, day)
    ok = server.wait_for(lambda: server.get_json("/health")[1]["latest_issue_date"] == "2025-12-02", 300, "two issues")
    check(ok, "two issues archived")
    status, model = server.get_json("/api/v1/model")
    names = [r["name"] for r in model["regimes"]]

    t0 = time.time()
    r = chromium("--dump-dom", server.base + "/")
    dom = r.stdout
    print(f"chromium --dump-dom: exit {r.returncode}, {len(dom)} characters in {time.time() - t0:.1f} s")
    check(r.returncode == 0 and "<html" in dom, "chromium dumped the page")
    check('id="prob-chart"' in dom, "the DOM holds the probability chart's <svg>")
    areas = re.findall(r'<path[^>]*class="area"', dom)
    check(len(areas) == 5, f"the chart has one stacked area per state (4 regimes + no regime): {len(areas)}")
    maps = re.findall(r'<img[^>]*class="regime-map"', dom)
    check(len(maps) == 4 and all(f"/api/v1/model/regimes/R{i}.svg" in dom for i in range(1, 5)),
          f"the DOM holds the 4 regime maps: {len(maps)}")
    check(all(n.replace("&", "&amp;") in dom for n in names), f"the DOM names every regime: {names}")
    check("Regime guidance supports, and never replaces, official warnings" in dom, "the caution is on the page")
    options = re.findall(r'<option value="(\d{4}-\d{2}-\d{2})"', dom)
    check(options == ["2025-12-02", "2025-12-01"], f"the issue-date picker lists the archive, latest first: {options}")
    check("<table" in dom and "days 1–3" in dom, "the window table is filled")
    check('class="error"></div>' in dom or 'id="message" class="error"></div>' in dom,
          "no error message on the page")

    # --- colours: every element tagged with a state has that state's palette colour
    palette = model["palette"]
    want = {r["id"]: palette["regimes"][i % len(palette["regimes"])].lower() for i, r in enumerate(model["regimes"])}
    want["no_regime"] = palette["no_regime"].lower()
    tagged = re.findall(r'<(?:path|span)[^>]*data-state="([^"]+)"[^>]*>', dom)
    tags = re.findall(r'<(?:path|span)[^>]*data-state="[^"]+"[^>]*>', dom)
    wrong = [(st, colour_of(t)) for st, t in zip(tagged, tags) if colour_of(t) != want.get(st)]
    kinds = {"area": sum('class="area"' in t for t in tags), "swatch": sum('class="swatch"' in t for t in tags)}
    check(kinds["area"] == 5 and kinds["swatch"] == 5 + 5 + 4 + 10 + 4,
          f"coloured elements tagged with their state (legend 5, window table 5, persistence 4, transitions 10, "
          f"maps 4 swatches): {kinds}")
    check(not wrong, f"every chart area and swatch has its regime's palette colour: {wrong[:4]}")
    chart = dom[dom.index('id="prob-chart"'):dom.index("</svg>", dom.index('id="prob-chart"'))]
    strokes = set(c.lower() for c in re.findall(r'<(?:line|rect)[^>]*stroke="(#[0-9A-Fa-f]{6})"', chart))
    check(strokes and strokes <= {c.lower() for c in palette["series"]},
          f"the chart's axes and window lines use series colours: {sorted(strokes)}")

    artefacts = os.path.join(BUILD or tmp, "artefacts")
    os.makedirs(artefacts, exist_ok=True)
    shot = os.path.join(artefacts, "service-page.png")
    if os.path.exists(shot):
        os.remove(shot)
    r = chromium(f"--screenshot={shot}", "--window-size=1280,1600", server.base + "/")
    size = os.path.getsize(shot) if os.path.exists(shot) else 0
    check(r.returncode == 0 and size > 20000, f"screenshot {shot} written ({size} bytes)")
finally:
    server.stop()
    shutil.rmtree(tmp, ignore_errors=True)
finish()
