// Dashboard wiring: configuration, polling and the event stream, alarms, health, notes.
"use strict";
const SEV_SHAPE = { critical: "◆ critical", warning: "▲ warning", none: "–" };
let cfg = null;

async function loadConfig() {
  cfg = await api.get("/api/v1/config");
  const sel = document.getElementById("channel");
  sel.innerHTML = "";
  for (const c of cfg.channels) {
    const o = document.createElement("option");
    o.value = c.id; o.textContent = c.id + " (" + c.unit + ")";
    sel.appendChild(o);
  }
  document.getElementById("rig-summary").textContent =
    cfg.rigs.map((r) => r.id + (r.description ? " — " + r.description : "")).join(" · ");
  const series = await api.get("/api/v1/series");
  const ss = document.getElementById("series");
  ss.innerHTML = "";
  const names = series.series.slice().sort();
  const preferred = names.find((n) => /velocity_rms$/.test(n)) || names[0];
  for (const n of names) {
    const o = document.createElement("option");
    o.value = n; o.textContent = n; o.selected = n === preferred;
    ss.appendChild(o);
  }
}

// The overlay on a chart or canvas that says why it shows nothing live (title null: hide it).
function showState(el, title, detail) {
  el.hidden = !title;
  if (!title) return;
  el.querySelector(".title").textContent = title;
  el.querySelector(".detail").textContent = detail || "";
}

async function refreshSpectrum() {
  const ch = document.getElementById("channel").value;
  if (!ch) return;
  const meta = document.getElementById("spectrum-meta");
  const panel = document.getElementById("spectrum-panel"), state = document.getElementById("spectrum-state");
  try {
    // The spectrogram loads its history, when it needs it, or the rows newer than its last one
    // beside the spectrum. For a channel without history the spectrum joins the spectrogram
    // once the history request is done, if it is newer than its last row.
    const before = spectrogramView.lastT;
    const load = spectrogramView.needHistory || spectrogramView.channel !== ch;
    const rows = load ? spectrogramView.loadHistory(ch) : spectrogramView.follow(ch);
    const s = await api.get("/api/v1/spectrum?channel=" + encodeURIComponent(ch) + "&points=4096")
      .catch(async (e) => { await rows; throw e; });
    spectrumView.update(s);
    await rows;
    if (!spectrogramView.hasHistory) {
      const older = load && spectrogramView.lastT && Date.parse(s.t) < Date.parse(spectrogramView.lastT);
      if (older) spectrogramView.tick(); else spectrogramView.push(s);
    } else if (!load && before && Date.parse(s.t) < Date.parse(before)) {
      spectrogramView.clear("the rig restarted");  // spectrum time went back: a new run
    }
    const stale = spectrogramView.lastT === s.t && Date.now() - spectrogramView.lastNewAt > kSpectrogramStaleMs;
    panel.classList.toggle("stale", stale);
    showState(state, stale ? "Waiting for data" : null, "no new spectrum since " + fmtTime(s.t));
    meta.textContent = (stale ? "not updating since " : "") +
      fmtTime(s.t) + " · bin " + fmtNum(s.bin_hz, 3) + " Hz · resolution " + fmtNum(s.resolution_hz, 3) +
      " Hz · " + s.scaling.replace("_", " ");
    document.getElementById("peak-list").textContent = "peaks: " + (s.peaks || []).slice(0, 6)
      .map((p) => fmtNum(p.frequency_hz, 2) + " Hz " + fmtNum(p.amplitude) + " " + s.unit).join(" · ");
  } catch (e) {
    if (e.status === 0) return;  // the connection banner says it
    panel.classList.add("stale");
    if (e.status === 503) {
      const why = "no spectrum for " + ch + " yet: the rig is starting, restarting or silent";
      meta.textContent = "waiting for the first spectrum…";
      const last = spectrumView.data && spectrumView.data.channel === ch ? spectrumView.data.t : null;
      showState(state, "Waiting for data", why + (last ? "; the trace is from " + fmtTime(last) : ""));
      spectrogramView.waiting(ch, why);
    } else {
      meta.textContent = e.message;
    }
  }
}

