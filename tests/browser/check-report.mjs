// Opens a layflow HTML report in headless Debian chromium, offline, and checks
// what issue 17 asks of it in a real browser: no console error, no page error,
// no request that is not a file: URL and none that fails; the page says it is
// ready; it loads in under 2 s; the replay plays, its frame statistics are
// read, and the time slider moves the clock. Screenshots and result.json are
// written to OUT_DIR; the pictures' content and the frame budget are judged by
// cli/tests/report_browser.rs, which runs this script.
//
//   node tests/browser/check-report.mjs [--fail-fast] PAGE.html OUT_DIR
//
// Exit 0 when every check passed, 1 otherwise (result.json says which), 2 on
// bad arguments. LAYFLOW_CHROMIUM names the browser (default /usr/bin/chromium).

import { chromium } from "playwright-core";
import { mkdirSync, writeFileSync, existsSync } from "node:fs";
import { resolve, join } from "node:path";
import { pathToFileURL } from "node:url";

// The exact CSP meta of the report contract (notes of issue 17): it also
// proves that the page, as written, cannot make a request.
const CSP =
  "default-src 'none'; script-src 'unsafe-inline'; style-src 'unsafe-inline'; img-src data:";
const LOAD_LIMIT_MS = 2000; // issue 17: the page loads in under 2 s
const PLAY_MS = 5000; // issue 17: the replay after 5 s of play
const STEP_TIMEOUT_MS = 15000; // any single wait; a hung page fails, never hangs CI

const argv = process.argv.slice(2);
// --fail-fast: stop before the replay (and its 5 s of play) once a check has
// failed; the tests that prove a broken page fails use it to save time.
const failFast = argv.includes("--fail-fast");
const [pageArg, outArg] = argv.filter((a) => a !== "--fail-fast");
if (!pageArg || !outArg) {
  console.error("usage: node check-report.mjs [--fail-fast] PAGE.html OUT_DIR");
  process.exit(2);
}
const page_path = resolve(pageArg);
const out = resolve(outArg);
if (!existsSync(page_path)) {
  console.error(`error: ${page_path} does not exist`);
  process.exit(2);
}
mkdirSync(out, { recursive: true });
const executablePath = process.env.LAYFLOW_CHROMIUM || "/usr/bin/chromium";

const result = {
  page: page_path,
  url: pathToFileURL(page_path).href,
  chromium: executablePath,
  browser_version: null,
  passed: false,
  checks: [],
  measurements: {},
  console_errors: [],
  page_errors: [],
  failed_requests: [],
  blocked_requests: [],
  screenshots: {},
};
const check = (name, ok, detail) => {
  result.checks.push({ name, ok: Boolean(ok), detail: detail ?? null });
  return Boolean(ok);
};

