import { deriveFacts } from "../core/facts.js";
import { makeManifest, refuseBuildAnalysis, runBuild, type Manifest } from "../io/build.js";
import { InputError } from "../core/errors.js";
import { UsageError } from "./usage.js";
import { loadScenario } from "../io/scenario.js";
import { EARLY_WORK_MS, roughWork } from "../io/analysis-pool.js";
import { dropSpares, prestartWorkers } from "../io/spare-workers.js";
import { checkTarget } from "../io/outdir.js";
import { fmt, printJson, progress, SAFETY, warn, type Io } from "./shared.js";
import type { Distribution } from "../core/pattern/summary.js";
import type { DiffScan } from "../io/diff.js";
import { negativeGainLossNote, theoryRows, type Theory } from "../core/theory.js";
import { M, METRICS } from "../core/pattern/analyze.js";
import { elementSidelobeNote, pulledAtPeaks, pullWarning } from "../core/pattern/pull.js";
import type { OptimizedSummary } from "../core/quantize/optimized.js";
import type { BandReport } from "../io/build.js";

export interface BuildArgs {
  scenario: string;
  out: string;
  jobs: number;
  analysis: boolean;
  compare: string | null;
}

export async function buildCommand(io: Io, args: BuildArgs): Promise<number> {
  // --compare "" (or with no value) built without the comparison asked for (exit 0)
  if (args.compare === "") throw new UsageError("--compare: expected an earlier build folder, got an empty string");
  checkTarget(args.out, "build");
  // the comparison's modules only for --compare
  if (args.compare) (await compareModules()).readManifest(args.compare);
  // the analysis starts its workers itself (or takes those started with the command), when the work pays for them (analysis-pool.ts)
  try {
    return await buildWith(io, args);
  } finally {
    // workers started for a build that stopped before its analysis took them
    dropSpares();
  }
}

async function buildWith(io: Io, args: BuildArgs): Promise<number> {
  // the analysis workers start as soon as the size of the job is known, before the
  // calibration file is read, when it is large enough to pay for them (EARLY_WORK_MS)
  const onSized = args.jobs > 1 && args.analysis ? (elements: number, beams: number, frequencies: number) => {
    if (roughWork(elements, beams * frequencies) >= EARLY_WORK_MS) prestartWorkers(args.jobs - 1);
  } : undefined;
  const loaded = loadScenario(args.scenario, onSized ? { onSized } : {});
  refuseBuildAnalysis(loaded, args.analysis);
  let diff: DiffScan | null = null;
  const { scanDiff, incompatibility, readManifest, writeDiffFiles, diffLines } = args.compare ? await compareModules() : ({} as Awaited<ReturnType<typeof compareModules>>);
  if (args.compare) {
    // before any work: can the new tables be compared word by word with the earlier ones?
    const why = incompatibility(readManifest(args.compare), makeManifest(loaded, "", [], {}, false));
    if (why.length) throw new InputError({ file: `${args.compare} vs ${args.scenario}`, message: `--compare: these builds cannot be compared word by word: ${why.join("; ")}` });
  }
  const facts = deriveFacts(loaded.plan, { squint: false }); // the warnings only
  const bar = progress(io, "build");
  let result;
  try {
    result = await runBuild(loaded, args.out, {
      analysis: args.analysis,
      jobs: args.jobs,
      onProgress: bar.update,
      ...(args.compare
        ? {
            extraFiles: (tmp: string, manifest: Manifest) => {
              // the new tables are complete in the staged folder: compare them with the earlier build
              diff = scanDiff(args.compare!, tmp, manifest, args.out);
              return writeDiffFiles(tmp, diff, args.compare!, args.out);
            },
          }
        : {}),
    });
  } finally {
    bar.stop();
  }
  const m = result.manifest;
  const gainNote = result.metrics ? negativeGainLossNote(result.theory, countNegative(result.metrics), m.counts.beams * m.counts.frequencies) : null;
  // with an element pattern: beams whose realized peak lies outside the array's own half-power main lobe
  const mt = result.metrics;
  const pulls = mt ? pulledAtPeaks(loaded.plan, mt, METRICS, M.peak_u, M.peak_v) : [];
  const pull = mt ? pullWarning(loaded.plan, pulls, (fi, b) => mt[(fi * m.counts.beams + b) * METRICS + M.psl_db]!) : null;
  const sidelobes = mt ? elementSidelobeNote(loaded.plan, pulls, mt, METRICS, M.psl_db, M.psl_ideal_db) : null;
  const warnings = [...facts.warnings, ...(pull ? [pull] : []), ...(sidelobes ? [sidelobes] : [])];
  if (io.json) {
    printJson(io, { ok: true, dir: args.out, notes: gainNote ? [gainNote] : [], manifest: m, compare: diff ? { against: args.compare, identical: (diff as DiffScan).identical, summary: (diff as DiffScan).summary } : null, summary: result.summary, worst: result.summary ? worstBeams(result.summary, m.counts.beams, m.frequenciesHz) : null, ...(result.optimized ? { optimized: result.optimized.summary } : {}), band: result.band, theory: result.theory, warnings, safety: SAFETY });
    return 0;
  }
  const lines = [
    `wrote ${args.out}: ${m.counts.words} words (${m.counts.frequencies} frequenc${m.counts.frequencies === 1 ? "y" : "ies"} × ${m.counts.beams} beams × ${m.counts.elements} elements), ${m.layout.bits}-bit words`,
    ...Object.entries(m.files)
      .filter(([k]) => !k.startsWith("inputs/"))
      .map(([k, f]) => `  ${k.padEnd(12)} ${String(f.bytes).padStart(10)} bytes  sha256 ${f.sha256.slice(0, 16)}…${f.crc32 ? `  crc32 ${f.crc32}` : ""}`),
    ...m.perFrequency.map((p) => `  ${(Number(p.frequencyHz) / 1e9).toPrecision(6)} GHz: G_ref ${fmt(p.gRefDb, 3)} dB (element ${p.gRefElement}), ${p.clipped} clipped`),
  ];
  if (result.summary) {
    lines.push("", ...summaryLines(result.summary, m.counts.beams, m.frequenciesHz));
    if (gainNote) lines.push(`note: ${gainNote}.`);
    lines.push("", ...theoryLines(result.theory));
  }
  if (result.optimized) lines.push("", ...optimizedLines(result.optimized.summary, m));
  if (result.band) lines.push("", ...bandLines(result.band, m.counts.beams, m.frequenciesHz));
  if (diff) lines.push("", `compared with ${args.compare} (changes.csv, diff.json):`, ...diffLines(diff).map((l) => "  " + l));
  for (const w of warnings) lines.push(warn(io, `warning: ${w}`));
  lines.push("", SAFETY);
  io.stdout(lines.join("\n") + "\n");
  return 0;
}