function cell(tr, text, cls) {
  const td = document.createElement("td");
  td.textContent = text;
  if (cls) td.className = cls;
  tr.appendChild(td);
  return td;
}

// "rig.rule" with a line break allowed only after the dot, never inside a name.
function alarmName(td, id) {
  const dot = id.indexOf(".");
  const part = (t) => { const sp = document.createElement("span"); sp.className = "nowrap"; sp.textContent = t; td.appendChild(sp); };
  if (dot < 0) { part(id); return td; }
  part(id.slice(0, dot + 1));
  td.appendChild(document.createElement("wbr"));
  part(id.slice(dot + 1));
  return td;
}

// Evidence clips are served only from this path, by plain names; anything else is not linked.
const kEvidencePath = /^\/api\/v1\/evidence\/[A-Za-z0-9_-][A-Za-z0-9._-]*\/[A-Za-z0-9_-][A-Za-z0-9._-]*\.flac$/;

// A download link to a file under /api/v1. A plain link when no token is set (loopback reads
// need none); with a token the file is fetched with it, since a link cannot carry the header.
function downloadLink(path, text, title) {
  const a = document.createElement("a");
  a.href = path; a.textContent = text; a.title = title;
  a.download = path.slice(path.lastIndexOf("/") + 1);
  a.onclick = async (ev) => {
    takeToken();
    if (!api.token()) return;
    ev.preventDefault();
    try {
      const url = URL.createObjectURL(await api.blob(path));
      const tmp = document.createElement("a");
      tmp.href = url; tmp.download = a.download;
      document.body.appendChild(tmp); tmp.click(); tmp.remove();
      setTimeout(() => URL.revokeObjectURL(url), 60000);
    } catch (e) {
      document.getElementById("log-meta").textContent = "· " + a.download + ": " + e.message;
    }
  };
  return a;
}

function evidenceCell(td, evidence) {
  if (evidence === null || evidence === undefined || evidence === "") { td.textContent = "–"; return; }
  if (typeof evidence !== "string" || !kEvidencePath.test(evidence)) {
    td.textContent = "(link not usable)"; td.title = String(evidence); return;
  }
  td.classList.add("evidence");
  td.appendChild(downloadLink(evidence, "⤓ FLAC", "raw clip around this activation (24-bit FLAC)"));
  td.appendChild(document.createTextNode(" "));
  td.appendChild(downloadLink(evidence.replace(/\.flac$/, ".json"), "info",
    "what the clip holds: rig, rules, start, seconds before and after, channels, and an analyze command line"));
}

let shownLog = null;
async function refreshLog() {
  let events;
  try { events = (await api.get("/api/v1/alarms/events?limit=50")).events || []; } catch (e) { return; }
  const key = JSON.stringify(events);
  if (key === shownLog) return;  // unchanged: keep the rows (and a click in progress) as they are
  shownLog = key;
  const body = document.getElementById("log-rows");
  body.innerHTML = "";
  for (const e of events) {
    const tr = document.createElement("tr");
    tr.dataset.event = String(e.id);
    cell(tr, fmtTime(e.t), "nowrap");
    cell(tr, SEV_SHAPE[e.severity] || e.severity, "nowrap sev-" + e.severity);
    alarmName(cell(tr, ""), e.alarm).title = e.message || "";
    cell(tr, (e.state || "").replace(/_/g, " "));
    cell(tr, fmtNum(e.value));
    cell(tr, e.user ? e.user + (e.comment ? ": " + e.comment : "") : "–").title = e.comment || "";
    evidenceCell(cell(tr, ""), e.evidence);
    body.appendChild(tr);
  }
  if (!events.length) {
    const tr = document.createElement("tr");
    cell(tr, "no alarm changes in the last 24 h", "meta").colSpan = 7;
    body.appendChild(tr);
  }
}

function takeToken() {
  const tok = document.getElementById("token").value.trim();
  if (tok) api.setToken(tok);
}

