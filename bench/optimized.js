// The optimized quantizer's benchmark (part of `npm run bench`; also runs alone:
// `npm run -s build && node bench/optimized.js`). Prints one JSON document.
//  1. the demo (16×16, 133 beams): optimized build with analysis vs a nearest build with
//     analysis, whole CLI process, median of BENCH_RUNS runs; target ratio ≤ 10;
//  2. 32×32 Taylor + calibration, 441 beams (the analysis benchmark's scenario), optimized,
//     whole CLI process; target under 60 s on this 2-core machine;
//  3. peak memory against the beam count (16×16, 100 / 441 / 1600 beams, in process).
import { spawnSync } from "node:child_process";
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import { cpus, tmpdir } from "node:os";
import { join } from "node:path";
import { ROOT, BIN, median, benchScenario, timeCmd } from "./common.js";
const tmp = mkdtempSync(join(tmpdir(), "steercode-bench-opt-"));
const RUNS = Number(process.env.BENCH_RUNS ?? 3);
const jobs = cpus().length;

const run = (args) => timeCmd(process.execPath, [BIN, ...args]).ms;

function childBuild(s, out) {
  const r = spawnSync(process.execPath, [join(ROOT, "bench", "child-build.js"), s, out, "1", String(jobs)], { encoding: "utf8" });
  if (r.status !== 0) throw new Error(r.stderr);
  return JSON.parse(r.stdout);
}

function withQuantizer(src, dst, method) {
  const d = JSON.parse(readFileSync(src, "utf8"));
  d.quantizer = method === "optimized" ? { method: "optimized", objective: "psl", seed: 1 } : { method };
  writeFileSync(dst, JSON.stringify(d, null, 2));
  return dst;
}

/** The ladder's scenario (bench/common.js) with the optimized quantizer and all five formats. */
const lattice = (name, side, beams, withCal) =>
  benchScenario(tmp, name, side, beams, ["csv", "bin", "c", "mem", "json"], withCal, { quantizer: { method: "optimized", objective: "psl", seed: 1 } });

const out = {};

// ---- 1. the demo: optimized vs nearest, both with analysis
{
  const demo = join(tmp, "demo");
  run(["init", demo]);
  const near = withQuantizer(join(demo, "scenario.json"), join(demo, "nearest.json"), "nearest");
  const opt = withQuantizer(join(demo, "scenario.json"), join(demo, "optimized.json"), "optimized");
  const tn = [], to = [];
  for (let i = 0; i < RUNS; i++) {
    rmSync(join(tmp, "dn"), { recursive: true, force: true });
    tn.push(run(["build", near, "-o", join(tmp, "dn"), "--jobs", String(jobs)]));
    rmSync(join(tmp, "do"), { recursive: true, force: true });
    to.push(run(["build", opt, "-o", join(tmp, "do"), "--jobs", String(jobs)]));
  }
  const m = JSON.parse(readFileSync(join(tmp, "do", "manifest.json"), "utf8"));
  out.demo = { beams: m.counts.beams, elements: m.counts.elements, nearestWallMs: median(tn), optimizedWallMs: median(to), ratio: median(to) / median(tn), target: 10, achieved: m.optimized.summary };
}

// ---- 2. 32×32, 441 beams, calibration: optimized build with analysis
{
  const s = lattice("opt-32x32", 32, { kind: "azel", az: { from: -50, to: 50, step: 5 }, el: { from: -50, to: 50, step: 5 } }, true);
  const o = join(tmp, "o32");
  const t = run(["build", s, "-o", o, "--jobs", String(jobs)]);
  const m = JSON.parse(readFileSync(join(o, "manifest.json"), "utf8"));
  out.large = { beams: m.counts.beams, elements: m.counts.elements, optimizedWallMs: t, targetMs: 60000, achieved: m.optimized.summary };
  rmSync(o, { recursive: true, force: true });
}

// ---- 3. memory against the beam count (16×16, in process, analysis on)
out.memory = [];
for (const [n, from, step] of [[10, -0.45, 0.1], [21, -0.45, 0.045], [40, -0.585, 0.03]]) {
  const to = +(from + (n - 1) * step).toFixed(6);
  const s = lattice(`opt-mem-${n}`, 16, { kind: "uv", u: { from, to, step }, v: { from, to, step } }, true);
  const o = join(tmp, "om");
  const c = childBuild(s, o);
  out.memory.push({ elements: 256, beams: n * n, buildMs: c.buildMs, peakRssMB: c.maxRssKb / 1024 });
  rmSync(o, { recursive: true, force: true });
}

rmSync(tmp, { recursive: true, force: true });
process.stdout.write(JSON.stringify(out, null, 2) + "\n");