async function compareModules() {
  const [d, r, c] = await Promise.all([import("../io/diff.js"), import("../io/readbuild.js"), import("./diff.js")]);
  return { scanDiff: d.scanDiff, incompatibility: d.incompatibility, readManifest: r.readManifest, writeDiffFiles: c.writeDiffFiles, diffLines: c.diffLines };
}

/** Beams whose gain loss is negative (realized louder than the tapered ideal at the commanded direction). */
export function countNegative(metrics: Float64Array): number {
  let n = 0;
  for (let o = M.gain_loss_db; o < metrics.length; o += METRICS) if (metrics[o]! < 0) n++;
  return n;
}

const SHOWN: [string, string, number][] = [
  ["pointing_error_deg", "pointing error (deg)", 5],
  ["psl_db", "PSL realized (dB)", 2],
  ["sll_rise_db", "sidelobe rise (dB)", 2],
  ["gain_loss_db", "gain loss (dB)", 3],
  ["rms_phase_error_deg", "rms phase error (deg)", 3],
  ["rms_amp_error_db", "rms amp error (dB)", 3],
];

function where(index: number, beams: number, freqs: string[]): string {
  const fi = Math.floor(index / beams);
  return `beam ${index % beams}${freqs.length > 1 ? ` @ ${(Number(freqs[fi]) / 1e9).toPrecision(6)} GHz` : ""}`;
}

export function worstBeams(s: Record<string, Distribution>, beams: number, freqs: string[]): Record<string, { frequencyHz: string; beam: number; value: number }> {
  const out: Record<string, { frequencyHz: string; beam: number; value: number }> = {};
  for (const [k, d] of Object.entries(s)) if (d.worst >= 0 && d.max !== null) out[k] = { frequencyHz: freqs[Math.floor(d.worst / beams)]!, beam: d.worst % beams, value: d.max };
  return out;
}

