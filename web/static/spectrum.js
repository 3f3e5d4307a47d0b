// Live spectrum: uPlot line with labelled peaks, target markers and threshold lines.
"use strict";
const kYHeadroom = 2;         // log y: room above the highest bin for the peak labels
const kMaxLogRangeDec = 7;    // log y: decades shown at most below the top
const kMinLogRangeDec = 2;    //        and at least

// Axis ticks on a log scale: every 1..9 multiple of a decade gets a grid line, labels go on
// the decades (and on 2 and 5 when the axis spans less than two decades).
function logSplits(min, max) {
  const out = [];
  if (!(min > 0 && max > min && isFinite(max))) return out;  // e.g. a linear range not yet replaced
  const e0 = Math.max(Math.floor(Math.log10(min)), Math.ceil(Math.log10(max)) - 30);
  for (let e = e0; e <= Math.ceil(Math.log10(max)); e++) {
    for (let m = 1; m <= 9; m++) {
      const v = Number((m * Math.pow(10, e)).toPrecision(3));
      if (v >= min * (1 - 1e-9) && v <= max * (1 + 1e-9)) out.push(v);
    }
  }
  return out;
}
function isLabelledLogTick(v, spanDec) {
  const m = Number((v / Math.pow(10, Math.floor(Math.log10(v) + 1e-9))).toPrecision(3));
  return m === 1 || (spanDec < 2 && (m === 2 || m === 5));
}
const SUPERSCRIPT = { "-": "⁻", 0: "⁰", 1: "¹", 2: "²", 3: "³", 4: "⁴", 5: "⁵", 6: "⁶", 7: "⁷", 8: "⁸", 9: "⁹" };
// Amplitude ticks: plain decimals from 0.001 to 1000; powers of ten when the axis goes beyond.
function amplitudeTick(v, powers) {
  const e = Math.floor(Math.log10(v) + 1e-9);
  const m = Number((v / Math.pow(10, e)).toPrecision(3));
  if (powers) return (m === 1 ? "" : m + "×") + "10" + String(e).split("").map((c) => SUPERSCRIPT[c]).join("");
  return String(Number(v.toPrecision(3)));
}
// The next 1, 2 or 5 times a power of ten at or above v (v > 0): a top that stays put.
function niceCeil(v) {
  const d = Math.pow(10, Math.floor(Math.log10(v)));
  for (const m of [1, 2, 5, 10]) if (m * d >= v * (1 - 1e-9)) return Number((m * d).toPrecision(3));
  return 10 * d;
}
// Frequency ticks: Hz below 1 kHz, then kHz ("2.5k").
function frequencyTick(v) {
  return v >= 1000 ? Number((v / 1000).toPrecision(3)) + "k" : String(Number(v.toPrecision(4)));
}

// Text boxes on the canvas, for placing labels where they overlap nothing already placed.
function boxesOverlap(a, b) { return a.x0 < b.x1 && b.x0 < a.x1 && a.y0 < b.y1 && b.y0 < a.y1; }