let browser;
try {
  browser = await chromium.launch({
    executablePath,
    headless: true,
    // playwright-core gives every launch a fresh, temporary user-data dir
    // (removed on close), so no profile, cache or cookie carries over; its
    // default switches also include --disable-dev-shm-usage, which a
    // container's small /dev/shm needs.
    args: [
      "--no-sandbox", // CI runs as root in a container, where the sandbox cannot start
      "--disable-gpu",
      "--disable-quic",
      "--no-first-run",
      "--disable-background-networking",
      "--disable-component-update",
      "--disable-sync",
    ],
    timeout: 30000,
  });
  result.browser_version = browser.version();
  const context = await browser.newContext({
    offline: true,
    viewport: { width: 1400, height: 900 },
    deviceScaleFactor: 1,
  });
  context.setDefaultTimeout(STEP_TIMEOUT_MS);
  // Every request that is not a file: URL is aborted and counted: the page
  // must hold everything it shows.
  await context.route("**/*", (route) => {
    const url = route.request().url();
    if (url.startsWith("file:")) return route.continue();
    result.blocked_requests.push(url);
    return route.abort("blockedbyclient");
  });
  const page = await context.newPage();
  page.on("console", (msg) => {
    if (msg.type() === "error") {
      const loc = msg.location();
      result.console_errors.push(`${msg.text()} (${loc.url}:${loc.lineNumber})`);
    }
  });
  page.on("pageerror", (err) => result.page_errors.push(String(err && err.stack ? err.stack : err)));
  page.on("requestfailed", (req) => {
    const f = req.failure();
    result.failed_requests.push(`${req.url()}: ${f ? f.errorText : "failed"}`);
  });

  await page.goto(result.url, { waitUntil: "load", timeout: STEP_TIMEOUT_MS });
  const ready = await page
    .waitForFunction(() => document.body && document.body.dataset.ready === "1", null, {
      timeout: STEP_TIMEOUT_MS,
    })
    .then(() => true, () => false);
  check("ready: document.body.dataset.ready became \"1\"", ready);

  const nav = await page.evaluate(() => {
    const n = performance.getEntriesByType("navigation")[0];
    return n ? { load_ms: n.loadEventEnd - n.startTime, dom_content_loaded_ms: n.domContentLoadedEventEnd - n.startTime, page_bytes: n.decodedBodySize } : null;
  });
  if (nav) Object.assign(result.measurements, nav);
  check(
    `load: loadEventEnd - startTime < ${LOAD_LIMIT_MS} ms`,
    nav && nav.load_ms > 0 && nav.load_ms < LOAD_LIMIT_MS,
    nav ? `${nav.load_ms.toFixed(1)} ms` : "no navigation timing entry"
  );

  const head = await page.evaluate(() => {
    const csp = document.querySelector('meta[http-equiv="Content-Security-Policy"]');
    const data = document.getElementById("layflow-data");
    let dataOk = false;
    try {
      dataOk = data !== null && data.type === "application/json" && JSON.parse(data.textContent) !== null;
    } catch (e) {
      dataOk = false;
    }
    return {
      doctype: document.doctype ? document.doctype.name : null,
      charset: document.characterSet,
      csp: csp ? csp.getAttribute("content") : null,
      data_ok: dataOk,
      external: [...document.querySelectorAll("script[src], link[href], img[src], iframe, object, embed")]
        .map((e) => e.getAttribute("src") || e.getAttribute("href") || e.tagName)
        .filter((u) => !String(u).startsWith("data:")),
    };
  });
  check("html: <!doctype html> and UTF-8", head.doctype === "html" && head.charset === "UTF-8", `${head.doctype} ${head.charset}`);
  check("html: the contract's CSP meta, exactly", head.csp === CSP, head.csp);
  check("html: script#layflow-data holds JSON", head.data_ok);
  check("html: no element loads a URL (only inline and data:)", head.external.length === 0, head.external.join(", "));

  // The top of the page, as a reader first sees it.
  await page.evaluate(() => window.scrollTo(0, 0));
  result.screenshots.top = join(out, "top.png");
  await page.screenshot({ path: result.screenshots.top });

  const broken = () =>
    result.checks.some((c) => !c.ok) ||
    [result.console_errors, result.page_errors, result.failed_requests, result.blocked_requests].some((l) => l.length);
  if (failFast && broken()) throw new Error("--fail-fast: a check failed before the replay; the replay was not played");

  // The replay: before play, after 5 s of play, then the slider.
  const replay = page.locator("#replay");
  const ids = await page.evaluate(() =>
    ["replay", "replay-canvas", "replay-play", "replay-speed", "replay-slider", "replay-clock"].filter(
      (id) => !document.getElementById(id)
    )
  );
  if (!check("replay: every element of the contract is there", ids.length === 0, ids.length ? `missing #${ids.join(", #")}` : null)) {
    throw new Error("the replay was not played: its elements are missing");
  }
  await replay.scrollIntoViewIfNeeded();
  // Where the canvas lies inside the #replay screenshot (CSS pixels, which are
  // image pixels at deviceScaleFactor 1): the Rust test compares the two
  // screenshots there, so "the replay moved" means the drawing, not the clock.
  result.measurements.canvas_box = await page.evaluate(() => {
    const s = document.getElementById("replay").getBoundingClientRect();
    const c = document.getElementById("replay-canvas").getBoundingClientRect();
    return { x: Math.round(c.left - s.left), y: Math.round(c.top - s.top), width: Math.round(c.width), height: Math.round(c.height) };
  });
  result.screenshots.replay_0s = join(out, "replay-0s.png");
  await replay.screenshot({ path: result.screenshots.replay_0s });
  const clock = () => page.locator("#replay-clock").innerText();
  const button = () => page.locator("#replay-play").innerText();
  const m = result.measurements;
  m.clock_0s = await clock();
  m.button_before = (await button()).trim();

  await page.locator("#replay-play").click();
  m.button_playing = (await button()).trim();
  await page.waitForTimeout(PLAY_MS); // real time: the replay is judged after 5 s of play
  result.screenshots.replay_5s = join(out, "replay-5s.png");
  await replay.screenshot({ path: result.screenshots.replay_5s });
  m.clock_5s = await clock();
  const stats = await page.evaluate(() => {
    const d = document.getElementById("replay").dataset;
    return {
      frames: Number(d.frames),
      frame_ms_mean: Number(d.frameMsMean),
      frame_ms_p95: Number(d.frameMsP95),
      interval_ms_mean: Number(d.intervalMsMean),
    };
  });
  Object.assign(m, stats);
  m.fps = stats.interval_ms_mean > 0 ? 1000 / stats.interval_ms_mean : null;
  check("replay: Play button reads \"Play\", then \"Pause\" while playing", m.button_before === "Play" && m.button_playing === "Pause", `${m.button_before} -> ${m.button_playing}`);
  check("replay: the clock moved during 5 s of play", m.clock_5s !== m.clock_0s, `${m.clock_0s} -> ${m.clock_5s}`);
  check(
    "replay: frame statistics are numbers and frames were drawn",
    Number.isFinite(stats.frames) && stats.frames > 0 && [stats.frame_ms_mean, stats.frame_ms_p95, stats.interval_ms_mean].every(Number.isFinite),
    JSON.stringify(stats)
  );

  await page.locator("#replay-play").click();
  m.button_paused = (await button()).trim();
  check("replay: pause puts the button back to \"Play\"", m.button_paused === "Play", m.button_paused);

  // The slider: a value a quarter of the window away from where it stands
  // (wrapping round), set as a user's drag would: playwright's fill on a range
  // input checks it is visible and enabled, sets the value, then dispatches
  // input and change.
  const before = await clock();
  const slider = page.locator("#replay-slider");
  const slid = await slider.evaluate((s) => {
    const min = Number(s.min || 0), max = Number(s.max || 100), now = Number(s.value);
    const span = max - min;
    let v = now + span / 4;
    if (v > max) v -= span / 2;
    return { min, max, from: now, to: Math.round(v) };
  });
  await slider.fill(String(slid.to));
  slid.to = Number(await slider.inputValue()); // as the browser snapped it to the step
  await page.waitForTimeout(200); // one or two frames for a clock drawn on the next rAF
  m.slider = slid;
  m.clock_before_slider = before;
  m.clock_after_slider = await clock();
  check("replay: the slider changes the clock", m.clock_after_slider !== before && slid.to !== slid.from, `${before} -> ${m.clock_after_slider} (slider ${slid.from} -> ${slid.to})`);

  await context.close();
} catch (err) {
  check("the script ran to the end", false, String(err && err.stack ? err.stack : err));
} finally {
  if (browser) await browser.close().catch(() => {});
}

check("no console error", result.console_errors.length === 0, result.console_errors.join(" | ") || null);
check("no page error (uncaught exception)", result.page_errors.length === 0, result.page_errors.join(" | ") || null);
check("no failed request", result.failed_requests.length === 0, result.failed_requests.join(" | ") || null);
check("no request other than file:", result.blocked_requests.length === 0, result.blocked_requests.join(" | ") || null);

result.passed = result.checks.every((c) => c.ok);
const json = JSON.stringify(result, null, 2);
writeFileSync(join(out, "result.json"), json + "\n");
console.log(json);
process.exit(result.passed ? 0 : 1);
