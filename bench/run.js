// `npm run bench`: speed and memory of steercode against its targets and a numpy/scipy
// baseline, in one run on this machine. Inputs are built before any timing starts;
// each figure is the median of several runs. Results: bench/results.json and a
// Markdown table on stdout (copied into README.md).
import { spawnSync } from "node:child_process";
import { mkdtempSync, writeFileSync, readFileSync, rmSync } from "node:fs";
import { tmpdir, cpus, totalmem, loadavg } from "node:os";
import { join } from "node:path";
import { parse } from "csv-parse/sync";
import { benchCalibrate } from "./calibrate.js";
import { benchLadder, printLadder } from "./ladder.js";
import { ROOT, BIN, median, spread, benchScenario, timeCmd } from "./common.js";

const tmp = mkdtempSync(join(tmpdir(), "steercode-bench-"));
const RUNS = Number(process.env.BENCH_RUNS ?? 3);
// BENCH_ONLY=scale runs only the scale case (big: build + verify of 41 M words) and merges
// its figures into bench/results.json.
const ONLY = process.env.BENCH_ONLY ?? null;


const scenario = (name, side, beams, outputs, withCal = true, extra = {}) => benchScenario(tmp, name, side, beams, outputs, withCal, extra);

function childBuild(s, out, analysis, jobs) {
  const r = spawnSync(process.execPath, [join(ROOT, "bench", "child-build.js"), s, out, analysis ? "1" : "0", String(jobs)], { encoding: "utf8" });
  if (r.status !== 0) throw new Error(r.stderr);
  return JSON.parse(r.stdout);
}

/** RUNS in-process builds without analysis, one thread: load + build times, the largest peak RSS, the word count; `between` runs after each. */
function tableRuns(s, out, between = () => {}) {
  const ms = [];
  let rss = 0, words = 0;
  for (let i = 0; i < RUNS; i++) {
    const c = childBuild(s, out, false, 1);
    ms.push(c.loadMs + c.buildMs);
    rss = Math.max(rss, c.maxRssKb);
    words = c.words;
    rmSync(out, { recursive: true, force: true });
    between();
  }
  return { ms, rss, words };
}

const jobs = cpus().length;
const previous = ONLY ? JSON.parse(readFileSync(join(ROOT, "bench", "results.json"), "utf8")) : {};
const machine = { cpus: cpus().length, model: cpus()[0]?.model, memGiB: +(totalmem() / 2 ** 30).toFixed(1), node: process.version };
const results = ONLY ? previous : { machine, runs: RUNS };

// ---- 1. codes-only build, 4096 elements × 4096 beams → table.bin
if (!ONLY) {
  const s = scenario("codes-64x64", 64, { kind: "uv", u: { from: -0.63, to: 0.63, step: 0.02 }, v: { from: -0.63, to: 0.63, step: 0.02 } }, ["bin"], false);
  const out = join(tmp, "codes-out");
  const cli = [];
  // the whole CLI process interleaved with the in-process runs
  const { ms: inproc, rss, words } = tableRuns(s, out, () => {
    cli.push(timeCmd(process.execPath, [BIN, "build", s, "-o", out, "--no-analysis"]).ms);
    rmSync(out, { recursive: true, force: true });
  });
  results.codesOnly = {
    words,
    buildMs: median(inproc),
    buildMsSpread: spread(inproc),
    wordsPerSecond: words / (median(inproc) / 1000),
    cliWallMs: median(cli),
    cliWallMsSpread: spread(cli),
    cliWordsPerSecond: words / (median(cli) / 1000),
    peakRssMB: rss / 1024,
    targets: { wordsPerSecond: 50e6, peakRssMB: 300 },
  };
}

// ---- 1b. the same build with one beam memory per 4-channel IC (1024 devices): .bin, .mem and .hex each,
// in the default beam-major layout (streamed in address order) and channel-major (positional writes)
if (!ONLY) results.devices = [];
if (!ONLY)
for (const [label, address] of [["beam-major (default)", undefined], ["channel-major", { beamStride: 1, channelStride: 4096 }]]) {
  const devices = { channels: 4, ...(address ? { address } : {}) };
  const s = scenario(`devices-${results.devices.length}`, 64, { kind: "uv", u: { from: -0.63, to: 0.63, step: 0.02 }, v: { from: -0.63, to: 0.63, step: 0.02 } }, ["bin"], false, { devices });
  const out = join(tmp, "devices-out");
  const { ms, rss, words } = tableRuns(s, out);
  results.devices.push({ layout: label, devices: 1024, formats: ["bin", "mem", "hex"], words, buildMs: median(ms), peakRssMB: rss / 1024, targets: { peakRssMB: 300 } });
}

