// Thin client for /api/v1: JSON in and out, the bearer token, readable errors, and the link
// state (is the daemon reachable?) that every request reports to.
"use strict";
const kRequestTimeoutMs = 8000;  // a dropped network answers nothing: give up after this

// Link state: "lost" after a request that got no answer (refused, reset, timed out, or a
// gateway's 502/504); "up" again on the next answer of any kind from the daemon.
const link = {
  up: true, lostAt: null, listeners: [],
  onChange(fn) { this.listeners.push(fn); },
  report(up) {
    if (up === this.up) return;
    this.up = up;
    this.lostAt = up ? null : new Date();
    for (const fn of this.listeners) fn(up);
  },
};

const api = {
  token() { return sessionStorage.getItem("tw-token") || ""; },
  setToken(t) { sessionStorage.setItem("tw-token", t); },
  headers(extra) {
    const h = Object.assign({}, extra);
    if (api.token()) h["Authorization"] = "Bearer " + api.token();
    return h;
  },
  // fetch with a timeout; a failure to get any answer marks the link lost.
  async send(path, init) {
    let res;
    try {
      res = await fetch(path, Object.assign({ signal: AbortSignal.timeout(kRequestTimeoutMs) }, init));
    } catch (e) {
      link.report(false);
      const err = new Error("no answer from the daemon (" + (e.name === "TimeoutError" ? "timed out" : "connection failed") + ")");
      err.status = 0;
      throw err;
    }
    link.report(res.status !== 502 && res.status !== 504);
    if (!res.ok) throw await api.error(res);
    return res;
  },
  async get(path) {
    return (await api.send(path, { headers: api.headers() })).json();
  },
  async post(path, body) {
    const res = await api.send(path, { method: "POST", headers: api.headers({ "Content-Type": "application/json" }), body: JSON.stringify(body || {}) });
    return res.status === 204 ? {} : res.json();
  },
  async blob(path) {
    return (await api.send(path, { headers: api.headers() })).blob();
  },
  async error(res) {
    let msg = res.status + " " + res.statusText;
    try { const j = await res.json(); if (j.error) msg = j.error.message || msg; } catch (e) { /* not JSON */ }
    const err = new Error(msg);
    err.status = res.status;
    return err;
  },
};
function fmtTime(iso) {
  if (!iso) return "–";
  const d = new Date(iso);
  return d.toISOString().replace("T", " ").slice(0, 19) + "Z";
}
// Time of day alone when the date is today (UTC), else date and minutes; full form in fmtTime.
function fmtShortTime(iso) {
  if (!iso) return "–";
  const s = new Date(iso).toISOString();
  return s.slice(0, 10) === new Date().toISOString().slice(0, 10) ? s.slice(11, 19) + "Z" : s.slice(0, 10) + " " + s.slice(11, 16) + "Z";
}
function fmtNum(v, digits) {
  if (v === null || v === undefined || !isFinite(v)) return "–";
  const a = Math.abs(v);
  if (a !== 0 && (a < 1e-3 || a >= 1e5)) return v.toExponential(2);
  return v.toFixed(digits === undefined ? 3 : digits);
}
