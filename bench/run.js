// `npm run bench`: speed and memory of steercode against its targets and a numpy/scipy
// baseline, in one run on this machine. Inputs are built before any timing starts;
// each figure is the median of several runs. Results: bench/results.json and a
// Markdown table on stdout (copied into README.md).
import { spawnSync } from "node:child_process";
import { mkdtempSync, writeFileSync, readFileSync, rmSync } from "node:fs";
import { tmpdir, cpus, totalmem, loadavg } from "node:os";
import { join } from "node:path";
import { parse } from "csv-parse/sync";
import { mulberry32 } from "../dist/core/quantize/randomized.js";
import { benchCalibrate } from "./calibrate.js";

const ROOT = new URL("..", import.meta.url).pathname;
const BIN = join(ROOT, "bin", "steercode.js");
const tmp = mkdtempSync(join(tmpdir(), "steercode-bench-"));
const RUNS = Number(process.env.BENCH_RUNS ?? 3);
// BENCH_ONLY=scale runs only the scale case (big: build + verify of 41 M words) and merges
// its figures into bench/results.json.
const ONLY = process.env.BENCH_ONLY ?? null;
const median = (a) => [...a].sort((x, y) => x - y)[Math.floor(a.length / 2)];


function scenario(name, side, beams, outputs, withCal = true, extra = {}) {
  const dir = join(tmp, name);
  spawnSync("mkdir", ["-p", dir]);
  const doc = {
    format: "steercode-scenario/1",
    name: `bench ${name} (invented)`,
    frequency: "28 GHz",
    array: { lattice: { kind: "rectangular", columns: side, rows: side, dx: "0.5 lambda", dy: "0.5 lambda" } },
    beams,
    phaseShifter: { bits: 6 },
    attenuator: { bits: 6, step: "0.5 dB" },
    taper: { kind: "taylor", sidelobe: "-30 dB", nbar: 4 },
    word: { bits: 16, fields: [{ name: "phase", shift: 0, width: 6 }, { name: "atten", shift: 8, width: 6 }] },
    outputs,
    ...extra,
  };
  if (withCal) {
    const r = mulberry32(side * 7919);
    const lines = ["# invented bench calibration", "element,phase_offset_deg,gain_offset_db"];
    for (let i = 0; i < side * side; i++) lines.push(`${i},${(r() * 360 - 180).toFixed(2)},${((r() - 0.5) * 2).toFixed(3)}`);
    writeFileSync(join(dir, "cal.csv"), lines.join("\n") + "\n");
    doc.calibration = "cal.csv";
  }
  const p = join(dir, "scenario.json");
  writeFileSync(p, JSON.stringify(doc, null, 2));
  return p;
}

function timeCmd(cmd, args) {
  const t = performance.now();
  const r = spawnSync(cmd, args, { encoding: "utf8", maxBuffer: 1 << 26 });
  if (r.status !== 0) throw new Error(`${cmd} ${args.join(" ")} failed: ${r.stderr}`);
  return { ms: performance.now() - t, stdout: r.stdout };
}

function childBuild(s, out, analysis, jobs) {
  const r = spawnSync(process.execPath, [join(ROOT, "bench", "child-build.js"), s, out, analysis ? "1" : "0", String(jobs)], { encoding: "utf8" });
  if (r.status !== 0) throw new Error(r.stderr);
  return JSON.parse(r.stdout);
}

const jobs = cpus().length;
const previous = ONLY ? JSON.parse(readFileSync(join(ROOT, "bench", "results.json"), "utf8")) : {};
const machine = { cpus: cpus().length, model: cpus()[0]?.model, memGiB: +(totalmem() / 2 ** 30).toFixed(1), node: process.version };
const results = ONLY ? previous : { machine, runs: RUNS };

// ---- 1. codes-only build, 4096 elements × 4096 beams → table.bin
if (!ONLY) {
  const s = scenario("codes-64x64", 64, { kind: "uv", u: { from: -0.63, to: 0.63, step: 0.02 }, v: { from: -0.63, to: 0.63, step: 0.02 } }, ["bin"], false);
  const out = join(tmp, "codes-out");
  const inproc = [], cli = [];
  let rss = 0, words = 0;
  for (let i = 0; i < RUNS; i++) {
    const c = childBuild(s, out, false, 1);
    inproc.push(c.loadMs + c.buildMs);
    rss = Math.max(rss, c.maxRssKb);
    words = c.words;
    rmSync(out, { recursive: true, force: true });
    cli.push(timeCmd(process.execPath, [BIN, "build", s, "-o", out, "--no-analysis"]).ms);
    rmSync(out, { recursive: true, force: true });
  }
  results.codesOnly = {
    words,
    buildMs: median(inproc),
    wordsPerSecond: words / (median(inproc) / 1000),
    cliWallMs: median(cli),
    cliWordsPerSecond: words / (median(cli) / 1000),
    peakRssMB: rss / 1024,
    targets: { wordsPerSecond: 50e6, peakRssMB: 300 },
  };
}