// ---- 2. full build with analysis, all five table formats, vs the numpy script (codes and metrics only): 32×32, Taylor, calibration, 21×21 az/el
if (!ONLY) {
  const s = scenario("analysis-32x32", 32, { kind: "azel", az: { from: -50, to: 50, step: 5 }, el: { from: -50, to: 50, step: 5 } }, ["csv", "bin", "c", "mem", "json"]);
  const out = join(tmp, "an-out");
  const ours = [], base = [];
  for (let i = 0; i < RUNS; i++) {
    rmSync(out, { recursive: true, force: true });
    const us = () => ours.push(timeCmd(process.execPath, [BIN, "build", s, "-o", out]).ms);
    const them = () => base.push(timeCmd("/usr/bin/python3", [join(ROOT, "bench", "baseline_numpy.py"), s, join(tmp, "baseline.csv")]).ms);
    if (i % 2 === 0) { us(); them(); } else { them(); us(); } // interleaved, order alternating
  }
  const a = parse(readFileSync(join(out, "beams.csv")), { columns: true });
  const b = parse(readFileSync(join(tmp, "baseline.csv")), { columns: true });
  const dPsl = a.map((r, i) => Math.abs(Number(r.psl_db) - Number(b[i].psl_db)));
  const dPoint = a.map((r, i) => Math.abs(Number(r.pointing_error_deg) - Number(b[i].pointing_error_deg)));
  results.analysis = {
    beams: a.length,
    elements: 1024,
    steercodeWallMs: median(ours),
    steercodeWallMsSpread: spread(ours),
    baselineWallMs: median(base),
    baselineWallMsSpread: spread(base),
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

// ---- 5. the ladder (bench/ladder.js): 16², 32², 64², 128² × 441 and 4096 beams, steercode vs the numpy
// script, interleaved; BENCH_ONLY=ladder runs it alone
if (!ONLY || ONLY === "ladder") results.ladder = benchLadder(RUNS);

// ---- 5b. analysis memory in beams: 16×16, table.bin + analysis, 100 … 16 384 beams (u-v grids of 10², 21², 64²,
// 128²), whole CLI process, default --jobs: peak RSS must stay flat as the beam count grows
if (!ONLY || ONLY === "memory") {
  results.memoryInBeams = [];
  for (const [n, from, step] of [[10, -0.45, 0.1], [21, -0.45, 0.045], [64, -0.63, 0.02], [128, -0.635, 0.01]]) {
    const to = +(from + (n - 1) * step).toFixed(6);
    const s = scenario(`mem-16-${n}`, 16, { kind: "uv", u: { from, to, step }, v: { from, to, step } }, ["bin"]);
    const out = join(tmp, "mem-out");
    const ms = [], rss = [];
    for (let i = 0; i < RUNS; i++) {
      rmSync(out, { recursive: true, force: true });
      const r = timeCmd(process.execPath, [join(ROOT, "bench", "rss.cjs"), "build", s, "-o", out]);
      ms.push(r.ms);
      rss.push(r.maxRssKb / 1024);
    }
    rmSync(out, { recursive: true, force: true });
    results.memoryInBeams.push({ elements: 256, beams: n * n, wallMs: spread(ms), peakRssMB: spread(rss) });
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

// ---- 10. diff after a calibration change (BENCH_ONLY=diff runs it alone): two 64×64 × 2601-beam builds
// (10.7 M words) whose calibration phases differ by 3.1°, so about half the words change; peak memory of
// the summary, of -o (changes.csv) and of --json (streamed to a pipe), whole CLI processes, run once each
if (!ONLY || ONLY === "diff") {
  const beams = { kind: "uv", u: { from: -0.5, to: 0.5, step: 0.02 }, v: { from: -0.5, to: 0.5, step: 0.02 } };
  const a = scenario("diff-a", 64, beams, ["bin"]);
  const bDir = join(tmp, "diff-b");
  spawnSync("mkdir", ["-p", bDir]);
  writeFileSync(join(bDir, "scenario.json"), readFileSync(a));
  writeFileSync(join(bDir, "cal.csv"), readFileSync(join(tmp, "diff-a", "cal.csv"), "utf8").replace(/^(\d+),([-0-9.]+)/gm, (_, id, ph) => `${id},${(Number(ph) + 3.1).toFixed(2)}`));
  const [oa, ob] = [join(tmp, "diff-out-a"), join(tmp, "diff-out-b")];
  timeCmd(process.execPath, [BIN, "build", a, "-o", oa, "--no-analysis"]);
  timeCmd(process.execPath, [BIN, "build", join(bDir, "scenario.json"), "-o", ob, "--no-analysis"]);
  const diffRun = (extra) => {
    const t = performance.now();
    const r = spawnSync(process.execPath, [join(ROOT, "bench", "rss.cjs"), "diff", oa, ob, ...extra], { encoding: "utf8", maxBuffer: 1 << 20, stdio: ["ignore", extra.includes("--json") ? "ignore" : "pipe", "pipe"] });
    if (r.status !== 1) throw new Error(`diff: exit ${r.status}: ${r.stderr}`);
    return { ms: performance.now() - t, peakRssMB: Number(/MAXRSS (\d+)/.exec(r.stderr)[1]) / 1024 };
  };
  const summary = JSON.parse(readFileSync(join(ob, "manifest.json"), "utf8")).counts.words;
  const text = diffRun([]);
  const csv = diffRun(["-o", join(tmp, "diff-changes")]);
  const changed = readFileSync(join(tmp, "diff-changes", "diff.json"), "utf8").match(/"wordsChanged": (\d+)/)[1];
  const json = diffRun(["--json"]);
  results.diff = { words: summary, wordsChanged: Number(changed), summary: text, changesCsv: csv, json, note: "run once each; --json written to a discarded stdout" };
}

// ---- 11. element lists (BENCH_ONLY=lists runs it alone): the analysis of a 64×64 lattice at 0.5 λ given
// as a lattice and as elements.csv (both FFT: grid.ts gridEmbedding), the same list with every position
// 1 nm off its place (no FFT grid holds it: direct sum by rows of shared y, grid.ts DirectSum), and 1024
// scattered elements over the same aperture (element by element); 25 beams (az/el ±40° in 20° steps),
// in-process build with analysis, one thread; figures per beam
if (!ONLY || ONLY === "lists") {
  const beams = { kind: "azel", az: { from: -40, to: 40, step: 20 }, el: { from: -40, to: 40, step: 20 } };
  const lattice = scenario("lists-lattice", 64, beams, ["bin"], false);
  const doc = JSON.parse(readFileSync(lattice, "utf8"));
  const lambda = 299792458 / 28e9, pitch = lambda / 2;
  const at = (i) => ((i - 31.5) * pitch).toPrecision(17);
  const gridCsv = ["element,x_m,y_m", ...Array.from({ length: 4096 }, (_, e) => `${e},${at(e % 64)},${at(Math.floor(e / 64))}`)].join("\n") + "\n";
  const offCsv = ["element,x_m,y_m", ...Array.from({ length: 4096 }, (_, e) => `${e},${(Number(at(e % 64)) + ((e % 64) % 3) * 1e-9).toPrecision(17)},${at(Math.floor(e / 64))}`)].join("\n") + "\n";
  let seed = 11;
  const rnd = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
  const scatterCsv = ["element,x_m,y_m", ...Array.from({ length: 1024 }, (_, e) => `${e},${((rnd() - 0.5) * 63 * pitch).toPrecision(12)},${((rnd() - 0.5) * 63 * pitch).toPrecision(12)}`)].join("\n") + "\n";
  const listScenario = (name, csv) => {
    const d = join(tmp, name);
    spawnSync("mkdir", ["-p", d]);
    writeFileSync(join(d, "el.csv"), csv);
    writeFileSync(join(d, "scenario.json"), JSON.stringify({ ...doc, array: { elements: "el.csv" } }));
    return join(d, "scenario.json");
  };
  const cases = [["lattice", lattice], ["grid as elements.csv", listScenario("lists-grid", gridCsv)], ["grid 1 nm off its places", listScenario("lists-off", offCsv)], ["1024 scattered", listScenario("lists-scatter", scatterCsv)]];
  const out = join(tmp, "lists-out");
  results.elementLists = cases.map(([name, s]) => {
    const ms = [];
    for (let i = 0; i < RUNS; i++) ms.push(childBuild(s, out, true, 1).buildMs / 25);
    rmSync(out, { recursive: true, force: true });
    return { case: name, msPerBeam: spread(ms) };
  });
}

writeFileSync(join(ROOT, "bench", "results.json"), JSON.stringify(results, null, 2) + "\n");
const f = (x, d = 0) => Number(x).toFixed(d);
function printMemory() {
  console.log(`\n| 16×16, beams | CLI wall (ms) | peak RSS (MB), min–max |\n|---|---|---|`);
  for (const r of results.memoryInBeams) console.log(`| ${r.beams} | ${f(r.wallMs.median)} | ${f(r.peakRssMB.min)}–${f(r.peakRssMB.max)} |`);
}
if (!ONLY) {
const c = results.codesOnly, an = results.analysis;
console.log(`machine: ${results.machine.cpus} × ${results.machine.model}, ${results.machine.memGiB} GiB, Node ${results.machine.node}; median of ${RUNS} runs\n`);
console.log(`| benchmark | result | target |\n|---|---|---|`);
console.log(`| codes-only build, 4096 elements × 4096 beams → table.bin (load + build, in process; min–max) | ${f(c.buildMs)} ms (${f(c.buildMsSpread.min)}–${f(c.buildMsSpread.max)}), ${f(c.wordsPerSecond / 1e6, 1)} M words/s | ≥ 50 M words/s |`);
console.log(`| same, whole CLI process (node start-up included) | ${f(c.cliWallMs)} ms (${f(c.cliWallMsSpread.min)}–${f(c.cliWallMsSpread.max)}), ${f(c.cliWordsPerSecond / 1e6, 1)} M words/s | — |`);
console.log(`| peak memory of that build | ${f(c.peakRssMB)} MB | < 300 MB |`);
for (const d of results.devices) console.log(`| same build plus ${d.devices} device images (4 channels each; .bin, .mem, .hex), ${d.layout} layout: load + build / peak memory | ${f(d.buildMs)} ms / ${f(d.peakRssMB)} MB | < 300 MB |`);
console.log(`| full build with analysis, 32×32, 441 beams, all five table formats (CLI wall, min–max) | ${f(an.steercodeWallMs)} (${f(an.steercodeWallMsSpread.min)}–${f(an.steercodeWallMsSpread.max)}) ms | — |`);
console.log(`| numpy script (bench/baseline_numpy.py: codes and metrics, no table files), same scenario | ${f(an.baselineWallMs)} (${f(an.baselineWallMsSpread.min)}–${f(an.baselineWallMsSpread.max)}) ms | — |`);
console.log(`| ratio steercode / numpy script | ${f(an.ratio, 2)} | ≤ 0.5 |`);
console.log(`| sweep 6 bit depths × 3 steps (18 parts × 441 beams), CLI wall | ${f(results.sweep.sweepWallMs)} ms = ${f(results.sweep.ratio, 2)} × one build | ≤ 6 × |`);
console.log(`| bad input refused (4096-element scenario, broken calibration), exit 2 | ${f(results.badInput.cliWallMs)} ms | < 1 s |`);
console.log(`| baseline vs steercode: PSL |Δ| median / max | ${f(an.baselineVsSteercode.pslAbsDiffDbMedian, 3)} / ${f(an.baselineVsSteercode.pslAbsDiffDbMax, 3)} dB | — |`);
console.log(`| baseline vs steercode: pointing |Δ| median / max | ${f(an.baselineVsSteercode.pointingAbsDiffDegMedian, 4)} / ${f(an.baselineVsSteercode.pointingAbsDiffDegMax, 4)} deg | — |`);
console.log(`| REV calibration, 4096 elements × 16 codes: solve (in process) | ${f(results.calibrate.solveMs)} ms | well under 1 s |`);
console.log(`| same, CSV parse + solve + cal.csv text (in process) / whole CLI process | ${f(results.calibrate.inProcessMs)} / ${f(results.calibrate.cliWallMs)} ms | — |`);
printLadder(results.ladder);
printMemory();
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
if (ONLY === "ladder") printLadder(results.ladder);
if (ONLY === "memory") printMemory();
if (ONLY === "diff" || (!ONLY && results.diff)) {
  const d = results.diff;
  console.log(`\n| diff of two 64×64 × 2601-beam builds (${(d.words / 1e6).toFixed(1)} M words, ${(d.wordsChanged / 1e6).toFixed(1)} M changed) | wall (ms) | peak RSS (MB) |\n|---|---|---|`);
  for (const [k, label] of [["summary", "summary (prose)"], ["changesCsv", "-o: changes.csv + diff.json"], ["json", "--json (every change)"]]) console.log(`| ${label} | ${d[k].ms.toFixed(0)} | ${d[k].peakRssMB.toFixed(0)} |`);
}
if ((ONLY === "lists" || !ONLY) && results.elementLists) {
  console.log(`\n| 64×64 at 0.5 λ, 25 beams, analysis (one thread, in process) | ms a beam, median (min–max) |\n|---|---|`);
  for (const r of results.elementLists) console.log(`| ${r.case} | ${f(r.msPerBeam.median, 1)} (${f(r.msPerBeam.min, 1)}–${f(r.msPerBeam.max, 1)}) |`);
}
if (!ONLY) await import("./inputs.js");
if (!ONLY || ONLY === "report") await import("./report.js");
