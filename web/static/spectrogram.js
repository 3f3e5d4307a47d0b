// Spectrogram: one row per live spectrum, newest at the top, level in dB on viridis.
"use strict";
const spectrogramView = {
  canvas: null, ctx: null, rows: 0, dbLo: -120, dbHi: 0, channel: "",
  init(canvas) { this.canvas = canvas; this.ctx = canvas.getContext("2d"); this.clear(); },
  clear() {
    this.ctx.fillStyle = "#222";
    this.ctx.fillRect(0, 0, this.canvas.width, this.canvas.height);
    this.rows = 0;
  },
  push(s) {
    if (s.channel !== this.channel) { this.channel = s.channel; this.clear(); }
    const w = this.canvas.width, h = this.canvas.height, rowH = 2;
    // Scroll down by one row, then paint the new row at the top.
    this.ctx.drawImage(this.canvas, 0, 0, w, h - rowH, 0, rowH, w, h - rowH);
    const mags = s.magnitude, n = mags.length;
    let peak = -400;
    const dbs = new Float32Array(n);
    for (let i = 0; i < n; i++) {
      dbs[i] = mags[i] > 0 ? 20 * Math.log10(mags[i]) : -400;
      if (dbs[i] > peak) peak = dbs[i];
    }
    // The colour range follows the loudest row seen, with 80 dB of range below it.
    this.dbHi = this.rows === 0 ? peak : Math.max(peak, this.dbHi - 0.2);
    this.dbLo = this.dbHi - 80;
    const img = this.ctx.createImageData(w, rowH);
    for (let x = 0; x < w; x++) {
      const i = Math.min(n - 1, Math.floor(x * n / w));
      const [r, g, b] = viridis((dbs[i] - this.dbLo) / (this.dbHi - this.dbLo));
      for (let y = 0; y < rowH; y++) {
        const o = (y * w + x) * 4;
        img.data[o] = r; img.data[o + 1] = g; img.data[o + 2] = b; img.data[o + 3] = 255;
      }
    }
    this.ctx.putImageData(img, 0, 0);
    this.rows++;
    const fmax = s.frequency_hz.length ? s.frequency_hz[s.frequency_hz.length - 1] : 0;
    document.getElementById("spectrogram-range").textContent =
      "0 – " + fmtNum(fmax, 0) + " Hz · " + fmtNum(this.dbLo, 0) + " to " + fmtNum(this.dbHi, 0) + " dB re 1 " + s.unit;
  },
};
