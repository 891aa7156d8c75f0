// The report page's benchmark (part of `npm run bench`; alone: `npm run -s build && node bench/report.js`).
//  1. size of report.html for the demo and for a 4096-element × 4096-beam build
//     (--no-analysis: the page's size grows with the elements and the beams' metrics,
//     not with the table's words); stated bounds: demo < 3 MB, 4096 × 4096 < 10 MB;
//  2. time to draw one beam in the page (heading, pattern, cuts, aperture, maps: the
//     page's own "computed in" figure), median over 10 beams of the demo, in Debian's
//     headless Chromium; target well under 0.5 s. Skipped (and said) without chromium.
import { spawnSync } from "node:child_process";
import { existsSync, mkdtempSync, rmSync, statSync, writeFileSync } from "node:fs";
import { loadavg, tmpdir } from "node:os";
import { join } from "node:path";

import { ROOT, BIN, median } from "./common.js";
const tmp = mkdtempSync(join(tmpdir(), "steercode-bench-report-"));

function run(args) {
  const r = spawnSync(process.execPath, [BIN, ...args], { encoding: "utf8", maxBuffer: 1 << 26 });
  if (r.status !== 0) throw new Error(`steercode ${args.join(" ")} failed: ${r.stderr}`);
}

const demo = join(tmp, "demo");
run(["build", join(ROOT, "fixtures", "demo", "scenario.json"), "-o", demo]);
run(["report", demo]);
const big = join(tmp, "big");
writeFileSync(join(tmp, "big.json"), JSON.stringify({
  format: "steercode-scenario/1", name: "bench 64x64 x 4096 beams (invented)", frequency: "28 GHz",
  array: { lattice: { kind: "rectangular", columns: 64, rows: 64, dx: "0.5 lambda", dy: "0.5 lambda" } },
  beams: { kind: "uv", u: { from: -0.63, to: 0.63, step: 0.02 }, v: { from: -0.63, to: 0.63, step: 0.02 } },
  phaseShifter: { bits: 6 }, attenuator: { bits: 6, step: "0.5 dB" }, taper: { kind: "taylor", sidelobe: "-30 dB", nbar: 4 },
  word: { bits: 16, fields: [{ name: "phase", shift: 0, width: 6 }, { name: "atten", shift: 8, width: 6 }] }, outputs: ["bin"],
}));
run(["build", join(tmp, "big.json"), "-o", big, "--no-analysis"]);
run(["report", big]);
const result = {
  loadAverage: loadavg()[0],
  demoBytes: statSync(join(demo, "report.html")).size,
  bigBytes: statSync(join(big, "report.html")).size,
  drawMsMedian: null,
  drawMsMax: null,
};
if (existsSync("/usr/bin/chromium")) {
  const { chromium } = await import("playwright-core");
  const browser = await chromium.launch({ executablePath: "/usr/bin/chromium", args: ["--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run", "--disable-background-networking", "--disable-component-update", "--disable-sync"] });
  const page = await browser.newPage({ viewport: { width: 1400, height: 1000 } });
  await page.goto("file://" + join(demo, "report.html"));
  await page.waitForSelector("body.ready");
  const ms = [];
  for (const b of [3, 17, 29, 41, 55, 68, 80, 95, 110, 127]) {
    await page.selectOption("#beam-select", String(b));
    await page.waitForFunction((x) => document.body.dataset.beam === String(x), b);
    ms.push(Number(await page.evaluate(() => document.body.dataset.ms)));
  }
  await browser.close();
  result.drawMsMedian = median(ms);
  result.drawMsMax = Math.max(...ms);
} else console.log("report draw time: skipped (apt-get install chromium)");
rmSync(tmp, { recursive: true, force: true });
const f = (x, d = 0) => (x === null ? "n/a" : x.toFixed(d));
console.log(`\n| report page | result | target |\n|---|---|---|`);
console.log(`| demo report.html size | ${f(result.demoBytes / 1e6, 2)} MB | < 3 MB |`);
console.log(`| 4096 elements × 4096 beams (--no-analysis) report.html size | ${f(result.bigBytes / 1e6, 2)} MB | < 10 MB |`);
console.log(`| one demo beam drawn in Chromium (median / max of 10) | ${f(result.drawMsMedian)} / ${f(result.drawMsMax)} ms | well under 500 ms |`);
console.log(`(load average ${result.loadAverage.toFixed(1)} during the run)`);
console.log(JSON.stringify({ report: result }));
