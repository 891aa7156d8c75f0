/**
 * `build`: scenario → staged output folder → tables, analysis, manifest → rename
 * into place. The input files are copied into `inputs/` so that `verify` can
 * recompute the tables from the folder alone, on any machine.
 */
import { mkdirSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { TableRun, type FrequencySummary } from "../core/engine.js";
import { setImmediate as yieldNow } from "node:timers/promises";
import { enabledCount, type Plan } from "../core/plan.js";
import { INPUT_COPY, type LoadedScenario, type InputRole } from "./scenario.js";
import { isSystemError, StagedDir, writeProblem } from "./outdir.js";
import { makeWriters, openHashedFile, TABLE_FILES, type OpenSink } from "./tables.js";
import type { FileDigest } from "./hashed.js";
import { toolVersion } from "./version.js";
import { D } from "../core/exact.js";
import { stringify } from "csv-stringify/sync";
import { METRIC_COLUMNS, METRICS } from "../core/pattern/analyze.js";
import { quantile, summarise, type Distribution } from "../core/pattern/summary.js";
import { theoryFor, type Theory } from "../core/theory.js";
import { refuseOversizedAnalysis, refuseTooManyAnalysedBeams, ringSource, startAnalysis } from "./analysis-pool.js";
import { setTimeout as sleep } from "node:timers/promises";
import { fixed } from "./format.js";
import { bandSummary, SQUINT_COLUMNS, SQUINT_METRICS, type BandBeamSummary } from "../core/band.js";
import { OPT, OPT_FIELDS, POINTING_ALLOWANCE_DEG, DEFAULT_EXTRA_LOSS_DB, summariseOptimized, type OptimizedSummary } from "../core/quantize/optimized.js";
import type { CalibrationServed } from "../core/calibrate/per-frequency.js";
import { buildDeviceMap } from "../core/devices.js";
import { DeviceImageWriter } from "../formats/device-images.js";
import { deviceManifest, type DeviceManifest } from "../workflows/devices.js";

export { stableJson } from "./json.js";
import { stableJson } from "./json.js";

export { INPUT_COPY };
export const SCENARIO_COPY = "inputs/scenario.json";

export interface ManifestFile {
  bytes: number;
  sha256: string;
  crc32?: string;
}

export interface Manifest {
  format: "steercode-manifest/1";
  tool: { name: "steercode"; version: string };
  name: string;
  scenario: { source: string; copy: string; sha256: string };
  inputs: { role: InputRole; ref: string; copy: string; sha256: string; comments: string[] }[];
  /** perFrequency only when cal.csv has a frequency_hz column: which listed set(s) served each table frequency. */
  calibration: { ref: string; sha256: string; comments: string[]; perFrequency?: CalibrationServed[] } | null;
  counts: { frequencies: number; beams: number; elements: number; enabledElements: number; words: number };
  /** Element ids in table order; disabled ones listed apart. */
  elementIds: number[];
  disabledIds: number[];
  frequenciesHz: string[];
  layout: { bits: number; bytes: number; off: number; fields: { name: string; shift: number; width: number; value?: number }[] };
  phaseShifter: { bits: number; lsbDeg: number; measuredStates: boolean };
  attenuator: { bits: number; stepDb: number; rangeDb: number; measuredStates: boolean };
  taper: Plan["taper"];
  quantizer: { method: string; seed: number | null; objective?: string; maxGainLossDb?: number | null; defaultExtraLossDb?: number; pointingAllowanceDeg?: number };
  /** optimized quantizer only: what it achieved, per frequency and beam (exact analysis, dB / deg; null where no value exists). */
  optimized?: OptimizedManifest;
  perFrequency: { frequencyHz: string; gRefDb: number; gRefElement: number; clipped: number }[];
  analysis: boolean;
  files: Record<string, ManifestFile>;
  extra?: Record<string, unknown>;
  /** Per-device beam memories (only when the scenario has `devices`). */
  devices?: DeviceManifest;
}

export interface OptimizedManifest {
  summary: OptimizedSummary;
  perFrequency: {
    frequencyHz: string;
    pslBeforeDb: (number | null)[];
    pslAfterDb: (number | null)[];
    gainLossBeforeDb: (number | null)[];
    gainLossAfterDb: (number | null)[];
    changedElements: number[];
  }[];
}

function rounded(x: number, d: number): number | null {
  return Number.isFinite(x) ? Number(x.toFixed(d)) || 0 : null;
}

/** The manifest's record of an optimized build, from TableRun.optimized. */
export function optimizedManifest(plan: Plan, ft: string[], rec: Float64Array): OptimizedManifest {
  const nb = plan.beams.count;
  return {
    summary: summariseOptimized(rec),
    perFrequency: ft.map((f, fi) => {
      const at = (k: number, d: number) => Array.from({ length: nb }, (_, b) => rounded(rec[(fi * nb + b) * OPT_FIELDS + k]!, d));
      return {
        frequencyHz: f,
        pslBeforeDb: at(OPT.pslBeforeDb, 4),
        pslAfterDb: at(OPT.pslAfterDb, 4),
        gainLossBeforeDb: at(OPT.gainLossBeforeDb, 5),
        gainLossAfterDb: at(OPT.gainLossAfterDb, 5),
        changedElements: Array.from({ length: nb }, (_, b) => rec[(fi * nb + b) * OPT_FIELDS + OPT.changed]!),
      };
    }),
  };
}

export function hex32(x: number): string {
  return "0x" + (x >>> 0).toString(16).toUpperCase().padStart(8, "0");
}

export function frequencyText(plan: Plan): string[] {
  return plan.frequenciesExact.map((f) => new D(f).toFixed());
}

export interface ThreadsForTest {
  spawnAfterChunks: number;
  stats: { workers: number; workerBeams: number };
}

export interface BuildOptions {
  analysis: boolean;
  /** threads for the analysis at most (the main thread included); how many run is measured (analysis-pool.ts) */
  jobs?: number;
  /** Test hook: start the analysis workers after this many main-thread chunks, whatever the timing says; `stats` receives what they did. */
  threadsForTest?: ThreadsForTest;
  /** Test hook: make the analysis fail midway (fault-injection test). */
  failAnalysisForTest?: boolean;
  onProgress?: (done: number, total: number) => void;
  /** Extra files (name → contents) written into the folder before the manifest. */
  extraFiles?: (tmpDir: string, manifest: Manifest) => Promise<Record<string, FileDigest>> | Record<string, FileDigest>;
}

export interface BuildResult {
  dir: string;
  manifest: Manifest;
  perFrequency: FrequencySummary[];
  /** [frequency][beam][metric], METRIC_COLUMNS order; null with --no-analysis. */
  metrics: Float64Array | null;
  summary: Record<string, Distribution> | null;
  theory: Theory;
  /** optimized quantizer: per-beam records (OPT_FIELDS a beam) and their grid-wide summary */
  optimized: { records: Float64Array; summary: OptimizedSummary } | null;
  /** With a band: per (table frequency, beam) the worst pointing and gain loss across it. */
  band: BandReport | null;
}

export interface BandReport {
  frequenciesHz: string[];
  /** over all (table frequency, beam): the distribution of each beam's worst value across the band */
  worstPointingDeg: Distribution;
  worstGainLossDb: Distribution;
  perBeam: BandBeamSummary[];
}

export function makeManifest(loaded: LoadedScenario, scenarioSource: string, perFrequency: FrequencySummary[], files: Record<string, ManifestFile>, analysis: boolean): Manifest {
  const plan = loaded.plan;
  const cal = loaded.inputs.find((i) => i.role === "calibration");
  const ft = frequencyText(plan);
  return {
    format: "steercode-manifest/1",
    tool: { name: "steercode", version: toolVersion() },
    name: plan.name,
    scenario: { source: scenarioSource, copy: SCENARIO_COPY, sha256: loaded.scenario.sha256 },
    inputs: loaded.inputs.map((i) => ({ role: i.role, ref: i.ref, copy: INPUT_COPY[i.role], sha256: i.file.sha256, comments: i.comments })),
    calibration: cal ? { ref: cal.ref, sha256: cal.file.sha256, comments: cal.comments, ...(plan.calServed ? { perFrequency: plan.calServed } : {}) } : null,
    counts: {
      frequencies: plan.frequenciesHz.length,
      beams: plan.beams.count,
      elements: plan.elements.count,
      enabledElements: enabledCount(plan),
      words: plan.frequenciesHz.length * plan.beams.count * plan.elements.count,
    },
    elementIds: Array.from(plan.elements.ids),
    disabledIds: Array.from(plan.elements.ids).filter((_, i) => !plan.elements.enabled[i]),
    frequenciesHz: ft,
    layout: { bits: plan.word.bits, bytes: plan.word.bytes, off: plan.word.off, fields: plan.word.fields },
    phaseShifter: { bits: plan.phaseBits, lsbDeg: 360 / 2 ** plan.phaseBits, measuredStates: !!plan.phaseStates },
    attenuator: { bits: plan.attenBits, stepDb: plan.attenStepDb, rangeDb: (2 ** plan.attenBits - 1) * plan.attenStepDb, measuredStates: !!plan.attenStates },
    taper: plan.taper,
    quantizer:
      plan.quantizer.method === "optimized"
        ? { method: "optimized", seed: plan.quantizer.seed, objective: plan.quantizer.objective ?? "psl", maxGainLossDb: plan.quantizer.maxGainLossDb ?? null, ...(plan.quantizer.maxGainLossDb === undefined ? { defaultExtraLossDb: DEFAULT_EXTRA_LOSS_DB } : {}), pointingAllowanceDeg: POINTING_ALLOWANCE_DEG }
        : { method: plan.quantizer.method, seed: plan.quantizer.method === "randomized" ? plan.quantizer.seed : null },
    perFrequency: perFrequency.map((p, i) => ({ frequencyHz: ft[i]!, gRefDb: p.gRefDb, gRefElement: p.gRefElement >= 0 ? plan.elements.ids[p.gRefElement]! : -1, clipped: p.clipped })),
    analysis,
    files,
  };
}

/** Where the table engine is: set around every beam the writers are given (verify locates differences with it). */
export interface BeamCursor {
  fi: number;
  b: number;
  inBeam: boolean;
}

export interface ProduceOptions {
  analysis: boolean;
  jobs?: number;
  failAnalysisForTest?: boolean;
  threadsForTest?: ThreadsForTest;
  onProgress?: (done: number, total: number) => void;
  /** where the bytes go: files on disk (build) or comparisons with the files there (verify) */
  open?: OpenSink;
  cursor?: BeamCursor;
}

export interface Produced {
  manifest: Manifest;
  files: Record<string, ManifestFile>;
  perFrequency: FrequencySummary[];
  metrics: Float64Array | null;
  summary: Record<string, Distribution> | null;
  theory: Theory;
  optimized: Float64Array | null;
  band: BandReport | null;
}

/**
 * Every output of a build (tables, beams.csv) and its manifest, streamed beam by beam
 * into `dir` through `open`. `build` writes files with it; `verify` runs the very same
 * code with sinks that compare each byte with the file already in the folder, so any
 * output added here is verified without further work.
 */
export async function produceOutputs(loaded: LoadedScenario, dir: string, scenarioSource: string, opts: ProduceOptions): Promise<Produced> {
  const plan = loaded.plan;
  const open = opts.open ?? openHashedFile;
  const cursor = opts.cursor ?? { fi: 0, b: 0, inBeam: false };
  let job: ReturnType<typeof startAnalysis> | null = null;
  let devices: DeviceImageWriter | null = null;
  try {
    const ft = frequencyText(plan);
    const total = plan.frequenciesHz.length * plan.beams.count;
    // an optimized build computes each beam's codes once, in the analysis chunks, and the tables take them from there
    const ring = opts.analysis && plan.quantizer.method === "optimized";
    job = opts.analysis ? startAnalysis(plan, opts.jobs ?? 1, opts.onProgress, { failForTest: !!opts.failAnalysisForTest, ...(opts.threadsForTest ? { spawnAfterChunksForTest: opts.threadsForTest.spawnAfterChunks } : {}), ring, band: true }) : null;
    const writers = makeWriters(dir, { plan, frequencyText: ft }, open);
    // device images are written with positional writes straight into the folder: a real
    // build only (no `open`); verify decodes the images itself (workflows/devices.ts)
    const deviceMap = plan.devices ? buildDeviceMap(plan.devices, total) : null;
    devices = deviceMap && !opts.open ? new DeviceImageWriter(dir, { map: deviceMap, wordBits: plan.word.bits, wordBytes: plan.word.bytes, beams: plan.beams.count }) : null;
    const run = new TableRun(plan, (fi, b, words, codes) => {
      cursor.fi = fi;
      cursor.b = b;
      cursor.inBeam = true;
      for (const w of writers) w.beam(fi, b, words, codes);
      devices?.beam(fi, b, words);
      cursor.inBeam = false;
    }, plan.outputs.includes("csv"), job?.ring ? ringSource(job.ring, plan.beams.count) : null);
    // the analysis first, on this thread, until it has decided whether workers pay (analysis-pool.ts);
    // once they run, this thread writes the tables while they analyse
    if (job) while (!job.settled && job.help() > 0) await yieldNow();
    // slices of ~a few ms, yielding in between so SIGINT/SIGTERM are handled promptly
    const slice = Math.max(1, Math.floor(262144 / plan.elements.count));
    for (;;) {
      const before = run.done;
      if (run.step(slice)) break;
      if (!job) opts.onProgress?.(run.done, total);
      // waiting for codes from the analysis: compute a chunk here, or give the workers a moment
      if (run.done === before && job && job.help() === 0) await sleep(2);
      else await yieldNow();
    }
    const perFrequency = run.summaries;
    const files: Record<string, ManifestFile> = {};
    const bin = writers.find((w) => w.file === TABLE_FILES.bin);
    let binCrc: number | null = null;
    if (bin) {
      const d = bin.end();
      binCrc = d.crc32;
      files[bin.file] = { bytes: d.bytes, sha256: d.sha256, crc32: hex32(d.crc32) };
    }
    for (const w of writers) {
      if (w === bin) continue;
      // table.h states table.bin's CRC-32 (without table.bin it has kept the CRC of the words itself)
      if (binCrc !== null && "crc32OfBin" in w) (w as { crc32OfBin: number | null }).crc32OfBin = binCrc;
      const d = w.end();
      files[w.file] = { bytes: d.bytes, sha256: d.sha256 };
    }
    if (devices) {
      for (const [k, d] of Object.entries(devices.end(plan.elements.ids))) files[k] = { bytes: d.bytes, sha256: d.sha256, ...(d.withCrc ? { crc32: hex32(d.crc32) } : {}) };
      devices = null;
    }
    let metrics: Float64Array | null = null;
    let summary: Record<string, Distribution> | null = null;
    let band: BandReport | null = null;
    if (job) {
      metrics = await job.finish();
      if (opts.threadsForTest) Object.assign(opts.threadsForTest.stats, job.stats);
      const d = writeBeamsCsv(join(dir, "beams.csv"), plan, ft, metrics, run.optimized, open);
      files["beams.csv"] = { bytes: d.bytes, sha256: d.sha256 };
      summary = summarise(metrics, plan.element ? [] : ["scan_loss_db"]);
      if (job.squint && plan.band) {
        const s = writeSquintCsv(join(dir, "squint.csv"), plan, ft, job.squint, open);
        files["squint.csv"] = { bytes: s.bytes, sha256: s.sha256 };
        band = bandReport(plan, job.squint);
      }
    }
    const theory = theoryFor(plan);
    for (const i of loaded.inputs) files[INPUT_COPY[i.role]] = { bytes: i.file.bytes.length, sha256: i.file.sha256 };
    files[SCENARIO_COPY] = { bytes: loaded.scenario.bytes.length, sha256: loaded.scenario.sha256 };
    const manifest = makeManifest(loaded, scenarioSource, perFrequency, files, opts.analysis);
    if (summary) manifest.extra = { summary, theory, ...(band ? { band } : {}) };
    if (run.optimized) manifest.optimized = optimizedManifest(plan, ft, run.optimized);
    if (deviceMap) manifest.devices = deviceManifest(deviceMap, plan.word.bytes);
    return { manifest, files, perFrequency, metrics, summary, theory, optimized: run.optimized, band };
  } catch (e) {
    job?.cancel();
    devices?.close();
    throw e;
  }
}

/** What a build cannot analyse, refused before any work (the command calls it before its facts, which take seconds on millions of beams). */
export function refuseBuildAnalysis(loaded: LoadedScenario, analysis: boolean): void {
  // the optimized quantizer searches on the analysis grid: it needs it even with --no-analysis
  if (!analysis && loaded.plan.quantizer.method !== "optimized") return;
  refuseOversizedAnalysis(loaded.plan, loaded.scenario.name, { band: analysis });
  refuseTooManyAnalysedBeams(loaded.plan, loaded.scenario.name);
}

export async function runBuild(loaded: LoadedScenario, outDir: string, opts: BuildOptions): Promise<BuildResult> {
  refuseBuildAnalysis(loaded, opts.analysis);
  const stage = new StagedDir(outDir, "build");
  try {
    const tmp = stage.tmp;
    mkdirSync(join(tmp, "inputs"));
    // the bytes read (and hashed) once, not a second read of the path: a pipe reads empty the second time
    writeFileSync(join(tmp, SCENARIO_COPY), loaded.scenario.bytes);
    for (const i of loaded.inputs) writeFileSync(join(tmp, INPUT_COPY[i.role]), i.file.bytes);
    const p = await produceOutputs(loaded, tmp, loaded.scenario.name.split(/[\\/]/).pop() ?? "scenario.json", {
      analysis: opts.analysis,
      ...(opts.jobs !== undefined ? { jobs: opts.jobs } : {}),
      ...(opts.failAnalysisForTest ? { failAnalysisForTest: true } : {}),
      ...(opts.threadsForTest ? { threadsForTest: opts.threadsForTest } : {}),
      ...(opts.onProgress ? { onProgress: opts.onProgress } : {}),
    });
    const manifest = p.manifest;
    if (opts.extraFiles) {
      const extra = await opts.extraFiles(tmp, manifest);
      for (const [k, d] of Object.entries(extra)) p.files[k] = { bytes: d.bytes, sha256: d.sha256 };
    }
    writeFileSync(join(tmp, "manifest.json"), stableJson(manifest, null, 2) + "\n", { flag: "wx" });
    stage.commit();
    return { dir: outDir, manifest, perFrequency: p.perFrequency, metrics: p.metrics, summary: p.summary, theory: p.theory, optimized: p.optimized ? { records: p.optimized, summary: manifest.optimized!.summary } : null, band: p.band };
  } catch (e) {
    stage.abort();
    // a full disk, a quota, a folder made read-only meanwhile: the environment, not a bug
    if (isSystemError(e) && (!e.path || e.path.startsWith(stage.tmp))) throw writeProblem(e, outDir);
    throw e;
  }
}

export const BEAMS_COLUMNS = ["frequency_hz", "beam", "az_deg", "el_deg", "u", "v", ...METRIC_COLUMNS] as const;
/**
 * Extra beams.csv columns of an optimized build (only then, so other builds keep their
 * bytes): the nearest codes' PSL, gain loss and pointing error (psl_db, gain_loss_db and
 * pointing_error_deg are the optimized codes'), and how many enabled elements changed code.
 */
export const OPTIMIZED_COLUMNS = ["nearest_psl_db", "nearest_gain_loss_db", "nearest_pointing_error_deg", "changed_elements"] as const;
const OPTIMIZED_SOURCE: [number, number][] = [[OPT.pslBeforeDb, 4], [OPT.gainLossBeforeDb, 4], [OPT.pointingBeforeDeg, 7], [OPT.changed, 0]];

/** beams.csv columns for a plan: scan_loss_db only with an element pattern (v1 bytes otherwise). */
export function beamsColumns(plan: Plan): string[] {
  return BEAMS_COLUMNS.filter((c) => c !== "scan_loss_db" || plan.element !== null);
}

/**
 * beams.csv and squint.csv rows hold only numbers we format ourselves (exact decimal
 * frequencies, integers, `fixed` text) or an empty cell: no separator, quote or line break
 * can occur, so csv-stringify writes them unquoted, and joining the cells with "," and
 * ending the row with "\n" gives the same bytes without its ~2 µs a row (a test compares
 * both writers with csv-stringify's output over random values, NaN and -0 included).
 * The headers still go through csv-stringify. Rows go out 256 at a time: memory does not
 * grow with the beam count.
 */
const ROWS_A_WRITE = 256;

/** beams.csv: one row per (frequency, beam). A metric that does not exist (no sidelobe in visible space) is an empty cell. */
export function writeBeamsCsv(path: string, plan: Plan, ft: string[], metrics: Float64Array, optimized: Float64Array | null = null, open: OpenSink = openHashedFile): FileDigest {
  const f = open(path, "beams.csv");
  f.write(stringify([[...beamsColumns(plan), ...(optimized ? OPTIMIZED_COLUMNS : [])]]));
  const nb = plan.beams.count;
  const digits = [9, 9, 7, 4, 4, 4, 5, 4, 4, 0, 4];
  const shown = plan.element ? METRICS : METRICS - 1;
  // Every cell is a number or empty, so a row is its cells joined by commas: csv-stringify
  // would quote nothing (the same bytes), but it holds many times a slice's size while it
  // works. Rows go out 256 at a time: memory does not grow with the beam count.
  const SLICE = 256;
  for (let fi = 0; fi < ft.length; fi++) {
    if (!/^[0-9.]+$/.test(ft[fi]!)) throw new Error(`frequency text ${ft[fi]} would need quoting in beams.csv`);
    let text = "";
    for (let b = 0; b < nb; b++) {
      if (b % SLICE === 0 && text) {
        f.write(text);
        text = "";
      }
      const o = (fi * nb + b) * METRICS;
      let row = `${ft[fi]!},${b},${fixed(plan.beams.azDeg[b]!, 6)},${fixed(plan.beams.elDeg[b]!, 6)},${fixed(plan.beams.u[b]!, 9)},${fixed(plan.beams.v[b]!, 9)}`;
      for (let k = 0; k < shown; k++) {
        const v = metrics[o + k]!;
        row += Number.isFinite(v) ? "," + fixed(v, digits[k]!) : ",";
      }
      if (optimized)
        for (const [k, d] of OPTIMIZED_SOURCE) {
          const v = optimized[(fi * nb + b) * OPT_FIELDS + k]!;
          row += Number.isFinite(v) ? "," + fixed(v, d) : ",";
        }
      text += row + "\n";
    }
    f.write(text);
  }
  return f.close();
}

/** squint.csv: one row per (table frequency, beam, band frequency), table frequency outer, band frequency inner. */
export function writeSquintCsv(path: string, plan: Plan, ft: string[], squint: Float64Array, open: OpenSink = openHashedFile): FileDigest {
  const f = open(path, "squint.csv");
  f.write(stringify([SQUINT_COLUMNS as unknown as string[]]));
  const band = plan.band!;
  const bt = band.frequenciesExact.map((x) => "," + new D(x).toFixed());
  for (const t of [...ft, ...bt]) if (!/^,?[0-9.]+$/.test(t)) throw new Error(`frequency text ${t} would need quoting in squint.csv`);
  const nb = plan.beams.count;
  const nk = bt.length;
  const digits = [9, 9, 7, 5];
  let text = "";
  let rows = 0;
  for (let fi = 0; fi < ft.length; fi++)
    for (let b = 0; b < nb; b++) {
      const head = ft[fi]! + "," + b;
      for (let k = 0; k < nk; k++) {
        const o = ((fi * nb + b) * nk + k) * SQUINT_METRICS;
        let row = head + bt[k]!;
        for (let m = 0; m < SQUINT_METRICS; m++) {
          const x = squint[o + m]!;
          row += Number.isFinite(x) ? "," + fixed(x, digits[m]!) : ",";
        }
        text += row + "\n";
        if (++rows === ROWS_A_WRITE) {
          f.write(text);
          text = "";
          rows = 0;
        }
      }
    }
  if (text) f.write(text);
  return f.close();
}

function distribution(values: number[]): Distribution {
  let worst = -1;
  for (let i = 0; i < values.length; i++) if (!Number.isNaN(values[i]!) && (worst < 0 || values[i]! > values[worst]!)) worst = i;
  const s = Float64Array.from(values.filter((v) => !Number.isNaN(v))).sort();
  return s.length ? { median: quantile(s, 0.5), p95: quantile(s, 0.95), max: s[s.length - 1]!, worst } : { median: null, p95: null, max: null, worst: -1 };
}

/** The band's summary for the console and the manifest: per beam its worst values across the band, and their distribution. */
export function bandReport(plan: Plan, squint: Float64Array): BandReport {
  const perBeam = bandSummary(plan, squint);
  return {
    frequenciesHz: plan.band!.frequenciesExact.map((x) => new D(x).toFixed()),
    worstPointingDeg: distribution(perBeam.map((p) => p.worstPointingDeg ?? NaN)),
    worstGainLossDb: distribution(perBeam.map((p) => p.worstGainLossDb ?? NaN)),
    perBeam,
  };
}