export function summaryLines(s: Record<string, Distribution>, beams: number, freqs: string[]): string[] {
  const lines = [`${"over every beam".padEnd(24)} ${"median".padStart(10)} ${"p95".padStart(10)} ${"max".padStart(10)}  worst`];
  for (const [key, label, d] of SHOWN) {
    const x = s[key];
    if (!x) continue;
    lines.push(`${label.padEnd(24)} ${fmt(x.median, d).padStart(10)} ${fmt(x.p95, d).padStart(10)} ${fmt(x.max, d).padStart(10)}  ${x.worst >= 0 ? where(x.worst, beams, freqs) : "n/a"}`);
  }
  return lines;
}

/** What the optimized quantizer achieved over the grid (exact analysis of both code sets). */
export function optimizedLines(o: OptimizedSummary, m: Manifest): string[] {
  const q = m.quantizer;
  const limit = q.maxGainLossDb != null ? `gain loss ≤ ${q.maxGainLossDb} dB` : `gain loss ≤ nearest's + ${q.defaultExtraLossDb} dB`;
  return [
    `optimized quantizer (objective PSL, ${limit}, pointing ≤ nearest's + ${q.pointingAllowanceDeg}°, seed ${q.seed}):`,
    `  beams improved          ${o.improved} of ${o.beams}${o.untouched ? ` (${o.untouched} left at nearest: no sidelobe in view or nearest already over the gain limit)` : ""}`,
    `  worst PSL over the grid ${fmt(o.pslWorstBeforeDb, 2)} dB nearest → ${fmt(o.pslWorstAfterDb, 2)} dB optimized`,
    `  PSL lowered by          median ${fmt(o.pslGainMedianDb, 2)} dB, max ${fmt(o.pslGainMaxDb, 2)} dB`,
    `  gain loss, median       ${fmt(o.gainLossMedianBeforeDb, 3)} dB nearest → ${fmt(o.gainLossMedianAfterDb, 3)} dB optimized (max ${fmt(o.gainLossMaxAfterDb, 3)} dB)`,
    `  pointing error, max     ${fmt(o.pointingMaxBeforeDeg, 4)}° nearest → ${fmt(o.pointingMaxAfterDeg, 4)}° optimized`,
  ];
}

export function theoryLines(t: Theory): string[] {
  const lines = [`estimates for this quantizer (${t.quantizer}) and part, beside the measurements above:`];
  for (const r of theoryRows(t)) {
    const v = r.v;
    const value = v.value === null ? "n/a".padEnd(11) : `${fmt(v.value, r.digits)} ${v.unit}`.padEnd(11);
    const eta = r.key === "randomSidelobeFloorDb" && v.value !== null ? `, η = ${fmt(t.taperEfficiency, 3)}` : "";
    const text = v.value === null ? (v.note ?? "") : `${v.formula}${eta}; ${v.source}${v.note ? ` (${v.note})` : ""}`;
    lines.push(`  ${r.label.padEnd(30)} ${value} ${text}`);
  }
  return lines;
}

/** The band analysis: per beam, its worst pointing error and gain loss across the band; their spread over the beams. */
export function bandLines(b: BandReport, beams: number, freqs: string[]): string[] {
  const ghz = (x: number | string | null) => (x === null ? "n/a" : `${(Number(x) / 1e9).toPrecision(6)} GHz`);
  const f = b.frequenciesHz;
  const lines = [`band ${ghz(f[0]!)} … ${ghz(f[f.length - 1]!)}, ${f.length} point(s) (squint.csv): each beam's worst value across the band`];
  lines.push(`${"over every beam".padEnd(24)} ${"median".padStart(10)} ${"p95".padStart(10)} ${"max".padStart(10)}  worst`);
  const row = (label: string, d: BandReport["worstPointingDeg"], digits: number, at: (i: number) => number | null) =>
    `${label.padEnd(24)} ${fmt(d.median, digits).padStart(10)} ${fmt(d.p95, digits).padStart(10)} ${fmt(d.max, digits).padStart(10)}  ${d.worst >= 0 ? `${where(d.worst, beams, freqs)} played at ${ghz(at(d.worst))}` : "n/a"}`;
  lines.push(row("pointing error (deg)", b.worstPointingDeg, 4, (i) => b.perBeam[i]!.worstPointingAtHz));
  lines.push(row("gain loss (dB)", b.worstGainLossDb, 3, (i) => b.perBeam[i]!.worstGainLossAtHz));
  return lines;
}
