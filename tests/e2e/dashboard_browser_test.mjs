// Focus: the dashboard in headless Chromium against a live daemon on the synthetic demo rig:
// loads cleanly, opens the spectrogram filled with the daemon's recent history, draws the
// spectrum, shows the bearing alarm and acknowledges it with the token.
// On a second tab, with answers replaced through the driver's request routing: the spectrogram's
// waiting state (spectrum answers 503), the raw-clip links in the alarm log (plain link without
// a token, bearer header with one, nothing for an event without a clip or with a bad link), and
// the connection banner while every API request fails and after they work again. Last, the
// banner after the daemon really stops.
//
// Usage: node dashboard_browser_test.mjs <tonewarden binary> <demo.toml> [screenshot dir]
// Exits 0 when every check passes, 1 on a failure, 77 (ctest skip) when Chromium is missing.
// Loopback only: the daemon listens on 127.0.0.1 and the browser runs with networking extras off.
import { spawn } from "node:child_process";
import { createRequire } from "node:module";
import fs from "node:fs";
import net from "node:net";
import os from "node:os";
import path from "node:path";
import { fileURLToPath } from "node:url";

const kChromium = "/usr/bin/chromium";
const kAlarmId = "bay4-pump.motor-de-bpfo";  // rule "motor-de-bpfo" on rig "bay4-pump" in demo.toml
const kAlarmWaitMs = 120_000;                // the demo raises it about 35 s after start
const kSkip = 77;

const [binary, demoConfig, shotArg] = process.argv.slice(2);
if (!binary || !demoConfig) {
  console.error("usage: dashboard_browser_test.mjs <tonewarden binary> <demo.toml> [screenshot dir]");
  process.exit(2);
}
if (!fs.existsSync(kChromium)) {
  console.log(`dashboard: skipped, ${kChromium} is not installed (deploy/setup.sh installs it)`);
  process.exit(kSkip);
}
const shotDir = shotArg || process.env.TW_SCREENSHOT_DIR || path.join(os.tmpdir(), "tw-dashboard-shots");
fs.mkdirSync(shotDir, { recursive: true });

// playwright-core is a devDependency of the dashboard: resolve it from web/node_modules.
const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..", "..");
const { chromium } = createRequire(path.join(repoRoot, "web", "package.json"))("playwright-core");

const sleep = (ms) => new Promise((r) => setTimeout(r, ms));
const started = Date.now();
const elapsed = () => ((Date.now() - started) / 1000).toFixed(1) + " s";

async function pollUntil(what, timeoutMs, fn, intervalMs = 250) {
  const deadline = Date.now() + timeoutMs;
  let last;
  while (Date.now() < deadline) {
    try {
      const v = await fn();
      if (v) return v;
    } catch (e) { last = e; }
    await sleep(intervalMs);
  }
  throw new Error(`timed out after ${timeoutMs / 1000} s waiting for ${what}` + (last ? ` (last error: ${last.message})` : ""));
}

function freePort() {
  return new Promise((resolve, reject) => {
    const srv = net.createServer();
    srv.once("error", reject);
    srv.listen(0, "127.0.0.1", () => {
      const { port } = srv.address();
      srv.close(() => resolve(port));
    });
  });
}

// Waits until fn() is true, for up to ms; returns whether it became true (no throw).
async function becomes(ms, fn) {
  try { await pollUntil("condition", ms, fn, 200); return true; } catch (e) { return false; }
}

// Fake alarm-log answer: one activation with a clip, one acknowledgement without, one with a
// link outside the evidence route (not to be linked). Shapes as GET /api/v1/alarms/events.
const kClipPath = "/api/v1/evidence/bay4-pump/20260101T000000.000Z-motor-de-bpfo.flac";
const kFakeEvents = { events: [
  { id: 9003, t: "2026-01-01T00:02:00.000Z", alarm: "bay4-pump.motor-de-bpfo", rule: "motor-de-bpfo", severity: "warning",
    state: "unacknowledged", value: 0.03, user: "", comment: "", message: "", evidence: "javascript:alert(1)" },
  { id: 9002, t: "2026-01-01T00:01:00.000Z", alarm: "bay4-pump.motor-de-bpfo", rule: "motor-de-bpfo", severity: "warning",
    state: "acknowledged", value: 0.02, user: "test", comment: "seen", message: "", evidence: null },
  { id: 9001, t: "2026-01-01T00:00:00.000Z", alarm: "bay4-pump.motor-de-bpfo", rule: "motor-de-bpfo", severity: "warning",
    state: "unacknowledged", value: 0.02, user: "", comment: "", message: "", evidence: kClipPath },
] };

