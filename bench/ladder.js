// The ladder (issue 16): steercode against a good numpy script at every size. Panels of
// 16², 32², 64² and 128² elements × 441 (21×21 az/el, ±50° in 5° steps) and 4096 (64×64
// az/el, ±63° in 2° steps) beams; Taylor −30 dB + calibration; table.bin only; analysis on.
// Each run times `steercode build` (whole CLI process, default --jobs) and
// bench/baseline_numpy.py (Debian python3-numpy, whole process) back to back, the order
// alternating between runs, so both see the same machine state; figures are medians with
// min–max over BENCH_RUNS runs, and the ratio steercode / numpy of the medians (plus the
// min–max of the per-run ratios). Peak RSS of both processes is recorded.
// Run by bench/run.js; alone: `BENCH_ONLY=ladder npm run bench`.
import { mkdtempSync, rmSync, readFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { parse } from "csv-parse/sync";
import { EXTRA_CA_CERTS, ROOT, benchScenario, spread, timeCmd } from "./common.js";

const PY = "/usr/bin/python3";
const RSS_PY = "import resource,runpy,sys; sys.argv=sys.argv[1:]; runpy.run_path(sys.argv[0], run_name='__main__'); sys.stderr.write('\\nMAXRSS %d\\n' % resource.getrusage(resource.RUSAGE_SELF).ru_maxrss)";

export const GRIDS = {
  441: { kind: "azel", az: { from: -50, to: 50, step: 5 }, el: { from: -50, to: 50, step: 5 } },
  4096: { kind: "azel", az: { from: -63, to: 63, step: 2 }, el: { from: -63, to: 63, step: 2 } },
};

export function benchLadder(runs = 3, sides = [16, 32, 64, 128], beamCounts = [441, 4096]) {
  const tmp = mkdtempSync(join(tmpdir(), "steercode-ladder-"));
  // the baseline's Taylor window must be scipy's (checked outside the timing)
  const mine = JSON.parse(timeCmd(PY, [join(ROOT, "bench", "baseline_numpy.py"), "--taylor", "32", "4", "30"]).stdout);
  const ref = JSON.parse(timeCmd(PY, ["-c", "import json; from scipy.signal.windows import taylor; print(json.dumps(taylor(32, nbar=4, sll=30).tolist()))"]).stdout);
  const taylorDiff = Math.max(...mine.map((x, i) => Math.abs(x - ref[i])));
  if (!(taylorDiff < 1e-12)) throw new Error(`baseline Taylor window differs from scipy's by ${taylorDiff}`);
  const cases = [];
  for (const side of sides)
    for (const nb of beamCounts) cases.push({ side, beams: nb, scenario: benchScenario(tmp, `ladder-${side}-${nb}`, side, GRIDS[nb], ["bin"]) });
  const times = cases.map(() => ({ ours: [], numpy: [], ratio: [], oursRss: 0, numpyRss: 0 }));
  for (let i = 0; i < runs; i++)
    cases.forEach((c, k) => {
      const out = join(tmp, "out");
      rmSync(out, { recursive: true, force: true });
      const ours = () => timeCmd(process.execPath, [join(ROOT, "bench", "rss.cjs"), "build", c.scenario, "-o", out]);
      const numpy = () => timeCmd(PY, ["-c", RSS_PY, join(ROOT, "bench", "baseline_numpy.py"), c.scenario, join(tmp, "numpy.csv")]);
      const [a, b] = i % 2 === 0 ? [ours(), numpy()] : (() => { const y = numpy(); return [ours(), y]; })();
      const t = times[k];
      t.ours.push(a.ms);
      t.numpy.push(b.ms);
      t.ratio.push(a.ms / b.ms);
      t.oursRss = Math.max(t.oursRss, a.maxRssKb ?? 0);
      t.numpyRss = Math.max(t.numpyRss, b.maxRssKb ?? 0);
      if (i === 0) {
        // the two tools' results agree (the baseline's peaks are grid-limited; ours are refined)
        const x = parse(readFileSync(join(out, "beams.csv")), { columns: true, comment: "#" });
        const y = parse(readFileSync(join(tmp, "numpy.csv")), { columns: true });
        if (x.length !== y.length) throw new Error(`ladder ${c.side}²×${c.beams}: ${x.length} vs ${y.length} rows`);
        const d = (col) => Math.max(...x.map((r, j) => Math.abs(Number(r[col]) - Number(y[j][col]))));
        c.agreement = { pslAbsDiffDbMax: d("psl_db"), pointingAbsDiffDegMax: d("pointing_error_deg"), gainLossAbsDiffDbMax: d("gain_loss_db") };
      }
    });
  rmSync(tmp, { recursive: true, force: true });
  // a bare Node start, as timed here and with NODE_EXTRA_CA_CERTS as the machine set it (see common.js)
  const bare = [], withCa = [];
  for (let i = 0; i < 7; i++) {
    bare.push(timeCmd(process.execPath, ["-e", "0"]).ms);
    if (EXTRA_CA_CERTS) withCa.push(timeCmd(process.execPath, ["-e", "0"], { env: { ...process.env, NODE_EXTRA_CA_CERTS: EXTRA_CA_CERTS } }).ms);
  }
  return {
    note: "whole processes, interleaved, medians with min–max; steercode: `build`, default --jobs, table.bin + beams.csv; numpy: bench/baseline_numpy.py, codes + the same metrics; NODE_EXTRA_CA_CERTS cleared (bench/common.js)",
    nodeStartMs: { bare: spread(bare), withExtraCaCerts: withCa.length ? spread(withCa) : null },
    taylorWindowMaxDiffVsScipy: taylorDiff,
    rows: cases.map((c, k) => {
      const t = times[k];
      const ours = spread(t.ours), numpy = spread(t.numpy), ratio = spread(t.ratio);
      return { elements: c.side * c.side, side: c.side, beams: c.beams, steercodeMs: ours, numpyMs: numpy, ratio: ours.median / numpy.median, ratioPerRun: ratio, steercodePeakRssMB: t.oursRss / 1024, numpyPeakRssMB: t.numpyRss / 1024, agreement: c.agreement };
    }),
  };
}

export function printLadder(l) {
  const f = (x, d = 0) => Number(x).toFixed(d);
  const s = (x) => `${f(x.median)} (${f(x.min)}–${f(x.max)})`;
  console.log(`\n| elements | beams | steercode (ms) | numpy script (ms) | ratio (per-run range) | peak RSS steercode / numpy (MB) |\n|---|---|---|---|---|---|`);
  for (const r of l.rows) console.log(`| ${r.side}×${r.side} | ${r.beams} | ${s(r.steercodeMs)} | ${s(r.numpyMs)} | ${f(r.ratio, 2)} (${f(r.ratioPerRun.min, 2)}–${f(r.ratioPerRun.max, 2)}) | ${f(r.steercodePeakRssMB)} / ${f(r.numpyPeakRssMB)} |`);
  if (l.nodeStartMs) console.log(`\nbare \`node -e 0\`: ${s(l.nodeStartMs.bare)} ms${l.nodeStartMs.withExtraCaCerts ? `; with this machine's NODE_EXTRA_CA_CERTS ${s(l.nodeStartMs.withExtraCaCerts)} ms` : ""}`);
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const l = benchLadder(Number(process.env.BENCH_RUNS ?? 3), process.env.LADDER_SIDES ? process.env.LADDER_SIDES.split(",").map(Number) : undefined, process.env.LADDER_BEAMS ? process.env.LADDER_BEAMS.split(",").map(Number) : undefined);
  printLadder(l);
}
