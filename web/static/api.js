// Thin client for /api/v1: JSON in and out, the bearer token for changes, readable errors.
"use strict";
const api = {
  token() { return sessionStorage.getItem("tw-token") || ""; },
  setToken(t) { sessionStorage.setItem("tw-token", t); },
  async get(path) {
    const headers = {};
    if (api.token()) headers["Authorization"] = "Bearer " + api.token();
    const res = await fetch(path, { headers });
    if (!res.ok) throw await api.error(res);
    return res.json();
  },
  async post(path, body) {
    const headers = { "Content-Type": "application/json" };
    if (api.token()) headers["Authorization"] = "Bearer " + api.token();
    const res = await fetch(path, { method: "POST", headers, body: JSON.stringify(body || {}) });
    if (!res.ok) throw await api.error(res);
    return res.status === 204 ? {} : res.json();
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
