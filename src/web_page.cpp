// The forecaster's page at /: one self-contained HTML document. Its small
// script reads the service's own API (same origin) and draws the chart as
// inline SVG; nothing is fetched from anywhere else.
#include "isohypse/service.hpp"

namespace isohypse {

const std::string& service_page_html() {
  static const std::string page = R"HTML(<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>isohypse regime guidance</title>
<style>
 body { font-family: sans-serif; margin: 0 auto; max-width: 1180px; padding: 0 16px 40px; color: #222; }
 h1 { font-size: 1.4em; margin: 16px 0 4px; }
 h2 { font-size: 1.1em; margin: 22px 0 6px; border-bottom: 1px solid #ccc; }
 .caution { background: #fff4d6; border: 1px solid #e0b040; padding: 8px 12px; margin: 8px 0; font-weight: bold; }
 .meta { color: #555; font-size: 0.9em; }
 .error { color: #a00; font-weight: bold; }
 table { border-collapse: collapse; font-size: 0.9em; }
 th, td { border: 1px solid #ccc; padding: 3px 7px; text-align: right; }
 th { background: #f3f3f3; }
 td.l, th.l { text-align: left; }
 td.top { font-weight: bold; background: #eef4ff; }
 .swatch { display: inline-block; width: 12px; height: 12px; margin-right: 4px; vertical-align: -1px; border: 1px solid #888; }
 .legend span.item { margin-right: 16px; white-space: nowrap; }
 .maps { display: flex; flex-wrap: wrap; gap: 10px; }
 .maps figure { margin: 0; }
 .maps img { width: 560px; max-width: 100%; border: 1px solid #ddd; }
 .maps figcaption { font-size: 0.85em; color: #444; }
 select { font-size: 1em; }
</style>
</head>
<body>
<h1>Circulation-regime guidance</h1>
<div class="caution">Regime guidance supports, and never replaces, official warnings and the judgement of licensed forecasters.</div>
<p>Issue date: <select id="issue" aria-label="issue date"></select> <span id="summary" class="meta"></span></p>
<div id="message" class="error"></div>

<h2>Regime probabilities by lead</h2>
<p class="meta">Share of the lagged ensemble's members in each regime, for each valid day. Dashed lines mark the windows below.</p>
<div id="chart"></div>
<div id="legend" class="legend"></div>

<h2>Windows: which regime dominates</h2>
<p class="meta">Dominance: probability that the regime is the most frequent in the window. Expected days: mean number of days in the regime.</p>
<div id="windows"></div>

<h2>Persistence</h2>
<div id="persistence"></div>

<h2>Transitions</h2>
<div id="transitions"></div>

<h2>Regime maps (500 hPa height anomaly of each regime)</h2>
<div id="maps" class="maps"></div>
<p class="meta" id="model"></p>

<script>
"use strict";
const COLOURS = ["#E69F00", "#56B4E9", "#009E73", "#CC79A7", "#0072B2", "#D55E00", "#F0E442", "#882255", "#44AA99", "#999933"];
const NS = "http://www.w3.org/2000/svg";
let names = {};            // state -> "R1 ridge ..."
function colour(states, s) { return s === "no_regime" ? "#c8c8c8" : COLOURS[states.indexOf(s) % COLOURS.length]; }
function label(s) { return s === "no_regime" ? "no regime" : (names[s] ? s + " " + names[s] : s); }
function pct(p) { return p === null || p === undefined ? "–" : Math.round(100 * p) + "%"; }
function el(tag, attrs, text) {
  const e = document.createElement(tag);
  for (const k in (attrs || {})) e.setAttribute(k, attrs[k]);
  if (text !== undefined) e.textContent = text;
  return e;
}
function svg(tag, attrs, text) {
  const e = document.createElementNS(NS, tag);
  for (const k in (attrs || {})) e.setAttribute(k, attrs[k]);
  if (text !== undefined) e.textContent = text;
  return e;
}
async function getJSON(url) {
  const r = await fetch(url);
  const body = await r.json();
  if (!r.ok) throw new Error(body.error || (url + ": HTTP " + r.status));
  return body;
}
function table(head, rows) {
  const t = el("table"), tr = el("tr");
  head.forEach((h, i) => tr.appendChild(el("th", i === 0 ? {class: "l"} : {}, h)));
  t.appendChild(tr);
  rows.forEach(r => {
    const row = el("tr");
    r.forEach((c, i) => {
      const cell = el("td", i === 0 ? {class: "l"} : {});
      if (c && typeof c === "object") { cell.textContent = c.text; if (c.top) cell.className = "top"; }
      else cell.textContent = c;
      row.appendChild(cell);
    });
    t.appendChild(row);
  });
  return t;
}

function drawChart(g) {
  const box = document.getElementById("chart");
  box.replaceChildren();
  const days = g.daily, states = g.states;
  if (!days.length) { box.textContent = "no daily probabilities"; return; }
  const W = 1000, H = 320, L = 48, R = 26, T = 22, B = 40;
  const lead0 = days[0].lead_days, lead1 = days[days.length - 1].lead_days;
  const x = d => L + (d - lead0) / Math.max(1, lead1 - lead0) * (W - L - R);
  const y = p => T + (1 - p) * (H - T - B);
  const s = svg("svg", {viewBox: `0 0 ${W} ${H}`, width: "100%", role: "img", id: "prob-chart",
                        "aria-label": "regime probabilities against lead time"});
  s.appendChild(svg("title", {}, "Regime probabilities against lead time, issued " + g.issue_date));
  // Stacked areas: state k lies between the sums of states before it and including it.
  const base = days.map(() => 0);
  states.forEach(st => {
    const top = days.map((d, i) => base[i] + (d.probabilities[st] || 0));
    let path = "M" + days.map((d, i) => x(d.lead_days).toFixed(1) + "," + y(top[i]).toFixed(1)).join("L");
    for (let i = days.length - 1; i >= 0; --i) path += "L" + x(days[i].lead_days).toFixed(1) + "," + y(base[i]).toFixed(1);
    const area = svg("path", {d: path + "Z", fill: colour(states, st), stroke: "#fff", "stroke-width": "0.5",
                              class: "area", "data-state": st});
    area.appendChild(svg("title", {}, label(st)));
    s.appendChild(area);
    top.forEach((v, i) => base[i] = v);
  });
  // Axes: probability every 20 %, lead every 5 days with the valid date.
  for (let p = 0; p <= 1.0001; p += 0.2) {
    s.appendChild(svg("line", {x1: L, x2: W - R, y1: y(p), y2: y(p), stroke: "#000", "stroke-opacity": "0.15"}));
    s.appendChild(svg("text", {x: L - 6, y: y(p) + 4, "text-anchor": "end", "font-size": "12"}, Math.round(p * 100) + "%"));
  }
  days.forEach(d => {
    if (d.lead_days % 5 !== 0) return;
    s.appendChild(svg("line", {x1: x(d.lead_days), x2: x(d.lead_days), y1: H - B, y2: H - B + 5, stroke: "#000"}));
    s.appendChild(svg("text", {x: x(d.lead_days), y: H - B + 18, "text-anchor": "middle", "font-size": "12"}, "+" + d.lead_days));
    s.appendChild(svg("text", {x: x(d.lead_days), y: H - B + 32, "text-anchor": "middle", "font-size": "11", fill: "#555"},
                      d.valid_date.slice(5)));
  });
  s.appendChild(svg("text", {x: L - 44, y: H - B + 18, "font-size": "12"}, "lead"));
  s.appendChild(svg("text", {x: L - 44, y: H - B + 32, "font-size": "11", fill: "#555"}, "valid"));
  g.windows.forEach(w => {
    const xa = x(w.first_lead_days - 0.5);
    if (w.first_lead_days > lead0) s.appendChild(svg("line", {x1: xa, x2: xa, y1: T - 4, y2: H - B, stroke: "#000",
                                                               "stroke-dasharray": "4 3", "stroke-width": "1.2"}));
    s.appendChild(svg("text", {x: (xa + x(Math.min(w.last_lead_days, lead1) + 0.5)) / 2, y: T - 7, "text-anchor": "middle",
                               "font-size": "12"}, "days " + w.first_lead_days + "–" + w.last_lead_days));
  });
  s.appendChild(svg("rect", {x: L, y: T, width: W - L - R, height: H - T - B, fill: "none", stroke: "#000"}));
  box.appendChild(s);
  const legend = document.getElementById("legend");
  legend.replaceChildren();
  states.forEach(st => {
    const item = el("span", {class: "item"});
    item.appendChild(el("span", {class: "swatch", style: "background:" + colour(states, st)}));
    item.appendChild(document.createTextNode(label(st)));
    legend.appendChild(item);
  });
}

function drawWindows(g) {
  const rows = g.windows.map(w => {
    const best = Math.max(...g.states.map(st => w.dominance[st] || 0));  // ties are all marked
    return ["days " + w.first_lead_days + "–" + w.last_lead_days + "  (" + w.from.slice(5) + " to " + w.to.slice(5) + ")"]
      .concat(g.states.map(st => ({text: pct(w.dominance[st]) + "  /  " + (w.expected_days[st] === null ? "–" :
                                      w.expected_days[st].toFixed(1) + " d"), top: best > 0 && (w.dominance[st] || 0) === best})));
  });
  const box = document.getElementById("windows");
  box.replaceChildren(table(["window (valid dates)"].concat(g.states.map(label)), rows));
}

function drawPersistence(g) {
  const p = g.persistence, box = document.getElementById("persistence");
  box.replaceChildren();
  box.appendChild(el("p", {}, p.observed ? "Observed now: " + label(p.observed.regime) + " for " + p.observed.age_days +
                                           " day(s) as of " + p.observed.as_of + "." :
                                           "No observed regime given to the service (no analysis)."));
  const hz = p.lasting.horizons_days;
  box.appendChild(el("p", {class: "meta"}, "Chance that a spell of the regime under way lasts at least N more days: " +
                                           "forecast (lagged ensemble) against climatology."));
  const rows = g.states.filter(st => st !== "no_regime").map(st =>
    [label(st)].concat(hz.map((h, i) => pct((p.lasting.forecast[st] || [])[i]) + "  (clim. " +
                                        pct((p.lasting.climatological[st] || [])[i]) + ")")));
  box.appendChild(table(["regime"].concat(hz.map(h => h + " more days")), rows));
}

function drawTransitions(g) {
  const box = document.getElementById("transitions"), st = g.states;
  box.replaceChildren();
  box.appendChild(el("p", {class: "meta"}, "Member day-to-day changes inside each window: how often the regime stays, " +
                                           "and the most frequent change."));
  const rows = g.windows.map(w => {
    const c = w.transitions.counts;
    let total = 0, stay = 0, best = null;
    c.forEach((r, i) => r.forEach((n, j) => {
      total += n || 0;
      if (i === j) stay += n || 0;
      else if (n && (!best || n > best.n)) best = {i, j, n};
    }));
    return ["days " + w.first_lead_days + "–" + w.last_lead_days, total ? pct(stay / total) : "–",
            best ? st[best.i] + " → " + st[best.j] + " (" + pct(best.n / total) + " of member-days)" : "none"];
  });
  box.appendChild(table(["window", "stays", "most frequent change"], rows));
  box.appendChild(el("p", {class: "meta"}, "Climatological day-to-day transition probabilities (row: today, column: tomorrow):"));
  const m = g.transitions.climatological;
  box.appendChild(table(["from \\ to"].concat(st), m.map((r, i) => [st[i]].concat(r.map(pct)))));
}

function drawMaps(model) {
  const box = document.getElementById("maps");
  box.replaceChildren();
  model.regimes.forEach(r => {
    const f = el("figure");
    f.appendChild(el("img", {src: r.map, alt: "map of regime " + r.id + " " + r.name, class: "regime-map"}));
    f.appendChild(el("figcaption", {}, r.id + " " + r.name + ": " + pct(r.climatological_frequency) +
                     " of days, mean spell " + r.persistence.mean_run_days.toFixed(1) + " days"));
    box.appendChild(f);
  });
  document.getElementById("model").textContent = "Regime model " + model.file + " (sha256 " + model.sha256.slice(0, 12) +
    "…), domain " + model.domain + ", " + model.regimes.length + " regimes.";
}

async function show(date) {
  const msg = document.getElementById("message");
  msg.textContent = "";
  try {
    const g = await getJSON(date ? "/api/v1/guidance/" + date : "/api/v1/guidance/latest");
    g.regimes.forEach(r => names[r.id] = r.name);
    const e = g.ensemble;
    document.getElementById("summary").textContent = e.members + " members from " + e.lag + " initialisation(s) " +
      e.initialisations.map(i => i.date).join(", ") + "; model drift " +
      (g.bias_correction.applied ? "removed with reforecasts" : "NOT removed (no reforecasts)") + ".";
    drawChart(g); drawWindows(g); drawPersistence(g); drawTransitions(g);
  } catch (err) { msg.textContent = err.message; }
}

async function main() {
  try {
    const model = await getJSON("/api/v1/model");
    model.regimes.forEach(r => names[r.id] = r.name);
    drawMaps(model);
    const list = await getJSON("/api/v1/guidance?from=0001-01-01&to=9999-12-31");
    const sel = document.getElementById("issue");
    list.issues.slice().reverse().forEach(i => sel.appendChild(el("option", {value: i.issue_date}, i.issue_date)));
    sel.addEventListener("change", () => show(sel.value));
    if (!list.issues.length) { document.getElementById("message").textContent = "No guidance in the archive yet."; return; }
    await show(sel.value);
  } catch (err) { document.getElementById("message").textContent = err.message; }
}
main();
</script>
</body>
</html>
)HTML";
  return page;
}

}  // namespace isohypse