// ---- 1b. the same build with one beam memory per 4-channel IC (1024 devices): .bin, .mem and .hex each,
// in the default beam-major layout (streamed in address order) and channel-major (positional writes)
results.devices = [];
for (const [label, address] of [["beam-major (default)", undefined], ["channel-major", { beamStride: 1, channelStride: 4096 }]]) {
  const devices = { channels: 4, ...(address ? { address } : {}) };
  const s = scenario(`devices-${results.devices.length}`, 64, { kind: "uv", u: { from: -0.63, to: 0.63, step: 0.02 }, v: { from: -0.63, to: 0.63, step: 0.02 } }, ["bin"], false, { devices });
  const out = join(tmp, "devices-out");
  const ms = [];
  let rss = 0, words = 0;
  for (let i = 0; i < RUNS; i++) {
    const c = childBuild(s, out, false, 1);
    ms.push(c.loadMs + c.buildMs);
    rss = Math.max(rss, c.maxRssKb);
    words = c.words;
    rmSync(out, { recursive: true, force: true });
  }
  results.devices.push({ layout: label, devices: 1024, formats: ["bin", "mem", "hex"], words, buildMs: median(ms), peakRssMB: rss / 1024, targets: { peakRssMB: 300 } });
}

// ---- 2. full build with analysis vs the numpy/scipy baseline: 32×32, Taylor, calibration, 21×21 az/el
if (!ONLY) {
  const s = scenario("analysis-32x32", 32, { kind: "azel", az: { from: -50, to: 50, step: 5 }, el: { from: -50, to: 50, step: 5 } }, ["csv", "bin", "c", "mem", "json"]);
  const out = join(tmp, "an-out");
  const ours = [], base = [];
  for (let i = 0; i < RUNS; i++) {
    rmSync(out, { recursive: true, force: true });
    ours.push(timeCmd(process.execPath, [BIN, "build", s, "-o", out, "--jobs", String(jobs)]).ms);
    base.push(timeCmd("/usr/bin/python3", [join(ROOT, "bench", "baseline_numpy.py"), s, join(tmp, "baseline.csv")]).ms);
  }
  const a = parse(readFileSync(join(out, "beams.csv")), { columns: true });
  const b = parse(readFileSync(join(tmp, "baseline.csv")), { columns: true });
  const dPsl = a.map((r, i) => Math.abs(Number(r.psl_db) - Number(b[i].psl_db)));
  const dPoint = a.map((r, i) => Math.abs(Number(r.pointing_error_deg) - Number(b[i].pointing_error_deg)));
  results.analysis = {
    beams: a.length,
    elements: 1024,
    steercodeWallMs: median(ours),
    baselineWallMs: median(base),
    ratio: median(ours) / median(base),
    baselineVsSteercode: { pslAbsDiffDbMedian: median(dPsl), pslAbsDiffDbMax: Math.max(...dPsl), pointingAbsDiffDegMedian: median(dPoint), pointingAbsDiffDegMax: Math.max(...dPoint) },
    note: "steercode writes every table format as well; the baseline computes codes and metrics only",
  };
}

// ---- 3. sweep of 6 bit depths × 3 attenuator steps vs one build, same 32×32 scenario
if (!ONLY) {
  const s = join(tmp, "analysis-32x32", "scenario.json");
  const out = join(tmp, "sweep-out");
  const sw = [], one = [];
  for (let i = 0; i < RUNS; i++) {
    rmSync(out, { recursive: true, force: true });
    sw.push(timeCmd(process.execPath, [BIN, "sweep", s, "-o", out, "--phase-bits", "3..8", "--atten-step", "0.25,0.5,1", "--jobs", String(jobs)]).ms);
    rmSync(join(tmp, "one"), { recursive: true, force: true });
    one.push(timeCmd(process.execPath, [BIN, "build", s, "-o", join(tmp, "one"), "--jobs", String(jobs)]).ms);
  }
  results.sweep = { parts: 18, beams: 441, sweepWallMs: median(sw), buildWallMs: median(one), ratio: median(sw) / median(one), target: 6 };
}

