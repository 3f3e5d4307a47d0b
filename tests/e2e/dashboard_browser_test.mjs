// Focus: the dashboard in headless Chromium against a live daemon on the synthetic demo rig:
// loads cleanly, draws the spectrum, shows the bearing alarm and acknowledges it with the token.
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
  console.log(`daemon up on ${base} after ${elapsed()}`);

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

  const resp = await page.goto(base + "/", { waitUntil: "load" });
  check("page loads", resp && resp.status() === 200 && (await page.title()) === "tonewarden",
    `HTTP ${resp && resp.status()}, title "${await page.title()}"`);

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
