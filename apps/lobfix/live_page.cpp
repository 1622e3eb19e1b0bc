// The live map page (live_page.hpp). Everything it needs is in this one document: the
// drawing is inline SVG built by the inline script from /fix.geojson (stations, rays, fixes,
// ellipses; docs/outputs.md), in a local equirectangular view around the features. The token
// for a non-loopback listener is read from the address's fragment (#token=...), which the
// browser never sends, and passed in the X-Lobfix-Token header.
#include "live_page.hpp"

namespace lobfix_app {

const char* live_page_html() {
  return R"HTML(<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>lobfix live</title>
<style>
  body { margin: 0; font: 14px/1.4 sans-serif; color: #111; background: #fafafa; }
  header { padding: 6px 12px; background: #222; color: #fff; }
  header b { font-size: 16px; }
  #state { float: right; }
  #state.stale { color: #f88; }
  main { display: flex; flex-wrap: wrap; gap: 12px; padding: 12px; }
  svg { background: #fff; border: 1px solid #999; width: 620px; max-width: 100%; height: auto; }
  #panel { min-width: 260px; flex: 1; }
  table { border-collapse: collapse; }
  td, th { padding: 2px 8px 2px 0; text-align: left; vertical-align: top; }
  .caution { margin-top: 12px; padding: 6px; border-left: 4px solid #d55e00; background: #fff3e8; }
  .ray { stroke: #0072b2; stroke-width: 1.2; fill: none; }
  .ray.out { stroke: #999; stroke-dasharray: 4 3; }
  .ellipse { stroke: #0072b2; fill: #0072b2; fill-opacity: 0.12; stroke-width: 1.5; }
  .ellipse_scaled { stroke: #0072b2; fill: none; stroke-dasharray: 6 4; }
  .station { fill: #000; }
  .fix { fill: #d55e00; stroke: #fff; stroke-width: 1.5; }
  .label { font-size: 11px; fill: #333; }
</style>
</head>
<body>
<header><b>lobfix live</b> <span id="state">connecting</span></header>
<main>
<svg id="map" viewBox="0 0 600 600" role="img" aria-label="map of stations, rays and fixes"></svg>
<div id="panel">
  <h2>Fix</h2>
  <div id="fixes">no fix yet</div>
  <h2>Session</h2>
  <table>
    <tr><th>bearings</th><td id="bearings">-</td></tr>
    <tr><th>revision</th><td id="revision">-</td></tr>
    <tr><th>last solve</th><td id="solved">-</td></tr>
    <tr><th>accepted</th><td id="accepted">-</td></tr>
    <tr><th>rejected</th><td id="rejected">-</td></tr>
  </table>
  <p class="caution">A live fix is an estimate: reflections and bad bearings mislead, and the
  fix moves as bearings arrive. Local regulations and the lead agency's procedures come first.</p>
</div>
</main>
<script>
"use strict";
const token = new URLSearchParams(location.hash.slice(1)).get("token");
const svgNS = "http://www.w3.org/2000/svg";

async function get(path) {
  const headers = token ? { "X-Lobfix-Token": token } : {};
  const r = await fetch(path, { headers: headers, cache: "no-store" });
  if (!r.ok) throw new Error(path + ": HTTP " + r.status);
  return r.json();
}

function text(id, value) { document.getElementById(id).textContent = value; }

function rings(g) {
  if (!g) return [];
  switch (g.type) {
    case "Point": return [[g.coordinates]];
    case "MultiPoint": case "LineString": return [g.coordinates];
    case "MultiLineString": case "Polygon": return g.coordinates;
    case "MultiPolygon": return g.coordinates.flat();
    default: return [];
  }
}

function draw(geo) {
  const svg = document.getElementById("map");
  while (svg.firstChild) svg.removeChild(svg.firstChild);
  const feats = (geo && geo.features) || [];
  // The view: stations, fixes and ellipses (rays may run far), with a margin.
  let lo = [Infinity, Infinity], hi = [-Infinity, -Infinity];
  for (const f of feats) {
    if (f.properties.kind === "ray") continue;
    for (const ring of rings(f.geometry)) for (const p of ring) {
      lo = [Math.min(lo[0], p[0]), Math.min(lo[1], p[1])];
      hi = [Math.max(hi[0], p[0]), Math.max(hi[1], p[1])];
    }
  }
  if (!isFinite(lo[0])) return;
  const lat0 = (lo[1] + hi[1]) / 2, k = Math.cos(lat0 * Math.PI / 180);
  const span = Math.max((hi[0] - lo[0]) * k, hi[1] - lo[1], 1e-4) * 1.3;
  const cx = (lo[0] + hi[0]) / 2, cy = lat0;
  const xy = p => [300 + ((p[0] - cx) * k) / span * 560, 300 - (p[1] - cy) / span * 560];
  const order = { ellipse_scaled: 0, ellipse: 1, ray: 2, station: 3, fix: 4 };
  feats.sort((a, b) => (order[a.properties.kind] || 0) - (order[b.properties.kind] || 0));
  for (const f of feats) {
    const kind = f.properties.kind;
    if (kind === "station" || kind === "fix") {
      const [x, y] = xy(f.geometry.coordinates);
      const el = document.createElementNS(svgNS, kind === "fix" ? "circle" : "rect");
      if (kind === "fix") { el.setAttribute("cx", x); el.setAttribute("cy", y); el.setAttribute("r", 6); }
      else { el.setAttribute("x", x - 3); el.setAttribute("y", y - 3); el.setAttribute("width", 6); el.setAttribute("height", 6); }
      el.setAttribute("class", kind);
      svg.appendChild(el);
      const label = document.createElementNS(svgNS, "text");
      label.setAttribute("x", x + 8); label.setAttribute("y", y - 6);
      label.setAttribute("class", "label");
      label.textContent = kind === "fix" ? ("fix " + (f.properties.signal || "")) : f.properties.station;
      svg.appendChild(label);
      continue;
    }
    for (const ring of rings(f.geometry)) {
      const el = document.createElementNS(svgNS, kind === "ray" ? "polyline" : "polygon");
      el.setAttribute("points", ring.map(p => xy(p).join(",")).join(" "));
      el.setAttribute("class", kind + (f.properties.outlier ? " out" : ""));
      svg.appendChild(el);
    }
  }
}

function describe(geo) {
  const fixes = ((geo && geo.features) || []).filter(f => f.properties.kind === "fix");
  const box = document.getElementById("fixes");
  if (fixes.length === 0) { box.textContent = "no fix yet"; return; }
  box.textContent = "";
  for (const f of fixes) {
    const p = f.properties, d = document.createElement("div");
    d.className = "fix-line";
    d.textContent = (p.signal ? "signal " + p.signal + ": " : "") +
      p.lat.toFixed(6) + ", " + p.lon.toFixed(6) + "  CEP " + Math.round(p.cep_m) + " m";
    box.appendChild(d);
  }
}

async function tick() {
  try {
    const status = await get("status");
    const geo = await get("fix.geojson");
    draw(geo);
    describe(geo);
    text("bearings", status.bearings_solved + " solved of " + status.bearings);
    text("revision", String(status.revision));
    text("solved", status.last_solve_time || "-");
    text("accepted", String(status.accepted));
    text("rejected", String(status.rejected_total));
    const s = document.getElementById("state");
    s.textContent = "live, updated " + new Date().toISOString().slice(11, 19) + " UTC";
    s.className = "";
  } catch (e) {
    const s = document.getElementById("state");
    s.textContent = "no contact: " + e.message;
    s.className = "stale";
  }
  setTimeout(tick, 1000);
}
tick();
</script>
</body>
</html>
)HTML";
}

}  // namespace lobfix_app