// ---- 4. bad input is refused quickly (whole CLI process, exit 2)
if (!ONLY) {
  const dir = join(tmp, "bad");
  spawnSync("mkdir", ["-p", dir]);
  writeFileSync(join(dir, "cal.csv"), "element,phase_offset_deg,gain_offset_db\n0,1,0\n0,2,0\n");
  const p = join(dir, "scenario.json");
  writeFileSync(p, JSON.stringify({ format: "steercode-scenario/1", frequency: "28 GHz", array: { lattice: { kind: "rectangular", columns: 64, rows: 64, dx: "0.5 lambda", dy: "0.5 lambda" } }, beams: { kind: "uv", u: { from: -0.6, to: 0.6, step: 0.02 }, v: { from: -0.6, to: 0.6, step: 0.02 } }, phaseShifter: { bits: 6 }, attenuator: { bits: 6, step: "0.5 dB" }, calibration: "cal.csv", word: { bits: 16, fields: [{ name: "phase", shift: 0, width: 6 }, { name: "atten", shift: 8, width: 6 }] } }));
  const ms = [];
  for (let i = 0; i < RUNS; i++) {
    const t = performance.now();
    const r = spawnSync(process.execPath, [BIN, "build", p, "-o", join(dir, "out")], { encoding: "utf8" });
    ms.push(performance.now() - t);
    if (r.status !== 2) throw new Error("bad input was not refused with exit 2");
  }
  results.badInput = { case: "4096-element scenario, calibration with a duplicated row and 4095 missing elements", cliWallMs: median(ms), target: 1000 };
}

// ---- 5. scaling ladder: analysis cost per beam (tables to table.bin only)
if (!ONLY) results.scaling = [];
if (!ONLY)
for (const side of [16, 32, 64]) {
  // u-v grids of exactly 10², 21² and 64² beams
  for (const [n, from, step] of [[10, -0.45, 0.1], [21, -0.45, 0.045], [64, -0.63, 0.02]]) {
    const to = +(from + (n - 1) * step).toFixed(6);
    const nb = n * n;
    const s = scenario(`scale-${side}-${nb}`, side, { kind: "uv", u: { from, to, step }, v: { from, to, step } }, ["bin"]);
    const out = join(tmp, `scale-out`);
    rmSync(out, { recursive: true, force: true });
    const c = childBuild(s, out, true, jobs);
    const beams = Number(JSON.parse(readFileSync(join(out, "manifest.json"), "utf8")).counts.beams);
    results.scaling.push({ elements: side * side, beams, buildMs: c.buildMs, msPerBeam: c.buildMs / beams, peakRssMB: c.maxRssKb / 1024 });
    rmSync(out, { recursive: true, force: true });
  }
}

// ---- 6. the optimized quantizer (bench/optimized.js)
if (!ONLY) {
  const r = spawnSync(process.execPath, [join(ROOT, "bench", "optimized.js")], { encoding: "utf8", env: { ...process.env, BENCH_RUNS: String(RUNS) } });
  if (r.status !== 0) throw new Error(r.stderr);
  results.optimized = JSON.parse(r.stdout);
}

// ---- 7. scale: 64×64 elements × 10 000 beams (41 M words), build with analysis, then verify
// (verify regenerates every file and reruns the analysis, streaming: its memory must stay
// flat in beams and its time a small multiple of the build's). Run once: it is big.
if (!ONLY || ONLY === "scale") {
  const s = scenario("scale-64x64-10k", 64, { kind: "uv", u: { from: -0.495, to: 0.495, step: 0.01 }, v: { from: -0.495, to: 0.495, step: 0.01 } }, ["bin"]);
  const out = join(tmp, "scale-10k-out");
  rmSync(out, { recursive: true, force: true });
  const b = childBuild(s, out, true, jobs);
  const r = spawnSync(process.execPath, [join(ROOT, "bench", "child-verify.js"), out, String(jobs)], { encoding: "utf8" });
  if (r.status !== 0) throw new Error(r.stderr);
  const v = JSON.parse(r.stdout);
  if (!v.ok) throw new Error("verify did not pass on a fresh build");
  const beams = Number(JSON.parse(readFileSync(join(out, "manifest.json"), "utf8")).counts.beams);
  results.scaleVerify = { elements: 4096, beams, words: b.words, buildMs: b.loadMs + b.buildMs, buildPeakRssMB: b.maxRssKb / 1024, verifyMs: v.ms, verifyPeakRssMB: v.maxRssKb / 1024, ratio: v.ms / (b.loadMs + b.buildMs), machine, loadAverage1min: loadavg()[0], target: "verify ≤ 3 × build time, peak RSS flat in beams" };
  rmSync(out, { recursive: true, force: true });
}

