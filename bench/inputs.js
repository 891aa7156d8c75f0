// Hostile and huge inputs (issue 9): one run each (they are large), peak RSS of a fresh
// process. Run alone with `node bench/inputs.js`; `npm run bench` runs it last. Results:
// the "inputs" key of bench/results.json and a Markdown table on stdout (README "Limits").
import { spawnSync } from "node:child_process";
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";

import { ROOT, BIN } from "./common.js";
const tmp = mkdtempSync(join(tmpdir(), "steercode-bench-inputs-"));

const base = (over) => ({
  format: "steercode-scenario/1",
  name: "bench inputs (invented)",
  frequency: "10 GHz",
  array: { lattice: { kind: "rectangular", columns: 1, rows: 1, dx: "0.5 lambda", dy: "0.5 lambda" } },
  beams: { kind: "uv", u: { from: 0, to: 0, step: 1 }, v: { from: 0, to: 0, step: 1 } },
  phaseShifter: { bits: 6 },
  attenuator: { bits: 6, step: "0.5 dB" },
  word: { bits: 16, fields: [{ name: "phase", shift: 0, width: 6 }, { name: "atten", shift: 8, width: 6 }] },
  ...over,
});
function write(name, doc, files = {}) {
  for (const [n, t] of Object.entries(files)) writeFileSync(join(tmp, n), t);
  const p = join(tmp, name);
  writeFileSync(p, JSON.stringify(doc));
  return p;
}
/** wall time and peak RSS of one CLI run (the child reports its own, bench/rss.cjs) */
function run(args, expectCode = 0) {
  const t = performance.now();
  const r = spawnSync(process.execPath, [join(ROOT, "bench", "rss.cjs"), ...args], { encoding: "utf8", maxBuffer: 1 << 28 });
  const ms = performance.now() - t;
  if (r.status !== expectCode) throw new Error(`steercode ${args.join(" ")}: exit ${r.status}, expected ${expectCode}: ${r.stderr.slice(0, 2000)}`);
  const rss = Number(/MAXRSS (\d+)/.exec(r.stderr)?.[1] ?? NaN) / 1024;
  return { ms, rssMB: rss };
}

const rows = [];
const out = join(tmp, "out");
// 1. a 65 536-element list: check and a one-beam build (aperture size without comparing every pair)
{
  const lines = ["element,x_m,y_m"];
  for (let i = 0; i < 65536; i++) lines.push(`${i},${((i % 256) * 0.015).toFixed(3)},${(Math.floor(i / 256) * 0.015).toFixed(3)}`);
  const s = write("list64k.json", base({ array: { elements: "list64k.csv" } }), { "list64k.csv": lines.join("\n") + "\n" });
  rows.push({ case: "check, 65 536-element list", ...run(["check", s]) });
  rmSync(out, { recursive: true, force: true });
  rows.push({ case: "build --no-analysis, 65 536-element list, 1 beam", ...run(["build", s, "-o", out, "--no-analysis"]) });
}
// 2. memory against the beam count: 1 element, 65 536 and 1 048 576 beams, all five formats
for (const [n, step] of [[256, 0.004], [1024, 0.001]]) {
  const to = +(-0.5 + (n - 1) * step).toFixed(6);
  const s = write(`beams${n * n}.json`, base({ beams: { kind: "uv", u: { from: -0.5, to, step }, v: { from: -0.5, to, step } } }));
  for (const analysis of [false, true]) {
    rmSync(out, { recursive: true, force: true });
    rows.push({ case: `build, 1 element × ${n * n} beams, all formats${analysis ? ", analysis" : ", --no-analysis"}`, ...run(["build", s, "-o", out, ...(analysis ? [] : ["--no-analysis"])]) });
  }
}
// 3. refusals
{
  const s = write("toomany.json", base({ beams: { kind: "list", file: "toomany.csv" } }), { "toomany.csv": "u,v\n" + "0,0\n".repeat(1048577) });
  rows.push({ case: "refuse a 1 048 577-row beam list (exit 2)", ...run(["check", s], 2) });
  const cal = ["element,phase_offset_deg,gain_offset_db"];
  for (let i = 0; i < 65536; i++) cal.push(`${i + 1000000},0,0`);
  const c = write("unknown.json", base({ calibration: "unknown.csv" }), { "unknown.csv": cal.join("\n") + "\n" });
  rows.push({ case: "refuse a calibration of 65 536 unknown ids (exit 2, 21 lines printed)", ...run(["check", c], 2) });
}
rmSync(tmp, { recursive: true, force: true });

const file = join(ROOT, "bench", "results.json");
const all = existsSync(file) ? JSON.parse(readFileSync(file, "utf8")) : {};
all.inputs = rows;
writeFileSync(file, JSON.stringify(all, null, 2) + "\n");
console.log(`\n| hostile or huge input | wall (ms) | peak RSS (MB) |\n|---|---|---|`);
for (const r of rows) console.log(`| ${r.case} | ${r.ms.toFixed(0)} | ${r.rssMB.toFixed(0)} |`);
