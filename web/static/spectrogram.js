// Spectrogram: one row per new live spectrum, newest at the top, level in dB on viridis. It
// opens filled with the daemon's recent history of the channel (GET /api/v1/spectrogram) and
// then follows that history (?since= the newest row shown), so every spectrum gets a row and
// live rows are max-pooled to the same points as the history.
// While no spectrum has arrived (start-up, a rig restart, another channel) the canvas says so
// instead of staying black; when spectra stop coming, the last rows are dimmed and labelled.
"use strict";
const kSpectrogramStaleMs = 5000;  // no new spectrum for this long: the picture is not live

const kSpectrogramRowH = 2;  // pixels per spectrum row
const kSpectrogramPoints = 1024;  // points per row asked of the daemon, history and live alike

const spectrogramView = {
  canvas: null, ctx: null, state: null, rows: 0, dbLo: -120, dbHi: 0, channel: "",
  lastT: null, lastNewAt: 0, needHistory: true, loading: null,
  hasHistory: false,  // the last answer of the spectrogram route had rows for the channel
  init(canvas, stateEl) {
    this.canvas = canvas; this.ctx = canvas.getContext("2d"); this.state = stateEl;
    this.clear("waiting for the first spectrum…");
  },
  // An empty picture; the next poll fills it again from the daemon's history.
  clear(why) {
    this.reset();
    this.needHistory = true;
    document.getElementById("spectrogram-range").textContent = "";
    this.show("Waiting for data", why);
  },
  reset() {
    this.ctx.fillStyle = "#222";
    this.ctx.fillRect(0, 0, this.canvas.width, this.canvas.height);
    this.rows = 0;
    this.lastT = null;
  },
  // The overlay: a title and a detail line, or nothing when the picture is live.
  show(title, detail) {
    this.state.classList.toggle("over-image", this.rows > 0);
    showState(this.state, title, detail);
  },
  // No spectrum for the channel (HTTP 503): a restarting or silent rig.
  waiting(channel, why) {
    if (this.rows > 0 || channel !== this.channel) { this.channel = channel; this.clear(why); }
    else this.show("Waiting for data", why);
  },
  // Called on every poll: marks the picture stale once spectra stop coming.
  tick() {
    if (this.rows > 0 && Date.now() - this.lastNewAt > kSpectrogramStaleMs)
      this.show("Waiting for data", "no new spectrum since " + fmtTime(this.lastT) + "; the rows below are older");
  },
  // Fills the picture with the channel's recent spectra kept by the daemon (as many rows as
  // the canvas shows), replacing what it showed: at page load, after a channel change, a
  // rig restart or a lost connection. Live rows then continue on top. One load at a time.
  loadHistory(channel) {
    if (!this.loading) this.loading = this.fetchHistory(channel).finally(() => { this.loading = null; });
    return this.loading;
  },
  // Appends the rows the daemon kept after the newest one shown; shares the one request in
  // flight with loadHistory. Without an answer with rows (hasHistory false) the caller adds
  // the spectrum it polled instead.
  follow(channel) {
    if (!this.loading) this.loading = this.fetchNewer(channel).finally(() => { this.loading = null; });
    return this.loading;
  },
  historyUrl(channel) {
    const shown = Math.floor(this.canvas.height / kSpectrogramRowH);
    return "/api/v1/spectrogram?channel=" + encodeURIComponent(channel) + "&rows=" + shown + "&points=" + kSpectrogramPoints;
  },
  async fetchHistory(channel) {
    let h;
    try {
      h = await api.get(this.historyUrl(channel));
    } catch (e) {
      // 503: no spectrum yet, the spectrum poll says so and the next one asks again; no
      // answer: the connection bar says so. Anything else: go on with live rows alone.
      if (e.status !== 503 && e.status !== 0) this.needHistory = false;
      if (e.status !== 0) this.hasHistory = false;
      return;
    }
    this.reset();
    this.channel = channel;
    this.needHistory = false;
    this.hasHistory = true;
    const n = h.rows.length;
    if (!n) return;
    // All rows in one image, newest at the top; colours as if they had come one by one.
    const img = this.ctx.createImageData(this.canvas.width, n * kSpectrogramRowH);
    h.rows.forEach((row, k) => {
      this.paintRowInto(img, (n - 1 - k) * kSpectrogramRowH, row.db.map((v) => (v === null ? -400 : v)));
    });
    this.ctx.putImageData(img, 0, 0);
    this.lastT = h.rows[n - 1].t;
    this.lastNewAt = Date.now();
    this.label(h.max_frequency_hz, h.unit);
    this.show(null);
  },
  async fetchNewer(channel) {
    if (!this.lastT) { this.hasHistory = false; return; }
    let h;
    try {
      h = await api.get(this.historyUrl(channel) + "&since=" + encodeURIComponent(this.lastT));
    } catch (e) {
      if (e.status !== 0) this.hasHistory = false;
      return;
    }
    this.hasHistory = true;
    const last = Date.parse(this.lastT);
    const rows = h.rows.filter((row) => Date.parse(row.t) > last);
    if (!rows.length) { this.tick(); return; }
    this.paintRows(rows.map((row) => row.db.map((v) => (v === null ? -400 : v))));
    this.lastT = rows[rows.length - 1].t;
    this.lastNewAt = Date.now();
    this.show(null);
    this.label(h.max_frequency_hz, h.unit);
  },
  // A row from a polled spectrum, for a channel the daemon keeps no history of.
  push(s) {
    if (s.channel !== this.channel) { this.channel = s.channel; this.clear("waiting for the first spectrum…"); }
    if (s.t === this.lastT) { this.tick(); return; }  // the same spectrum polled again
    if (this.lastT && Date.parse(s.t) < Date.parse(this.lastT)) this.clear("the rig restarted");
    this.lastT = s.t;
    this.lastNewAt = Date.now();
    const mags = s.magnitude, n = mags.length;
    const dbs = new Float32Array(n);
    for (let i = 0; i < n; i++) dbs[i] = mags[i] > 0 ? 20 * Math.log10(mags[i]) : -400;
    this.paintRows([dbs]);
    this.show(null);
    this.label(s.frequency_hz.length ? s.frequency_hz[s.frequency_hz.length - 1] : 0, s.unit);
  },
  // Scrolls the picture down once by the rows in `list` (oldest first, each an array of dB)
  // and paints them across the top, newest at the top.
  paintRows(list) {
    const w = this.canvas.width, h = this.canvas.height, rowH = kSpectrogramRowH;
    const n = Math.min(list.length, Math.floor(h / rowH)), dy = n * rowH;
    if (dy < h) this.ctx.drawImage(this.canvas, 0, 0, w, h - dy, 0, dy, w, h - dy);
    const img = this.ctx.createImageData(w, dy);
    list.slice(list.length - n).forEach((dbs, k) => this.paintRowInto(img, (n - 1 - k) * rowH, dbs));
    this.ctx.putImageData(img, 0, 0);
  },
  // Writes one row of `dbs` (dB re 1 unit, low to high frequency) into `img` at pixel row y,
  // after moving the colour range: it follows the loudest row seen, with 80 dB below it.
  paintRowInto(img, y0, dbs) {
    const w = img.width, n = dbs.length;
    let peak = -400;
    for (let i = 0; i < n; i++) if (dbs[i] > peak) peak = dbs[i];
    this.dbHi = this.rows === 0 ? peak : Math.max(peak, this.dbHi - 0.2);
    this.dbLo = this.dbHi - 80;
    for (let x = 0; x < w; x++) {
      const i = Math.min(n - 1, Math.floor(x * n / w));
      const [r, g, b] = viridis((dbs[i] - this.dbLo) / (this.dbHi - this.dbLo));
      for (let y = y0; y < y0 + kSpectrogramRowH; y++) {
        const o = (y * w + x) * 4;
        img.data[o] = r; img.data[o + 1] = g; img.data[o + 2] = b; img.data[o + 3] = 255;
      }
    }
    this.rows++;
  },
  label(fmax, unit) {
    document.getElementById("spectrogram-range").textContent =
      "0 – " + fmtNum(fmax, 0) + " Hz · " + fmtNum(this.dbLo, 0) + " to " + fmtNum(this.dbHi, 0) + " dB re 1 " + unit;
  },
};