// ---- 8. band analysis (BENCH_ONLY=band runs it alone): the 32×32, 441-beam scenario with a cos^1.2 element, played at 9 band points
//         (27 … 29 GHz in 0.25 GHz steps): the same per-beam machinery finds each band point's peak
if (!ONLY || ONLY === "band") {
  const plain = scenario("band-plain-32x32", 32, { kind: "azel", az: { from: -50, to: 50, step: 5 }, el: { from: -50, to: 50, step: 5 } }, ["bin"]);
  const doc = JSON.parse(readFileSync(plain, "utf8"));
  const withElement = join(tmp, "band-plain-32x32", "element.json");
  writeFileSync(withElement, JSON.stringify({ ...doc, element: { pattern: "cosine", exponent: 1.2 } }));
  const withBand = join(tmp, "band-plain-32x32", "band.json");
  writeFileSync(withBand, JSON.stringify({ ...doc, element: { pattern: "cosine", exponent: 1.2 }, band: { from: "27 GHz", to: "29 GHz", step: "0.25 GHz" } }));
  const t = { plain: [], element: [], band: [] };
  const cpu = { plain: [], element: [], band: [] };
  const out = join(tmp, "band-out");
  for (let i = 0; i < RUNS; i++)
    for (const [k, s] of [["plain", plain], ["element", withElement], ["band", withBand]]) {
      const c = childBuild(s, out, true, jobs);
      t[k].push(c.buildMs);
      cpu[k].push(c.cpuMs);
    }
  const rows = parse(readFileSync(join(out, "squint.csv")), { columns: true }).length;
  results.band = {
    elements: 1024,
    beams: 441,
    bandPoints: 9,
    squintRows: rows,
    plainBuildMs: median(t.plain),
    elementBuildMs: median(t.element),
    bandBuildMs: median(t.band),
    plainCpuMs: median(cpu.plain),
    elementCpuMs: median(cpu.element),
    bandCpuMs: median(cpu.band),
    cpuMsPerSquintRow: (median(cpu.band) - median(cpu.element)) / rows,
    note: "in-process build (load excluded), tables to table.bin only, all cores; CPU = user + system of the whole process (worker threads included), robust to other load on the machine",
  };
}

// ---- 9. calibration: 4096-element REV data set, 16 codes per element (bench/calibrate.js)
if (!ONLY || ONLY === "calibrate") results.calibrate = benchCalibrate(RUNS);

