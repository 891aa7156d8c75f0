// Calibration benchmark: a 4096-element (64 × 64) REV data set with 16 codes per element
// (simulated: invented offsets, 0.02 dB noise), solved in process (parse + solve + render)
// and as a whole CLI process. Run by bench/run.js; also standalone:
//   node bench/calibrate.js   (merges its figures into bench/results.json)
import { spawnSync } from "node:child_process";
import { mkdtempSync, writeFileSync, readFileSync, rmSync, existsSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { mulberry32 } from "../dist/core/quantize/randomized.js";
import { loadScenario } from "../dist/io/scenario.js";
import { runCalibrate } from "../dist/workflows/calibrate.js";
import { revMethod, referOffsets } from "../dist/core/calibrate/index.js";

import { ROOT, BIN, median } from "./common.js";

export function benchCalibrate(runs = 3) {
  const dir = mkdtempSync(join(tmpdir(), "steercode-bench-cal-"));
  const s = join(dir, "scenario.json");
  writeFileSync(s, JSON.stringify({
    format: "steercode-scenario/1", name: "bench calibrate (invented)", frequency: "28 GHz",
    array: { lattice: { kind: "rectangular", columns: 64, rows: 64, dx: "0.5 lambda", dy: "0.5 lambda" } },
    beams: { kind: "uv", u: { from: 0, to: 0, step: 1 }, v: { from: 0, to: 0, step: 1 } },
    phaseShifter: { bits: 6 }, attenuator: { bits: 6, step: "0.5 dB" },
    word: { bits: 16, fields: [{ name: "phase", shift: 0, width: 6 }, { name: "atten", shift: 8, width: 6 }] },
  }));
  const plan = loadScenario(s).plan;
  const n = plan.elements.count;
  const r = mulberry32(4096);
  const gauss = () => Math.sqrt(-2 * Math.log(1 - r())) * Math.cos(2 * Math.PI * r());
  const ph = Array.from({ length: n }, () => r() * 2 * Math.PI), g = Array.from({ length: n }, () => 10 ** (gauss() * 0.05));
  let E0r = 0, E0i = 0;
  for (let i = 0; i < n; i++) { E0r += g[i] * Math.cos(ph[i]); E0i += g[i] * Math.sin(ph[i]); }
  const codes = Array.from({ length: 16 }, (_, k) => k * 4);
  const lines = ["# SIMULATED bench readings (invented)", "element,phase_code,power_db"];
  for (let i = 0; i < n; i++)
    for (const c of codes) {
      const d = (c * 2 * Math.PI) / 64;
      const er = E0r + g[i] * (Math.cos(ph[i] + d) - Math.cos(ph[i])), ei = E0i + g[i] * (Math.sin(ph[i] + d) - Math.sin(ph[i]));
      lines.push(`${i},${c},${(10 * Math.log10(er * er + ei * ei) + 0.02 * gauss()).toFixed(4)}`);
    }
  const data = join(dir, "rev.csv");
  writeFileSync(data, lines.join("\n") + "\n");
  const probe = { kind: "far", azDeg: 0, elDeg: 0 };
  // the pure solve: readings already in arrays
  const input = Array.from({ length: n }, (_, i) => ({
    index: i, id: i, enabled: true,
    readings: { delta: Float64Array.from(codes, (c) => (c * 2 * Math.PI) / 64), rho: new Float64Array(16).fill(1), powerDb: Float64Array.from(codes, (_, k) => Number(lines[2 + i * 16 + k].split(",")[2])) },
  }));
  const solve = [], inproc = [], cli = [];
  let flagged = 0, residual = 0;
  for (let k = 0; k < runs; k++) {
    let t = performance.now();
    const m = revMethod(input);
    if (!m.ok) throw new Error("bench data did not solve");
    referOffsets(m.fields, { elements: plan.elements, probe, k: (2 * Math.PI * 28e9) / 299792458, codeZero: () => ({ re: 1, im: 0 }) });
    solve.push(performance.now() - t);
    t = performance.now();
    const res = runCalibrate({ scenario: s, data, method: "rev", probe });
    inproc.push(performance.now() - t);
    flagged = res.flagged.length;
    residual = res.rmsResidualDb;
    t = performance.now();
    const c = spawnSync(process.execPath, [BIN, "calibrate", s, "--data", data, "--method", "rev", "-o", join(dir, "cal.csv")], { encoding: "utf8" });
    cli.push(performance.now() - t);
    if (c.status !== 0) throw new Error(c.stderr);
  }
  rmSync(dir, { recursive: true, force: true });
  return { elements: n, codesPerElement: 16, readings: n * 16, solveMs: median(solve), inProcessMs: median(inproc), cliWallMs: median(cli), rmsResidualDb: residual, flagged, target: { solveMs: 1000 } };
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const res = benchCalibrate(Number(process.env.BENCH_RUNS ?? 3));
  const p = join(ROOT, "bench", "results.json");
  const all = existsSync(p) ? JSON.parse(readFileSync(p, "utf8")) : {};
  all.calibrate = res;
  writeFileSync(p, JSON.stringify(all, null, 2) + "\n");
  console.log(`| REV calibration, 4096 elements × 16 codes: solve (in process) | ${res.solveMs.toFixed(0)} ms | well under 1 s |`);
  console.log(`| same, CSV parse + solve + cal.csv text (in process) | ${res.inProcessMs.toFixed(0)} ms | — |`);
  console.log(`| same, whole CLI process | ${res.cliWallMs.toFixed(0)} ms | — |`);
}