async function refreshAlarms() {
  let list;
  try { list = (await api.get("/api/v1/alarms")).alarms; } catch (e) { return; }
  const body = document.getElementById("alarm-rows");
  body.innerHTML = "";
  // Abnormal first: unacknowledged, then acknowledged, returned, shelved; normal ones last.
  const order = { unacknowledged: 0, acknowledged: 1, returned_unacknowledged: 2, shelved: 3, normal: 4 };
  list.sort((a, b) => (order[a.state] - order[b.state]) || a.id.localeCompare(b.id));
  let active = 0, unack = 0, worst = "none";
  for (const a of list) {
    if (a.state !== "normal") active++;
    if (a.state === "unacknowledged" || a.state === "returned_unacknowledged") unack++;
    if (a.state !== "normal" && a.state !== "shelved" && a.severity === "critical") worst = "critical";
    else if (a.state !== "normal" && a.state !== "shelved" && a.severity === "warning" && worst !== "critical") worst = "warning";
    if (a.state === "normal" && list.length > 12) continue;  // keep the list short
    const tr = document.createElement("tr");
    tr.dataset.alarm = a.id;
    cell(tr, SEV_SHAPE[a.severity] || a.severity, "nowrap sev-" + a.severity);
    cell(tr, a.state.replace(/_/g, " "), "state-" + a.state);
    alarmName(cell(tr, "", a.message ? "held" : ""), a.id).title = a.message || a.series;
    cell(tr, fmtNum(a.value));
    cell(tr, fmtShortTime(a.since), "nowrap").title = fmtTime(a.since);
    const td = cell(tr, "", "actions");
    if (a.state === "unacknowledged" || a.state === "returned_unacknowledged") {
      const b = document.createElement("button");
      b.textContent = "Acknowledge"; b.className = "ack";
      b.onclick = () => act(a.id, "acknowledge", { user: "dashboard", comment: "acknowledged on the dashboard" });
      td.appendChild(b);
    }
    if (a.state !== "shelved" && a.state !== "normal") {
      const b = document.createElement("button");
      b.textContent = "Shelve 1 h"; b.className = "shelve";
      b.onclick = () => act(a.id, "shelve", { user: "dashboard", duration_s: 3600, comment: "shelved on the dashboard" });
      td.appendChild(b);
    }
    body.appendChild(tr);
  }
  document.getElementById("alarm-count").textContent = active + " active, " + unack + " unacknowledged";
  const sum = document.getElementById("alarm-summary");
  sum.textContent = worst === "none" ? "no active alarms" : SEV_SHAPE[worst] + " · " + active + " active";
  sum.className = "summary sev-" + worst;
}

async function act(id, verb, body) {
  const msg = document.getElementById("action-msg");
  takeToken();
  try {
    await api.post("/api/v1/alarms/" + encodeURIComponent(id) + "/" + verb, body);
    msg.textContent = verb + " sent for " + id;
    setTimeout(() => { refreshAlarms(); refreshLog(); }, 400);
  } catch (e) {
    msg.textContent = e.status === 401 ? "the API token is missing or wrong (see the daemon's start-up log)" : e.message;
  }
}

async function refreshHealth() {
  let st, rd = [];
  try { st = await api.get("/api/v1/status"); } catch (e) { return; }
  try { rd = (await api.get("/api/v1/readings")).readings; } catch (e) { /* readings not ready yet */ }
  // Both answers are in before the table changes, so it never shows half its rows.
  const body = document.getElementById("health-rows");
  body.innerHTML = "";
  const row = (k, v, bad) => { const tr = document.createElement("tr"); cell(tr, k); cell(tr, v, bad ? "bad" : ""); body.appendChild(tr); };
  for (const s of st.sources) {
    row(s.name + " source", s.state + (s.detail ? " — " + s.detail : ""), s.state === "lost");
    row(s.name + " frames analysed", String(s.frames));
    row(s.name + " overflows / gaps", s.overflows + " / " + s.drops, s.overflows > 0);
  }
  for (const r of rd) {
    if (r.metric === "clipped_samples") row(r.channel + " clipped samples", fmtNum(r.value, 0), r.value > 0);
    if (r.metric === "rms") row(r.channel + " RMS", fmtNum(r.value) + " " + r.unit);
    if (r.metric === "velocity_rms") row(r.channel + " velocity RMS", fmtNum(r.value, 2) + " " + r.unit);
    if (r.metric === "speed_rpm") row("speed", fmtNum(r.value, 1) + " rpm");
  }
  row("storage", st.storage.state + (st.storage.detail ? " — " + st.storage.detail : ""), st.storage.state !== "ok");
}

