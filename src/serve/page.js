// loopwright study page: the brief panel, debounced questions to the server, and the answers.
// Every value is sent as the text typed; the server parses it as the command line does.
"use strict";

const FIELDS = [
  ["shape", "shape family", "circle, clothoid, spline or profile"],
  ["entry-speed", "entry speed", "m/s, or with a unit: 90 km/h"],
  ["max-g", "max g", "g"],
  ["min-top-g", "min top g", "g"],
  ["max-onset", "max onset", "g/s or none"],
  ["max-height", "max height", "m or none"],
  ["min-radius", "min radius", "m"],
  ["height", "asked height", "m; empty: tallest"],
  ["heartline-height", "heartline height", "m"],
  ["rolling-resistance", "rolling resistance", "\u03bc"],
  ["drag-area", "drag area", "m\u00b2"],
  ["mass", "train mass", "kg"],
  ["air-density", "air density", "kg/m\u00b3"],
  ["lead-length", "lead length", "m"],
  ["spacing", "sample spacing", "m"],
  ["cars", "cars", "count"],
  ["car-pitch", "car pitch", "m"],
  ["lateral-shift", "lateral shift", "m"],
  ["name", "file name", "stem of the files"],
];

const FIGURES = [
  ["loop_height_m", "loop height (heartline)", "m"],
  ["rail_height_m", "rail height", "m"],
  ["top_radius_m", "top radius", "m"],
  ["min_radius_m", "smallest radius", "m"],
  ["path_length_m", "path length", "m"],
  ["footprint_length_m", "footprint length", "m"],
  ["peak_normal_g", "peak normal load", "g"],
  ["top_normal_g", "normal load at top", "g"],
  ["top_speed_m_s", "speed at top", "m/s"],
  ["peak_onset_g_s", "peak onset", "g/s"],
  ["time_in_loop_s", "time in loop", "s"],
  ["exit_speed_m_s", "exit speed", "m/s"],
];

const $ = (id) => document.getElementById(id);
// queued: an edit waits for the debounce; the tests wait on these to know the page has settled.
const state = { designSeq: 0, compareSeq: 0, pending: 0, timer: null, queued: false };

function fmt(v, digits = 3) {
  return typeof v === "number" && isFinite(v) ? v.toFixed(digits) : (v === null ? "unbounded" : String(v));
}

function buildFields() {
  const form = $("fields");
  for (const [flag, label, unit] of FIELDS) {
    const l = document.createElement("label");
    l.htmlFor = "f-" + flag;
    l.textContent = label;
    const i = document.createElement("input");
    i.id = "f-" + flag;
    i.name = flag;
    i.placeholder = unit;
    i.title = "--" + flag + " (" + unit + ")";
    i.addEventListener("input", schedule);
    form.append(l, i);
  }
}

function briefRequest() {
  const fields = {};
  for (const [flag] of FIELDS) {
    const v = $("f-" + flag).value.trim();
    if (v !== "") fields[flag] = v;
  }
  return { brief_toml: $("brief-toml").value, fields };
}

function setBusy(delta) {
  state.pending += delta;
  $("busy").hidden = state.pending <= 0;
  document.body.dataset.pending = String(state.pending);
}

async function post(path, body) {
  setBusy(1);
  try {
    const r = await fetch(path, { method: "POST", headers: { "Content-Type": "application/json" }, body: JSON.stringify(body) });
    const j = await r.json();
    return j;
  } catch (e) {
    return { status: "error", error: "the server did not answer: " + e };
  } finally {
    setBusy(-1);
  }
}

function schedule() {
  clearTimeout(state.timer);
  state.queued = true;
  state.timer = setTimeout(update, 250);
}

function update() {
  state.queued = false;
  const req = briefRequest();
  const ds = ++state.designSeq;
  post("/api/design", { seq: ds, ...req }).then((a) => {
    if (a.seq !== undefined && a.seq !== state.designSeq) return; // a newer question was asked
    if (ds !== state.designSeq) return;
    showDesign(a);
    document.body.dataset.designSeq = String(ds);
  });
  const cs = ++state.compareSeq;
  post("/api/compare", { seq: cs, ...req }).then((a) => {
    if (cs !== state.compareSeq) return;
    showCompare(a);
    document.body.dataset.compareSeq = String(cs);
  });
}