const spectrumView = {
  plot: null, data: null, logX: true, logY: true, unit: "", yRange: [1e-6, 1], xRange: [1, 2],
  el: null, observer: null,
  build(el) {
    if (this.plot) { this.plot.destroy(); this.plot = null; }
    // Ranges valid for the new scales until the next spectrum sets them from the data.
    if (this.logY && !(this.yRange[0] > 0)) this.yRange = [1e-6, 1];
    if (this.logX && !(this.xRange[0] > 0)) this.xRange = [1, 2];
    this.el = el;
    const self = this;
    const xAxis = { label: "frequency (Hz)", stroke: "#2b2f33", values: (u, splits) => splits.map((v) => v == null ? "" : frequencyTick(v)) };
    const yAxis = { label: "amplitude" + (this.unit ? " (" + this.unit + ")" : ""), stroke: "#2b2f33", size: 70 };
    if (this.logX) {
      xAxis.splits = (u, i, min, max) => logSplits(min, max);
      xAxis.filter = (u, splits) => splits;
      xAxis.values = (u, splits, i) => {
        const sc = u.scales.x, span = Math.log10(sc.max / sc.min);
        return splits.map((v) => isLabelledLogTick(v, span) ? frequencyTick(v) : "");
      };
    }
    if (this.logY) {
      yAxis.splits = (u, i, min, max) => logSplits(min, max);
      yAxis.filter = (u, splits) => splits;
      yAxis.values = (u, splits) => {
        const sc = u.scales.y, span = Math.log10(sc.max / sc.min);
        const powers = sc.min < 0.99e-3 || sc.max > 1.01e3;
        return splits.map((v) => isLabelledLogTick(v, span) ? amplitudeTick(v, powers) : "");
      };
    }
    const opts = {
      width: el.clientWidth || 900, height: 280,
      // The x range follows the data (up to Nyquist); y is set from the data in update().
      scales: {
        x: { time: false, distr: this.logX ? 3 : 1, range: () => this.xRange },
        y: { distr: this.logY ? 3 : 1, range: () => this.yRange },
      },
      axes: [xAxis, yAxis],
      series: [{ label: "Hz" }, { label: "RMS", stroke: "#34495e", width: 1, points: { show: false } }],
      cursor: { drag: { x: true, y: false } },
      legend: { show: true },
      hooks: { draw: [(u) => self.drawOverlays(u)] },
    };
    this.plot = new uPlot(opts, [[1, 2], [1e-9, 1e-9]], el);
    if (!this.observer) {
      this.observer = new ResizeObserver(() => this.plot && this.plot.setSize({ width: this.el.clientWidth, height: 280 }));
      this.observer.observe(el);
    }
  },
  update(s) {
    this.data = s;
    if (s.unit !== this.unit) { this.unit = s.unit; this.build(this.el); }
    const xs = [], ys = [], positive = [];
    const floor = 1e-12;
    let hi = 0;
    for (let i = 0; i < s.frequency_hz.length; i++) {
      const f = s.frequency_hz[i];
      if (this.logX && f <= 0) continue;
      xs.push(f);
      const m = s.magnitude[i];
      if (m > 0) { positive.push(m); hi = Math.max(hi, m); }
      ys.push(this.logY ? Math.max(floor, m === null ? floor : m) : m);
    }
    if (xs.length > 1) this.xRange = [xs[0], xs[xs.length - 1]];
    if (this.logY && hi > 0) {
      // Top: the decade above the highest bin with headroom; bottom: the decade below the
      // quietest few per cent of bins, within kMinLogRangeDec..kMaxLogRangeDec decades.
      positive.sort((a, b) => a - b);
      const quiet = positive[Math.floor(positive.length * 0.02)];
      const top = niceCeil(hi * kYHeadroom), topDec = Math.log10(top);
      const bottom = Math.min(topDec - kMinLogRangeDec, Math.max(Math.floor(topDec - kMaxLogRangeDec), Math.floor(Math.log10(quiet))));
      this.yRange = [Math.pow(10, bottom), top];
    } else if (!this.logY) {
      this.yRange = [0, hi > 0 ? hi * 1.15 : 1];
    }
    this.plot.series[1].label = "RMS (" + s.unit + ")";
    this.plot.setData([xs, ys]);
  },
  drawOverlays(u) {
    const s = this.data;
    if (!s) return;
    const ctx = u.ctx;
    const dpr = devicePixelRatio || 1;
    const lineH = 12 * dpr, pad = 3 * dpr;
    const area = { x0: u.bbox.left, y0: u.bbox.top, x1: u.bbox.left + u.bbox.width, y1: u.bbox.top + u.bbox.height };
    const placed = [];  // boxes of labels and peak triangles drawn so far
    // Draw text at the first candidate position (left x, baseline y) that stays inside the
    // plot and overlaps nothing placed; returns false when none fits.
    const label = (text, candidates) => {
      const w = ctx.measureText(text).width;
      for (const [x, y] of candidates) {
        const b = { x0: x - 2 * dpr, y0: y - lineH + dpr, x1: x + w + 2 * dpr, y1: y + 3 * dpr };
        if (b.x0 < area.x0 || b.x1 > area.x1 || b.y0 < area.y0 || b.y1 > area.y1) continue;
        if (placed.some((q) => boxesOverlap(q, b))) continue;
        placed.push(b);
        const ink = ctx.fillStyle;  // a pale backing keeps the text readable over the trace
        ctx.fillStyle = "rgba(236, 236, 234, 0.8)";
        ctx.fillRect(x - dpr, y - lineH + 3 * dpr, w + 2 * dpr, lineH);
        ctx.fillStyle = ink;
        ctx.fillText(text, x, y);
        return true;
      }
      return false;
    };
    ctx.save();
    ctx.font = (11 * dpr) + "px system-ui, sans-serif";
    ctx.textAlign = "left";  // uPlot leaves the context as its last axis label needed it
    ctx.textBaseline = "alphabetic";
    const inX = (f) => f >= u.scales.x.min && f <= u.scales.x.max;
    // Peak triangles first (strongest first), so that no label covers one.
    const peaks = (s.peaks || []).filter((p) => inX(p.frequency_hz) && (p.amplitude > 0 || !this.logY) &&
      p.amplitude >= u.scales.y.min && p.amplitude <= u.scales.y.max)
      .sort((a, b) => b.amplitude - a.amplitude).slice(0, 8)
      .map((p) => ({ p, x: u.valToPos(p.frequency_hz, "x", true), y: u.valToPos(p.amplitude, "y", true) }));
    ctx.fillStyle = "#2b2f33";
    for (const { x, y } of peaks) {
      ctx.beginPath(); ctx.moveTo(x, y - 3 * dpr); ctx.lineTo(x - 4 * dpr, y - 10 * dpr); ctx.lineTo(x + 4 * dpr, y - 10 * dpr); ctx.fill();
      placed.push({ x0: x - 4 * dpr, y0: y - 10 * dpr, x1: x + 4 * dpr, y1: y - 3 * dpr });
    }
    // Target markers: grey dashed verticals, labelled along the top (stacked when crowded).
    ctx.setLineDash([4 * dpr, 4 * dpr]);
    ctx.strokeStyle = "#6b7b8c";
    ctx.fillStyle = "#4a5560";
    for (const m of s.markers || []) {
      if (!inX(m.frequency_hz)) continue;
      const x = u.valToPos(m.frequency_hz, "x", true);
      ctx.beginPath(); ctx.moveTo(x, area.y0); ctx.lineTo(x, area.y1); ctx.stroke();
      const w = ctx.measureText(m.target).width;
      const rows = [0, 1, 2].map((r) => area.y0 + lineH + r * lineH);
      label(m.target, rows.map((y) => [x + pad, y]).concat(rows.map((y) => [x - pad - w, y])));
    }
    // Threshold lines: warning dashed, critical solid and thicker (shape, not only colour).
    for (const t of s.thresholds || []) {
      if (!(t.level > 0) && this.logY) continue;
      if (t.level < u.scales.y.min || t.level > u.scales.y.max) continue;
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
      const text = (crit ? "critical " : "warning ") + fmtNum(t.level);
      const w = ctx.measureText(text).width;
      label(text, [[x1 + pad, y - pad], [x1 - w, y - pad], [x1 + pad, y + lineH], [x1 - w, y + lineH]]);
    }
    // Peak labels: beside the triangle, else on the other side, else above it; a peak whose
    // label fits nowhere keeps its triangle (the list under the chart names every peak).
    ctx.setLineDash([]);
    ctx.fillStyle = "#2b2f33";
    const labelledX = [];
    for (const { p, x, y } of peaks) {
      // Peaks a few pixels from a stronger labelled one would get labels nobody could match up.
      if (labelledX.some((lx) => Math.abs(lx - x) < 10 * dpr)) continue;
      const text = p.frequency_hz.toFixed(p.frequency_hz < 100 ? 2 : 1) + " Hz";
      const w = ctx.measureText(text).width;
      const top = y - 10 * dpr;
      if (label(text, [[x + 5 * dpr, top], [x - 5 * dpr - w, top], [x - w / 2, top - pad], [x - w / 2, top - pad - lineH],
        [x + 5 * dpr, y + lineH], [x - 5 * dpr - w, y + lineH]])) labelledX.push(x);
    }
    ctx.restore();
  },
};
