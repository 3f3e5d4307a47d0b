// Live spectrum: uPlot line with labelled peaks, target markers and threshold lines.
"use strict";
const spectrumView = {
  plot: null, data: null, logX: true, logY: true,
  build(el) {
    if (this.plot) { this.plot.destroy(); this.plot = null; }
    const self = this;
    const opts = {
      width: el.clientWidth || 900, height: 280,
      // The x range follows the data (up to Nyquist), not the next power of ten.
      scales: {
        x: { time: false, distr: this.logX ? 3 : 1, range: (u, min, max) => [min, max] },
        y: { distr: this.logY ? 3 : 1 },
      },
      axes: [{ label: "frequency (Hz)", stroke: "#2b2f33" }, { label: "amplitude", stroke: "#2b2f33", size: 70 }],
      series: [{ label: "Hz" }, { label: "RMS", stroke: "#34495e", width: 1, points: { show: false } }],
      cursor: { drag: { x: true, y: false } },
      legend: { show: true },
      hooks: { draw: [(u) => self.drawOverlays(u)] },
    };
    this.plot = new uPlot(opts, [[1, 2], [1e-9, 1e-9]], el);
    new ResizeObserver(() => this.plot && this.plot.setSize({ width: el.clientWidth, height: 280 })).observe(el);
  },
  update(s) {
    this.data = s;
    const xs = [], ys = [];
    const floor = 1e-9;
    for (let i = 0; i < s.frequency_hz.length; i++) {
      const f = s.frequency_hz[i];
      if (this.logX && f <= 0) continue;
      xs.push(f);
      const m = s.magnitude[i];
      ys.push(this.logY ? Math.max(floor, m === null ? floor : m) : m);
    }
    this.plot.series[1].label = "RMS (" + s.unit + ")";
    this.plot.setData([xs, ys]);
  },
  drawOverlays(u) {
    const s = this.data;
    if (!s) return;
    const ctx = u.ctx;
    const dpr = devicePixelRatio || 1;
    ctx.save();
    ctx.font = (11 * dpr) + "px system-ui, sans-serif";
    const inX = (f) => f >= u.scales.x.min && f <= u.scales.x.max;
    // Target markers: grey dashed verticals, labelled at the top.
    ctx.setLineDash([4 * dpr, 4 * dpr]);
    ctx.strokeStyle = "#6b7b8c";
    ctx.fillStyle = "#4a5560";
    for (const m of s.markers || []) {
      if (!inX(m.frequency_hz)) continue;
      const x = u.valToPos(m.frequency_hz, "x", true);
      ctx.beginPath(); ctx.moveTo(x, u.bbox.top); ctx.lineTo(x, u.bbox.top + u.bbox.height); ctx.stroke();
      ctx.fillText(m.target, x + 3 * dpr, u.bbox.top + 12 * dpr);
    }
    // Threshold lines: warning dashed, critical solid and thicker (shape, not only colour).
    for (const t of s.thresholds || []) {
      if (!(t.level > 0) && this.logY) continue;
      const y = u.valToPos(t.level, "y", true);
      const x0 = u.valToPos(Math.max(t.f_lo_hz, u.scales.x.min), "x", true);
      const x1 = u.valToPos(Math.min(t.f_hi_hz, u.scales.x.max), "x", true);
      if (x1 <= x0) continue;
      const crit = t.severity === "critical";
      ctx.setLineDash(crit ? [] : [6 * dpr, 3 * dpr]);
      ctx.lineWidth = (crit ? 2.5 : 1.5) * dpr;
      ctx.strokeStyle = crit ? "#b3261e" : "#b77900";
      ctx.beginPath(); ctx.moveTo(x0, y); ctx.lineTo(x1, y); ctx.stroke();
      ctx.fillStyle = ctx.strokeStyle;
      ctx.fillText((crit ? "critical " : "warning ") + fmtNum(t.level), x1 + 3 * dpr, y - 3 * dpr);
    }
    // Peaks: a small triangle and the frequency.
    ctx.setLineDash([]);
    ctx.fillStyle = "#2b2f33";
    const placed = [];
    for (const p of (s.peaks || []).slice(0, 8)) {
      if (!inX(p.frequency_hz) || !(p.amplitude > 0 || !this.logY)) continue;
      const x = u.valToPos(p.frequency_hz, "x", true), y = u.valToPos(p.amplitude, "y", true);
      // Keep labels readable: skip one that would overlap a stronger peak's label.
      if (placed.some((q) => Math.abs(q[0] - x) < 60 * dpr && Math.abs(q[1] - y) < 14 * dpr)) continue;
      placed.push([x, y]);
      ctx.beginPath(); ctx.moveTo(x, y - 3 * dpr); ctx.lineTo(x - 4 * dpr, y - 10 * dpr); ctx.lineTo(x + 4 * dpr, y - 10 * dpr); ctx.fill();
      ctx.fillText(p.frequency_hz.toFixed(p.frequency_hz < 100 ? 2 : 1) + " Hz", x + 5 * dpr, y - 10 * dpr);
    }
    ctx.restore();
  },
};