function showError(text) {
  $("error").hidden = !text;
  $("error").textContent = text || "";
}

function showDesign(a) {
  $("infeasible").hidden = true;
  $("downloads").replaceChildren(); // files only for a design shown in full
  document.body.dataset.designStatus = a.status;
  if (a.status === "error") {
    showError(a.error);
    $("design-out").style.opacity = 0.35;
    return;
  }
  showError("");
  if (a.status === "infeasible") {
    $("design-out").style.opacity = 0.35;
    $("infeasible").hidden = false;
    $("infeasible-reason").textContent = a.infeasible.message;
    const hints = $("hints");
    hints.replaceChildren();
    for (const h of a.infeasible.hints) {
      const b = document.createElement("button");
      b.type = "button";
      b.className = "hint";
      b.dataset.flag = h.flag;
      b.dataset.value = h.value;
      b.textContent = h.text;
      b.addEventListener("click", () => {
        $("f-" + h.flag).value = h.value;
        update();
      });
      hints.append(b);
    }
    return;
  }
  $("design-out").style.opacity = 1;
  const r = a.report;
  $("design-shape").textContent = "(" + r.shape + ")";
  const fig = $("figures").tBodies[0];
  fig.replaceChildren();
  for (const [key, label, unit] of FIGURES) {
    const tr = fig.insertRow();
    tr.insertCell().textContent = label;
    const td = tr.insertCell();
    td.id = "fig-" + key;
    td.dataset.value = String(r[key]);
    td.textContent = fmt(r[key]) + " " + unit;
  }
  const chk = $("checks").tBodies[0];
  chk.replaceChildren();
  for (const c of r.checks) {
    const tr = chk.insertRow();
    tr.insertCell().textContent = c.label;
    tr.insertCell().textContent = fmt(c.value) + " " + c.unit;
    tr.insertCell().textContent = fmt(c.limit_value) + " " + c.unit;
    const v = tr.insertCell();
    v.textContent = c.pass ? "meets" : "FAILS";
    v.className = c.pass ? "pass" : "fail";
  }
  $("elevation").innerHTML = a.elevation_svg;
  $("loads").innerHTML = a.loads_svg;
  const dl = $("downloads");
  dl.replaceChildren();
  for (const name of a.files) {
    const b = document.createElement("button");
    b.type = "button";
    b.className = "download";
    b.dataset.file = name;
    b.textContent = "\u2193 " + name;
    b.addEventListener("click", () => downloadFile(name));
    dl.append(b);
  }
}

function saveBlob(blob, name) {
  const url = URL.createObjectURL(blob);
  const a = document.createElement("a");
  a.href = url;
  a.download = name;
  document.body.append(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 10000);
}

async function downloadFile(name) {
  setBusy(1);
  try {
    const r = await fetch("/api/file", { method: "POST", headers: { "Content-Type": "application/json" },
      body: JSON.stringify({ ...briefRequest(), file: name }) });
    if (!r.ok) { showError((await r.json()).error); return; }
    saveBlob(await r.blob(), name);
  } finally {
    setBusy(-1);
  }
}

const COMPARE_COLUMNS = [
  ["loop_height_m", "height m", null],
  ["top_radius_m", "top radius m", "min_radius_m"],
  ["peak_normal_g", "peak g", "max_g"],
  ["top_normal_g", "top g", "min_top_g"],
  ["peak_onset_g_s", "onset g/s", "max_onset_g_s"],
  ["min_radius_m", "min radius m", "min_radius_m"],
  ["exit_speed_m_s", "exit m/s", null],
];