let stream = null;
function startStream() {
  if (stream && stream.readyState !== EventSource.CLOSED) return;
  stream = new EventSource("/api/v1/stream");
  stream.addEventListener("alarm", () => { refreshAlarms(); refreshLog(); });
  // On errors the browser reconnects by itself; a closed stream is reopened when the link is up.
}

// Connection banner: shown while the daemon does not answer; everything below it is dimmed
// and the alarm summary says the state is unknown, since the page cannot see changes.
function showLink() {
  const banner = document.getElementById("link-banner");
  banner.hidden = link.up;
  document.body.classList.toggle("link-lost", !link.up);
  if (link.up) return;
  const ago = Math.round((Date.now() - link.lostAt.getTime()) / 1000);
  document.getElementById("link-detail").textContent = "since " + fmtTime(link.lostAt.toISOString()) +
    " (" + ago + " s) · retrying every second · the values below are from before then and are not live";
  const sum = document.getElementById("alarm-summary");
  sum.textContent = "alarm state unknown (no connection)";
  sum.className = "summary sev-unknown";
}
link.onChange((up) => {
  showLink();
  if (up) spectrogramView.needHistory = true;  // refill the rows missed while cut off
  if (up) refreshAll();
});

async function refreshAll() {
  if (!cfg) {
    try { await loadConfig(); } catch (e) { document.getElementById("rig-summary").textContent = "cannot read the configuration: " + e.message; }
  }
  refreshSpectrum(); refreshAlarms(); refreshLog(); refreshHealth(); trendView.load();
  startStream();
}

// Runs fn now and then ms after each run ends, so that slow answers never pile up.
function every(ms, fn) {
  const run = async () => { try { await fn(); } finally { setTimeout(run, ms); } };
  setTimeout(run, ms);
}

async function main() {
  spectrumView.build(document.getElementById("spectrum"));
  spectrogramView.init(document.getElementById("spectrogram"), document.getElementById("spectrogram-state"));
  trendView.build(document.getElementById("trend"));
  document.getElementById("token").value = api.token();
  document.getElementById("log-x").onchange = (e) => { spectrumView.logX = e.target.checked; spectrumView.build(document.getElementById("spectrum")); refreshSpectrum(); };
  document.getElementById("log-y").onchange = (e) => { spectrumView.logY = e.target.checked; spectrumView.build(document.getElementById("spectrum")); refreshSpectrum(); };
  document.getElementById("channel").onchange = () => refreshSpectrum();
  document.getElementById("series").onchange = () => { trendView.toMs = null; trendView.load(); };
  for (const b of document.querySelectorAll("[data-span]")) {
    b.onclick = () => { trendView.spanS = Number(b.dataset.span); trendView.toMs = null; trendView.load(); };
  }
  document.getElementById("pan-left").onclick = () => trendView.pan(-1);
  document.getElementById("pan-right").onclick = () => trendView.pan(1);
  document.getElementById("note-add").onclick = async () => {
    const text = document.getElementById("note-text").value.trim();
    takeToken();
    if (!text) return;
    try {
      await api.post("/api/v1/annotations", { text, user: "dashboard", rig: cfg && cfg.rigs[0] ? cfg.rigs[0].id : "" });
      document.getElementById("note-text").value = "";
      trendView.load();
    } catch (e) { document.getElementById("trend-meta").textContent = "note: " + e.message; }
  };
  setInterval(() => {
    document.getElementById("clock").textContent = new Date().toISOString().slice(0, 19) + "Z";
    showLink();
  }, 1000);
  await refreshAll();
  every(1000, async () => { await refreshSpectrum(); spectrogramView.tick(); });
  every(3000, refreshAlarms);
  every(5000, refreshLog);
  every(3000, refreshHealth);
  every(15000, () => { if (!trendView.toMs) return trendView.load(); });
}
main();