// The checks that need replaced answers, on their own tab (its failed requests are expected).
async function routedChecks(browser, base, token) {
  const page = await browser.newPage();
  const hidden = (sel) => page.$eval(sel, (e) => e.hidden || getComputedStyle(e).display === "none");
  const text = async (sel) => ((await page.innerText(sel)) || "").replace(/\s+/g, " ").trim();

  // 1. Spectrogram waiting state: no spectrum yet (503 as the daemon sends it), then data.
  const noSpectrum = (r) => r.fulfill({ status: 503, contentType: "application/json", headers: { "Retry-After": "1" },
    body: JSON.stringify({ error: { code: "no_data", message: "no spectrum yet for channel 'motor-de'" } }) });
  // The history route answers as the live one does: both have no data while a rig starts.
  const isSpectrum = (u) => u.pathname === "/api/v1/spectrum" || u.pathname === "/api/v1/spectrogram";
  await page.route(isSpectrum, noSpectrum);
  const isEvents = (u) => u.pathname === "/api/v1/alarms/events" && u.searchParams.get("limit") === "50";
  await page.route(isEvents, (r) => r.fulfill({ status: 200, contentType: "application/json", body: JSON.stringify(kFakeEvents) }));
  await page.goto(base + "/", { waitUntil: "load" });
  // The overlay's detail names the 503 case, so this passes only once that answer was handled.
  const waitingFor503 = async () => !(await hidden("#spectrogram-state")) && !(await hidden("#spectrum-state")) &&
    /waiting for data.*restarting/i.test(await text("#spectrogram-state")) && /waiting for data/i.test(await text("#spectrum-state"));
  const waiting = await becomes(5000, waitingFor503);
  check("spectrogram shows a waiting state without data", waiting, `overlay: "${await text("#spectrogram-state")}"`);
  await page.screenshot({ path: path.join(shotDir, "dashboard-waiting.png"), fullPage: true });
  await page.unroute(isSpectrum, noSpectrum);
  const live = await becomes(8000, async () => (await hidden("#spectrogram-state")) && (await hidden("#spectrum-state")));
  check("the waiting state goes once spectra arrive", live, live ? "both overlays hidden" : `overlay still: "${await text("#spectrogram-state")}"`);
  // A rig restarting answers 503 again: the waiting state returns over an emptied picture.
  await page.route(isSpectrum, noSpectrum);
  const again = await becomes(5000, waitingFor503);
  const emptied = await page.$eval("#spectrogram-state", (e) => !e.classList.contains("over-image"));
  check("the waiting state returns when spectra stop (503 after data)", again && emptied,
    `overlay: "${await text("#spectrogram-state")}"; picture emptied: ${emptied}`);
  await page.unroute(isSpectrum, noSpectrum);

  // 2. Raw-clip links in the alarm log.
  await page.waitForSelector('#log-rows tr[data-event="9001"]', { timeout: 8000 });
  const links = await page.$$eval("#log-rows tr", (rows) => rows.map((r) => ({
    id: r.dataset.event, hrefs: [...r.querySelectorAll("a")].map((a) => a.getAttribute("href")),
    last: r.lastElementChild.textContent.trim() })));
  const by = (id) => links.find((l) => l.id === id) || { hrefs: [], last: "(row missing)" };
  const jsonPath = kClipPath.replace(/\.flac$/, ".json");
  check("evidence links for an event with a clip", by("9001").hrefs.join(" ") === `${kClipPath} ${jsonPath}`,
    `links: ${by("9001").hrefs.join(" ") || "none"}`);
  check("no evidence link for an event without a clip", by("9002").hrefs.length === 0 && by("9002").last === "–",
    `links: ${by("9002").hrefs.length}, cell "${by("9002").last}"`);
  check("no link for an evidence value outside the evidence route", by("9003").hrefs.length === 0 && /not usable/.test(by("9003").last),
    `links: ${by("9003").hrefs.length}, cell "${by("9003").last}"`);
  // A click downloads the clip. Without a token the browser fetches the link itself (a download
  // request passes no page route, and the fake clip does not exist on the daemon, so only its
  // address is checked). With a token the page fetches it with the bearer header and hands the
  // body over as a blob.
  const auth = [];
  const isClip = (u) => u.pathname === kClipPath;
  await page.route(isClip, (r) => {
    auth.push(r.request().headers()["authorization"] || "");
    r.fulfill({ status: 200, contentType: "audio/flac", body: Buffer.from("fLaC test body") });
  });
  const clipLink = `#log-rows tr[data-event="9001"] a[href="${kClipPath}"]`;
  const download = async () => {
    const [d] = await Promise.all([page.waitForEvent("download", { timeout: 8000 }), page.click(clipLink)]);
    return d;
  };
  const name = kClipPath.split("/").pop();
  try {
    const plain = await download();
    check("clip link without a token is a plain download", plain.url() === base + kClipPath && plain.suggestedFilename() === name && auth.length === 0,
      `download of ${plain.url()} as "${plain.suggestedFilename()}"`);
    await page.fill("#token", token);
    const withToken = await download();
    const body = fs.readFileSync(await withToken.path(), "utf8");
    check("clip download carries the bearer token once one is entered",
      auth.length === 1 && auth[0] === "Bearer " + token && withToken.suggestedFilename() === name && body === "fLaC test body",
      `request headers: ${auth.map((a) => a === "Bearer " + token ? "Bearer <token>" : a || "none").join(", ")}; ` +
      `saved "${withToken.suggestedFilename()}", ${body.length} bytes`);
  } catch (e) { check("clip downloads", false, e.message); }

  // 3. Connection lost: every API request refused; then answered again.
  const refuse = (r) => r.abort("connectionrefused");
  const isApi = (u) => u.pathname.startsWith("/api/");
  await page.route(isApi, refuse);
  const lost = await becomes(6000, async () => !(await hidden("#link-banner")));
  const summary = await text("#alarm-summary");
  const dimmed = await page.$eval("body", (b) => b.classList.contains("link-lost"));
  check("connection banner when the API is unreachable", lost && /unknown/.test(summary) && dimmed,
    `banner ${lost ? "shown" : "not shown"}: "${await text("#link-banner")}"; summary "${summary}"; page dimmed: ${dimmed}`);
  await page.screenshot({ path: path.join(shotDir, "dashboard-connection-lost.png"), fullPage: true });
  await page.unroute(isApi, refuse);
  const back = await becomes(6000, async () => (await hidden("#link-banner")) && !/unknown/.test(await text("#alarm-summary")));
  check("connection banner goes on recovery", back, `banner ${back ? "hidden" : "still shown"}; summary "${await text("#alarm-summary")}"`);
  await page.close();
}