function showCompare(a) {
  const t = $("compare");
  if (a.status !== "ok") {
    t.tHead.replaceChildren();
    t.tBodies[0].replaceChildren();
    $("compare-elevation").replaceChildren();
    return;
  }
  const h = t.tHead.insertRow();
  t.tHead.replaceChildren(h);
  for (const c of ["family", ...COMPARE_COLUMNS.map((c) => c[1]), "verdict"]) {
    const th = document.createElement("th");
    th.textContent = c;
    h.append(th);
  }
  const body = t.tBodies[0];
  body.replaceChildren();
  for (const e of a.entries) {
    const tr = body.insertRow();
    tr.id = "cmp-" + e.shape;
    const name = tr.insertCell();
    const sw = document.createElement("span");
    sw.className = "swatch";
    sw.style.background = e.colour;
    name.append(sw, e.shape);
    for (const [key, , limit] of COMPARE_COLUMNS) {
      const td = tr.insertCell();
      td.textContent = e.figures ? fmt(e.figures[key], 2) : "\u2013";
      if (limit && e.fails.includes(limit)) {
        td.className = "fail";
        td.title = "fails " + limit;
      }
    }
    const v = tr.insertCell();
    v.textContent = e.feasible ? "meets the brief" : (e.figures ? "fails (" + e.sized + ")" : "no loop");
    v.className = e.feasible ? "pass" : "fail";
    if (e.reason) v.title = e.reason;
  }
  $("compare-elevation").innerHTML = a.elevation_svg;
}

async function fillFromFile() {
  const a = await post("/api/brief", { brief_toml: $("brief-toml").value, fields: {} });
  if (a.status !== "ok") {
    showError(a.error);
    return false;
  }
  for (const [flag] of FIELDS) $("f-" + flag).value = a.file_fields[flag] || "";
  $("brief-title").textContent = a.title || "";
  return true;
}

async function loadDemo() {
  const r = await fetch("/api/demo");
  const j = await r.json();
  $("brief-toml").value = j.brief_toml;
  if (await fillFromFile()) update();
}

async function downloadBrief() {
  const a = await post("/api/brief", briefRequest());
  if (a.status !== "ok") { showError(a.error); return; }
  saveBlob(new Blob([a.toml], { type: "application/toml" }), (($("f-name").value || "brief") + ".toml"));
}

let sweepTimer = null;
async function startSweep(ev) {
  ev.preventDefault();
  const a = await post("/api/sweep", { ...briefRequest(), entry_speed: $("sw-entry-speed").value,
    max_g: $("sw-max-g").value, min_top_g: $("sw-min-top-g").value, shapes: $("sw-shapes").value });
  if (a.status !== "started") { $("sweep-status").textContent = a.error; return; }
  $("sweep-files").replaceChildren();
  $("sweep-picture").replaceChildren();
  $("sweep-progress").hidden = false;
  $("sweep-progress").max = a.total;
  clearInterval(sweepTimer);
  sweepTimer = setInterval(pollSweep, 300);
}

async function pollSweep() {
  const s = await (await fetch("/api/sweep/status")).json();
  $("sweep-progress").value = s.done;
  $("sweep-status").textContent = s.done + " / " + s.total + " designs" + (s.status === "running" ? "" : ", " + s.status);
  if (s.status === "running") return;
  clearInterval(sweepTimer);
  if (s.status !== "finished") { $("sweep-status").textContent += ": " + s.error; return; }
  $("sweep-picture").innerHTML = s.svg;
  for (const name of s.files) {
    const l = document.createElement("a");
    l.className = "button";
    l.href = "/api/sweep/file?name=" + encodeURIComponent(name);
    l.download = name;
    l.textContent = "\u2193 " + name;
    $("sweep-files").append(l);
  }
}

buildFields();
$("demo").addEventListener("click", loadDemo);
$("download-brief").addEventListener("click", downloadBrief);
$("brief-toml").addEventListener("change", async () => { if (await fillFromFile()) update(); });
$("load-file").addEventListener("change", async (ev) => {
  const f = ev.target.files[0];
  if (!f) return;
  if (f.size > 65536) { showError(f.name + " is " + f.size + " bytes; a brief is a small TOML file"); return; }
  $("brief-toml").value = await f.text();
  ev.target.value = "";
  if (await fillFromFile()) update();
});
$("sweep").addEventListener("submit", startSweep);
loadDemo();
