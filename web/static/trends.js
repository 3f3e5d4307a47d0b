// Trends: min/mean/max over a time range (rollups for long ranges), with zoom and pan,
// alarm events and annotations drawn as vertical marks.
"use strict";
// Time ticks in UTC, 24-hour: the time on each, the date under the first and at a new day.
function utcTicks(splits) {
  const withSeconds = splits.length > 1 && (splits[1] - splits[0]) < 60;
  let lastDay = "";
  return splits.map((t) => {
    if (t == null) return "";
    const iso = new Date(t * 1000).toISOString(), day = iso.slice(0, 10);
    const text = iso.slice(11, withSeconds ? 19 : 16) + (day !== lastDay ? "\n" + day : "");
    lastDay = day;
    return text;
  });
}

const trendView = {
  plot: null, spanS: 3600, toMs: null, events: [], notes: [], series: [],
  build(el) {
    const self = this;
    const opts = {
      width: el.clientWidth || 900, height: 260,
      scales: { x: { time: true } },
      tzDate: (ts) => uPlot.tzDate(new Date(ts * 1e3), "Etc/UTC"),  // UTC like the rest of the page
      axes: [{ stroke: "#2b2f33", values: (u, splits) => utcTicks(splits) }, { stroke: "#2b2f33", size: 70 }],
      series: [{ value: (u, t) => t == null ? "--" : fmtTime(new Date(t * 1000).toISOString()) }, { label: "max", stroke: "#8a96a3", width: 1 }, { label: "mean", stroke: "#34495e", width: 1.5 },
        { label: "min", stroke: "#8a96a3", width: 1 }],
      cursor: { drag: { x: true, y: false } },
      hooks: {
        draw: [(u) => self.drawMarks(u)],
        setSelect: [(u) => {
          if (u.select.width < 5) return;
          const a = u.posToVal(u.select.left, "x"), b = u.posToVal(u.select.left + u.select.width, "x");
          self.spanS = Math.max(60, b - a); self.toMs = b * 1000; self.load();
        }],
      },
    };
    this.plot = new uPlot(opts, [[], [], [], []], el);
    new ResizeObserver(() => this.plot.setSize({ width: el.clientWidth, height: 260 })).observe(el);
  },
  async load() {
    const sel = document.getElementById("series");
    const name = sel.value;
    if (!name) return;
    const to = this.toMs ? new Date(this.toMs) : new Date();
    const from = new Date(to.getTime() - this.spanS * 1000);
    const q = "from=" + from.toISOString() + "&to=" + to.toISOString();
    try {
      const [t, ev, notes] = await Promise.all([
        api.get("/api/v1/trends?series=" + encodeURIComponent(name) + "&points=1000&" + q),
        api.get("/api/v1/alarms/events?limit=500&" + q),
        api.get("/api/v1/annotations?limit=500&" + q)]);
      // Columns: t[], mean[], min[], max[] (one entry per bucket).
      const s = t.series[0];
      const xs = s.t.map((iso) => Date.parse(iso) / 1000);
      this.events = ev.events || [];
      this.notes = notes.annotations || [];
      this.plot.setData([xs, s.max, s.mean, s.min]);
      this.plot.setScale("x", { min: from.getTime() / 1000, max: to.getTime() / 1000 });
      document.getElementById("trend-meta").textContent =
 xs.length + " points from " + s.resolution + " data · " + (s.unit || "") + " · drag to zoom";
    } catch (e) {
      document.getElementById("trend-meta").textContent = "trend: " + e.message;
    }
  },
  drawMarks(u) {
    const ctx = u.ctx, dpr = devicePixelRatio || 1;
    ctx.save();
    ctx.font = (11 * dpr) + "px system-ui, sans-serif";
    ctx.textAlign = "left";  // uPlot leaves the context as its last axis label needed it
    ctx.textBaseline = "alphabetic";
    const mark = (tIso, color, dash, label) => {
      const t = Date.parse(tIso) / 1000;
      if (t < u.scales.x.min || t > u.scales.x.max) return;
      const x = u.valToPos(t, "x", true);
      ctx.setLineDash(dash); ctx.strokeStyle = color; ctx.fillStyle = color;
      ctx.beginPath(); ctx.moveTo(x, u.bbox.top); ctx.lineTo(x, u.bbox.top + u.bbox.height); ctx.stroke();
      // Beside the line, on its left when the right would run past the plot.
      const w = ctx.measureText(label).width;
      const right = x + 3 * dpr + w <= u.bbox.left + u.bbox.width;
      ctx.fillText(label, right ? x + 3 * dpr : x - 3 * dpr - w, u.bbox.top + 12 * dpr);
    };
    for (const e of this.events) {
      const crit = e.severity === "critical";
      if (e.state !== "unacknowledged") continue;
      mark(e.t, crit ? "#b3261e" : "#b77900", crit ? [] : [5 * dpr, 3 * dpr], (crit ? "◆ " : "▲ ") + e.rule);
    }
    for (const n of this.notes) mark(n.t, "#4a5560", [2 * dpr, 2 * dpr], "✎ " + n.text.slice(0, 30));
    ctx.restore();
  },
  pan(direction) {
    const to = this.toMs || Date.now();
    this.toMs = Math.min(Date.now(), to + direction * this.spanS * 500);
    this.load();
  },
};