// Results: each check records pass/fail; the run goes on after a failure where it still can.
let passed = 0, failed = 0;
function check(name, ok, detail) {
  if (ok) { passed++; console.log(`PASS ${name}${detail ? " — " + detail : ""}`); }
  else { failed++; console.log(`FAIL ${name}${detail ? " — " + detail : ""}`); }
  return ok;
}

const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), "tw-dashboard-"));
let daemon = null, browser = null, profileDir = null;
const daemonLog = [];

function stopDaemon() {
  if (daemon && daemon.exitCode === null && daemon.signalCode === null) {
    daemon.kill("SIGTERM");
  }
}
process.on("exit", () => {
  if (daemon && daemon.exitCode === null && daemon.signalCode === null) daemon.kill("SIGKILL");
});
for (const sig of ["SIGINT", "SIGTERM"]) process.on(sig, () => { stopDaemon(); process.exit(1); });

async function main() {
  const port = await freePort();
  const base = `http://127.0.0.1:${port}`;
  // The demo configuration with only the listen address and data directory changed.
  let toml = fs.readFileSync(demoConfig, "utf8");
  const listenRe = /^listen\s*=.*$/m, dataRe = /^data_dir\s*=.*$/m;
  if (!listenRe.test(toml) || !dataRe.test(toml)) throw new Error(`${demoConfig}: no listen or data_dir line to replace`);
  toml = toml.replace(listenRe, `listen = "127.0.0.1:${port}"`).replace(dataRe, `data_dir = ${JSON.stringify(dataDir)}`);
  const cfgPath = path.join(dataDir, "demo.toml");
  fs.writeFileSync(cfgPath, toml);

  daemon = spawn(binary, ["run", "--config", cfgPath, "--data-dir", dataDir], { stdio: ["ignore", "pipe", "pipe"] });
  for (const s of [daemon.stdout, daemon.stderr]) s.on("data", (d) => daemonLog.push(String(d)));
  daemon.on("exit", (code, sig) => daemonLog.push(`[daemon exited: code ${code}, signal ${sig}]\n`));

  const alive = () => { if (daemon.exitCode !== null || daemon.signalCode !== null) throw new Error("the daemon exited early"); };
  await pollUntil("/healthz", 30_000, async () => { alive(); return (await fetch(base + "/healthz")).ok; });
  const token = await pollUntil("DIR/api-token", 10_000, async () => {
    const t = fs.readFileSync(path.join(dataDir, "api-token"), "utf8").trim();
    return t.length > 0 ? t : null;
  });
  // Wait for the first spectrum through the API so the page's first fetch is not a 503
  // (which the browser would log as a console error even though the page handles it).
  const firstChannel = await pollUntil("the configuration", 10_000, async () => {
    const c = await (await fetch(base + "/api/v1/config")).json();
    return c.channels && c.channels.length ? c.channels[0].id : null;
  });
  await pollUntil("the first spectrum", 60_000, async () => {
    alive();
    return (await fetch(base + "/api/v1/spectrum?channel=" + encodeURIComponent(firstChannel) + "&points=64")).ok;
  });
  // Some spectrogram history before the page opens, so the page must show it at once.
  const kHistoryRows = 8;  // about 5 s of the demo's spectra (one per 0.68 s)
  const historyRows = await pollUntil(`${kHistoryRows} spectrogram rows`, 30_000, async () => {
    alive();
    const r = await fetch(base + "/api/v1/spectrogram?channel=" + encodeURIComponent(firstChannel) + "&points=16");
    const n = r.ok ? (await r.json()).rows.length : 0;
    return n >= kHistoryRows ? n : null;
  });
  console.log(`daemon up on ${base} after ${elapsed()}, ${historyRows} spectrogram rows kept`);

  // A fresh profile each run (a persistent context is how the driver takes --user-data-dir).
  profileDir = fs.mkdtempSync(path.join(os.tmpdir(), "tw-chromium-"));
  browser = await chromium.launchPersistentContext(profileDir, {
    executablePath: kChromium,
    headless: true,
    viewport: { width: 1400, height: 900 },
    args: ["--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
      "--disable-component-update", "--disable-sync", "--no-first-run", "--disable-quic"],
  });
  const page = browser.pages()[0] || await browser.newPage();
  const consoleErrors = [];
  page.on("console", (m) => { if (m.type() === "error") consoleErrors.push(`console: ${m.text()} (${m.location().url || "?"})`); });
  page.on("pageerror", (e) => consoleErrors.push(`page error: ${e.message}`));
  page.on("requestfailed", (r) => {
    // The event stream is aborted when the page closes; anything else failing is an error.
    if (!r.url().endsWith("/api/v1/stream")) consoleErrors.push(`request failed: ${r.url()} ${r.failure()?.errorText}`);
  });

  const historyAnswers = [];
  page.on("response", (r) => { if (new URL(r.url()).pathname === "/api/v1/spectrogram") historyAnswers.push(r.status()); });
  const resp = await page.goto(base + "/", { waitUntil: "load" });
  check("page loads", resp && resp.status() === 200 && (await page.title()) === "tonewarden",
    `HTTP ${resp && resp.status()}, title "${await page.title()}"`);

  // The spectrogram opens with the kept history: its first picture already has at least the
  // rows the daemon held before the page opened (live polling alone adds one per second).
  // Painted rows are 2 px high; a row counts when a pixel differs from the #222 background.
  const paintedRows = () => page.$eval("#spectrogram", (c) => {
    const px = c.getContext("2d").getImageData(0, 0, c.width, c.height).data;
    let rows = 0;
    for (let y = 0; y < c.height; y += 2) {
      for (let x = 0; x < c.width; x += 5) {
        const o = (y * c.width + x) * 4;
        if (px[o] !== 34 || px[o + 1] !== 34 || px[o + 2] !== 34) { rows++; break; }
      }
    }
    return rows;
  });
  let firstPicture = 0;
  try { firstPicture = await pollUntil("a painted spectrogram row", 5000, paintedRows, 50); } catch (e) { /* 0 */ }
  check("spectrogram opens filled with history", firstPicture >= historyRows && historyAnswers[0] === 200,
    `${firstPicture} rows in the first picture, ${historyRows} kept before load; history answers: ${historyAnswers.join(", ") || "none"}`);

  // The spectrum: the peak list fills and the uPlot canvas carries more than one colour.
  let spectrumOk = false, spectrumDetail = "";
  try {
    const peaks = await pollUntil("the peak list", 20_000, async () => {
      const t = (await page.textContent("#peak-list")) || "";
      return /\d+(\.\d+)? Hz/.test(t) ? t : null;
    });
    const colours = await page.evaluate(() => {
      const c = document.querySelector("#spectrum canvas");
      if (!c || !c.width || !c.height) return 0;
      const px = c.getContext("2d").getImageData(0, 0, c.width, c.height).data;
      const seen = new Set();
      for (let i = 0; i < px.length; i += 4 * 7) {
        if (px[i + 3] === 0) continue;  // transparent: the panel background shows through
        seen.add((px[i] << 16) | (px[i + 1] << 8) | px[i + 2]);
        if (seen.size > 50) break;
      }
      return seen.size;
    });
    // A drawn trace with axes, grid and labels gives many distinct colours; an empty plot few.
    spectrumOk = colours >= 3;
    spectrumDetail = `${colours} distinct opaque colours on the canvas; ${peaks.trim().slice(0, 90)}`;
  } catch (e) { spectrumDetail = e.message; }
  check("spectrum shows data", spectrumOk, spectrumDetail);
  await page.screenshot({ path: path.join(shotDir, "dashboard-load.png"), fullPage: true });

  // While the demo works towards its alarm: the checks with replaced answers, on another tab.
  await routedChecks(browser, base, token);
  console.log(`routed checks done after ${elapsed()}`);

  // The bearing alarm: appears with an Acknowledge button, which the token makes work.
  const row = `#alarm-rows tr[data-alarm="${kAlarmId}"]`;
  let acked = false, ackDetail = "";
  try {
    await page.waitForSelector(`${row} button.ack`, { timeout: kAlarmWaitMs });
    const sevText = (await page.textContent(`${row} td:first-child`)) || "";
    console.log(`alarm row up after ${elapsed()}: severity cell "${sevText}"`);
    await page.fill("#token", token);
    await page.click(`${row} button.ack`);
    await pollUntil("the row to read acknowledged", 15_000, async () =>
      ((await page.textContent(`${row} td:nth-child(2)`)) || "").trim() === "acknowledged");
    const api = await pollUntil("the API to report acknowledged", 10_000, async () => {
      const list = (await (await fetch(base + "/api/v1/alarms")).json()).alarms;
      const a = list.find((x) => x.id === kAlarmId);
      return a && a.state === "acknowledged" ? a : null;
    });
    const noAckButton = (await page.$(`${row} button.ack`)) === null;
    acked = noAckButton;
    ackDetail = `row and API read "${api.state}" (severity ${api.severity})` + (noAckButton ? "" : "; the Acknowledge button is still there");
  } catch (e) {
    ackDetail = e.message + "; action message: " + ((await page.textContent("#action-msg").catch(() => "")) || "none");
  }
  check("alarm acknowledged from the dashboard", acked, ackDetail);
  await sleep(500);  // let the charts repaint after the alarm table refresh
  await page.screenshot({ path: path.join(shotDir, "dashboard-acknowledged.png"), fullPage: true });

  check("no console or page errors", consoleErrors.length === 0,
    consoleErrors.length ? consoleErrors.slice(0, 5).join(" | ") : "none");

  // The daemon stops for real: the open page says so instead of showing its last values as live.
  daemon.kill("SIGTERM");
  await Promise.race([new Promise((r) => daemon.once("exit", r)), sleep(10_000)]);
  const banner = await becomes(8000, async () => page.$eval("#link-banner", (e) => !e.hidden));
  check("connection banner after the daemon stops", banner,
    banner ? `"${((await page.textContent("#link-banner")) || "").trim().slice(0, 80)}…"` : "no banner within 8 s");
  await page.screenshot({ path: path.join(shotDir, "dashboard-daemon-stopped.png"), fullPage: true });
  console.log(`screenshots in ${shotDir}`);
}

let code = 0;
try {
  await main();
} catch (e) {
  check("run", false, e.message);
}
if (browser) await browser.close().catch(() => {});
if (profileDir) fs.rmSync(profileDir, { recursive: true, force: true });
stopDaemon();
if (daemon) {
  const exited = daemon.exitCode !== null || daemon.signalCode !== null
    ? true : await Promise.race([new Promise((r) => daemon.once("exit", () => r(true))), sleep(10_000).then(() => false)]);
  if (!exited) { daemon.kill("SIGKILL"); console.log("daemon did not stop within 10 s of SIGTERM; killed"); }
}
if (failed) {
  console.log("--- daemon log (tail) ---\n" + daemonLog.join("").split("\n").slice(-30).join("\n"));
  code = 1;
} else {
  fs.rmSync(dataDir, { recursive: true, force: true });
}
console.log(`dashboard: ${passed} passed, ${failed} failed (${elapsed()})`);
process.exit(code);