writeFileSync(join(ROOT, "bench", "results.json"), JSON.stringify(results, null, 2) + "\n");
const f = (x, d = 0) => Number(x).toFixed(d);
if (!ONLY) {
const c = results.codesOnly, an = results.analysis;
console.log(`machine: ${results.machine.cpus} × ${results.machine.model}, ${results.machine.memGiB} GiB, Node ${results.machine.node}; median of ${RUNS} runs\n`);
console.log(`| benchmark | result | target |\n|---|---|---|`);
console.log(`| codes-only build, 4096 elements × 4096 beams → table.bin (load + build, in process) | ${f(c.buildMs)} ms, ${f(c.wordsPerSecond / 1e6, 1)} M words/s | ≥ 50 M words/s |`);
console.log(`| same, whole CLI process (node start-up included) | ${f(c.cliWallMs)} ms, ${f(c.cliWordsPerSecond / 1e6, 1)} M words/s | — |`);
console.log(`| peak memory of that build | ${f(c.peakRssMB)} MB | < 300 MB |`);
for (const d of results.devices) console.log(`| same build plus ${d.devices} device images (4 channels each; .bin, .mem, .hex), ${d.layout} layout: load + build / peak memory | ${f(d.buildMs)} ms / ${f(d.peakRssMB)} MB | < 300 MB |`);
console.log(`| full build with analysis, 32×32, 441 beams, all outputs (CLI wall) | ${f(an.steercodeWallMs)} ms | ≤ baseline |`);
console.log(`| numpy/scipy baseline, same scenario (wall) | ${f(an.baselineWallMs)} ms | — |`);
console.log(`| ratio steercode / baseline | ${f(an.ratio, 2)} | ≤ 1 |`);
console.log(`| sweep 6 bit depths × 3 steps (18 parts × 441 beams), CLI wall | ${f(results.sweep.sweepWallMs)} ms = ${f(results.sweep.ratio, 2)} × one build | ≤ 6 × |`);
console.log(`| bad input refused (4096-element scenario, broken calibration), exit 2 | ${f(results.badInput.cliWallMs)} ms | < 1 s |`);
console.log(`| baseline vs steercode: PSL |Δ| median / max | ${f(an.baselineVsSteercode.pslAbsDiffDbMedian, 3)} / ${f(an.baselineVsSteercode.pslAbsDiffDbMax, 3)} dB | — |`);
console.log(`| baseline vs steercode: pointing |Δ| median / max | ${f(an.baselineVsSteercode.pointingAbsDiffDegMedian, 4)} / ${f(an.baselineVsSteercode.pointingAbsDiffDegMax, 4)} deg | — |`);
console.log(`| REV calibration, 4096 elements × 16 codes: solve (in process) | ${f(results.calibrate.solveMs)} ms | well under 1 s |`);
console.log(`| same, CSV parse + solve + cal.csv text (in process) / whole CLI process | ${f(results.calibrate.inProcessMs)} / ${f(results.calibrate.cliWallMs)} ms | — |`);
console.log(`\n| elements | beams | build with analysis (ms) | ms / beam | peak RSS (MB) |\n|---|---|---|---|---|`);
for (const r of results.scaling) console.log(`| ${r.elements} | ${r.beams} | ${f(r.buildMs)} | ${f(r.msPerBeam, 2)} | ${f(r.peakRssMB)} |`);
const o = results.optimized;
console.log(`\n| optimized quantizer | result | target |\n|---|---|---|`);
console.log(`| demo (${o.demo.elements} elements, ${o.demo.beams} beams), optimized build with analysis vs nearest (CLI wall) | ${f(o.demo.optimizedWallMs)} ms vs ${f(o.demo.nearestWallMs)} ms = ${f(o.demo.ratio, 2)} × | ≤ 10 × |`);
console.log(`| 32×32 + calibration, 441 beams, optimized build with analysis (CLI wall) | ${f(o.large.optimizedWallMs)} ms | < 60 s |`);
for (const r of o.memory) console.log(`| 16×16 optimized, ${r.beams} beams: build ${f(r.buildMs)} ms, peak RSS | ${f(r.peakRssMB)} MB | flat in beams |`);
console.log(`| what it achieved, demo: worst PSL nearest → optimized; median / max PSL lowered | ${f(o.demo.achieved.pslWorstBeforeDb, 2)} → ${f(o.demo.achieved.pslWorstAfterDb, 2)} dB; ${f(o.demo.achieved.pslGainMedianDb, 2)} / ${f(o.demo.achieved.pslGainMaxDb, 2)} dB | — |`);
console.log(`| what it achieved, 32×32: worst PSL nearest → optimized; median / max PSL lowered | ${f(o.large.achieved.pslWorstBeforeDb, 2)} → ${f(o.large.achieved.pslWorstAfterDb, 2)} dB; ${f(o.large.achieved.pslGainMedianDb, 2)} / ${f(o.large.achieved.pslGainMaxDb, 2)} dB | — |`);
}
const sv = results.scaleVerify;
console.log(`\n| 64×64 × ${sv.beams} beams (${f(sv.words / 1e6, 1)} M words, table.bin + analysis) | time | peak RSS (MB) |\n|---|---|---|`);
console.log(`| build | ${f(sv.buildMs / 1000, 1)} s | ${f(sv.buildPeakRssMB)} |`);
console.log(`| verify (every file regenerated, analysis rerun) | ${f(sv.verifyMs / 1000, 1)} s = ${f(sv.ratio, 2)} × build | ${f(sv.verifyPeakRssMB)} |`);
const bd = results.band;
if (bd) {
  console.log(`\n| band benchmark (32×32, 441 beams, table.bin only) | build (ms) | CPU (ms) |\n|---|---|---|`);
  console.log(`| isotropic elements, no band | ${f(bd.plainBuildMs)} | ${f(bd.plainCpuMs)} |`);
  console.log(`| cos^1.2 element | ${f(bd.elementBuildMs)} | ${f(bd.elementCpuMs)} |`);
  console.log(`| cos^1.2 element + 9-point band (${bd.squintRows} squint.csv rows) | ${f(bd.bandBuildMs)} | ${f(bd.bandCpuMs)} (${f(bd.cpuMsPerSquintRow, 3)} ms a row) |`);
}
rmSync(tmp, { recursive: true, force: true });
if (!ONLY) await import("./inputs.js");
if (!ONLY || ONLY === "report") await import("./report.js");
