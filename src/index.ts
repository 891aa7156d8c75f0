/**
 * steercode as a library: the public API (README "Use from code").
 *
 * Everything exported here is stable and documented; everything else in the package is
 * internal. No function here exits the process or writes to the console. Input problems
 * are values (`Problem`: file, JSON pointer, CSV line/column, message); functions that
 * cannot go on with bad input throw `InputError`, which carries all of them.
 */
import { InputError, formatProblem, type Problem } from "./core/errors.js";
import { BeamPacker, TableRun } from "./core/engine.js";
import { BeamAnalyzer, METRICS, M } from "./core/pattern/analyze.js";
import { analysisSizeProblem } from "./core/pattern/grid.js";
import { allocBeamCodes, makeQuantizer, prepareFrequency, type BeamCodes } from "./core/quantize/index.js";
import { packPlan, unpackWord } from "./core/words.js";
import { theoryFor, type Theory } from "./core/theory.js";
import { deriveFacts } from "./core/facts.js";
import { loadScenario as loadScenarioFile, MAX_FREQUENCY_HZ, MAX_LENGTH_M, MIN_FREQUENCY_HZ, type LoadedScenario } from "./io/scenario.js";
import { runBuild, type Manifest } from "./io/build.js";
import { diffBuilds as diffBuildFolders, type DiffResult } from "./io/diff.js";
import { verifyBuild as verifyBuildFolder, type VerifyResult } from "./io/verify.js";
import { checkTarget } from "./io/outdir.js";
import { toolVersion } from "./io/version.js";
import { planCalibrationAt, type CalibrationServed } from "./core/calibrate/per-frequency.js";
import type { Probe } from "./core/calibrate/contract.js";
import { runCalibrate, type CalibrateOptions, type CalibrateResult } from "./workflows/calibrate.js";
import { availableParallelism } from "node:os";
import { isJobsCount, MAX_JOBS } from "./io/jobs.js";

export { InputError, formatProblem };
export type { Problem, Manifest, DiffResult, VerifyResult, Theory };

/** A loaded, validated scenario. Treat it as opaque; read it through the fields below. */
export interface Scenario {
  /** The scenario file as given. */
  readonly path: string;
  /** Table frequencies (Hz), in table order. */
  readonly frequenciesHz: readonly number[];
  /** Element ids in table order (ascending). */
  readonly elementIds: readonly number[];
  /** Number of beams per frequency. */
  readonly beamCount: number;
  /** Problems that do not stop a build (grating lobes, clipping, disabled elements …). */
  readonly warnings: readonly string[];
  /** @internal */
  readonly loaded: LoadedScenario;
}

/** Load and validate a scenario file; throws `InputError` holding every problem found. */
export function loadScenario(path: string): Scenario {
  const loaded = loadScenarioFile(path);
  const plan = loaded.plan;
  return {
    path,
    frequenciesHz: Array.from(plan.frequenciesHz),
    elementIds: Array.from(plan.elements.ids),
    beamCount: plan.beams.count,
    warnings: deriveFacts(plan, { squint: false }).warnings,
    loaded,
  };
}

/** Validate a scenario file and return every problem as a value (never throws for bad input). */
export function validateScenario(path: string): { ok: true; scenario: Scenario; problems: [] } | { ok: false; scenario: null; problems: Problem[] } {
  try {
    return { ok: true, scenario: loadScenario(path), problems: [] };
  } catch (e) {
    if (e instanceof InputError) return { ok: false, scenario: null, problems: e.problems };
    throw e;
  }
}

/** Which table entry: 0-based frequency index and beam index (README's beam order). */
export interface BeamRef {
  frequency: number;
  beam: number;
}

/** The codes and words of one (frequency, beam), one entry per element in table order. */
export interface BeamTable {
  frequencyIndex: number;
  frequencyHz: number;
  beam: number;
  /** Commanded direction. */
  u: number;
  v: number;
  phaseCode: Int32Array;
  attenCode: Int32Array;
  /** Packed register words (the off word for disabled elements). */
  word: Uint32Array;
  /** Commanded phase ψ (deg) and attenuation (dB) before quantisation. */
  phaseDeg: Float64Array;
  attenDb: Float64Array;
  /** Enabled elements whose attenuation was clipped to the attenuator's range. */
  clipped: number;
}

function checkRef(s: Scenario, ref: BeamRef): void {
  const nf = s.frequenciesHz.length, nb = s.beamCount;
  if (ref === null || typeof ref !== "object") throw new InputError({ file: s.path, message: "expected { frequency, beam } (0-based indices)" });
  const problems: Problem[] = [];
  if (!Number.isInteger(ref.frequency) || ref.frequency < 0 || ref.frequency >= nf) problems.push({ file: s.path, message: `frequency index ${String(ref.frequency)}: expected a whole number from 0 to ${nf - 1}` });
  if (!Number.isInteger(ref.beam) || ref.beam < 0 || ref.beam >= nb) problems.push({ file: s.path, message: `beam ${String(ref.beam)}: expected a whole number from 0 to ${nb - 1}` });
  if (problems.length) throw new InputError(problems);
}

function tableOf(s: Scenario, fi: number, b: number, codes: BeamCodes, words: Uint32Array, copy: boolean): BeamTable {
  const plan = s.loaded.plan;
  const c = <T extends Int32Array | Float64Array | Uint32Array>(a: T): T => (copy ? (a.slice() as T) : a);
  return {
    frequencyIndex: fi,
    frequencyHz: plan.frequenciesHz[fi]!,
    beam: b,
    u: plan.beams.u[b]!,
    v: plan.beams.v[b]!,
    phaseCode: c(codes.phaseCode),
    attenCode: c(codes.attenCode),
    word: c(words),
    phaseDeg: c(codes.phaseDeg),
    attenDb: c(codes.attenDb),
    clipped: codes.clipped,
  };
}

/** The codes and words of one beam, exactly as `build` writes them. */
export function beamTable(s: Scenario, ref: BeamRef): BeamTable {
  checkRef(s, ref);
  const plan = s.loaded.plan;
  const codes = allocBeamCodes(plan.elements.count);
  const q = makeQuantizer(plan, ref.frequency, prepareFrequency(plan, ref.frequency), { commanded: true });
  q.beam(ref.beam, codes);
  const words = new Uint32Array(plan.elements.count);
  new BeamPacker(plan).pack(codes, words);
  return tableOf(s, ref.frequency, ref.beam, codes, words, false);
}

/**
 * Every (frequency, beam) of the table in order, streamed: memory does not grow with the
 * beam count. By default each item owns its arrays; with `{ reuse: true }` the arrays are
 * reused between items (faster; copy what you keep).
 */
export function* tables(s: Scenario, opts: { reuse?: boolean } = {}): Generator<BeamTable, void, undefined> {
  const plan = s.loaded.plan;
  const pending: BeamTable[] = [];
  const run = new TableRun(plan, (fi, b, words, codes) => {
    pending.push(tableOf(s, fi, b, codes, words, !opts.reuse));
  });
  let finished = false;
  while (!finished) {
    finished = run.step(1);
    while (pending.length) yield pending.shift()!;
  }
}

/** Unpack a word into its phase and attenuation codes with the scenario's layout. */
export function unpack(s: Scenario, word: number): { phaseCode: number; attenCode: number } {
  const plan = s.loaded.plan;
  // a word the layout cannot hold was unpacked anyway: −1 gave codes 63/63, 2^40 and NaN gave 0/0, 1.5 gave phase 1
  const max = 2 ** plan.word.bits - 1;
  if (!Number.isInteger(word) || word < 0 || word > max) throw new InputError({ file: s.path, pointer: "/word/bits", message: `word ${String(word)}: expected a whole number from 0 to ${max} (a ${plan.word.bits}-bit word)` });
  const u = unpackWord(packPlan(plan.word), plan.word, word);
  return { phaseCode: u.phaseCode, attenCode: u.attenCode };
}

/** The metrics of beams.csv for one beam (README "What the analysis measures"). */
export interface BeamMetrics {
  peakU: number;
  peakV: number;
  pointingErrorDeg: number;
  /** null when no visible point lies outside the main lobe. */
  pslIdealDb: number | null;
  pslDb: number | null;
  sllRiseDb: number | null;
  gainLossDb: number;
  rmsPhaseErrorDeg: number;
  rmsAmpErrorDb: number;
  clipped: number;
  /** With an element pattern: element power at boresight minus at the beam direction, dB; null for isotropic elements. */
  scanLossDb: number | null;
}

const finiteOrNull = (x: number): number | null => (Number.isFinite(x) ? x : null);

/** Analyse one beam: ideal vs realized pattern, exactly as `build` does for beams.csv. */
export function analyzeBeam(s: Scenario, ref: BeamRef): BeamMetrics {
  checkRef(s, ref);
  const plan = s.loaded.plan;
  const big = analysisSizeProblem(plan, { band: false }); // one beam at a table frequency
  if (big) throw new InputError({ file: s.path, pointer: "/frequency", message: big.message });
  const an = new BeamAnalyzer(plan, ref.frequency);
  const codes = allocBeamCodes(plan.elements.count);
  makeQuantizer(plan, ref.frequency, an.prep).beam(ref.beam, codes);
  const m = new Float64Array(METRICS);
  an.analyse(ref.beam, codes, m, 0);
  return {
    peakU: m[M.peak_u]!,
    peakV: m[M.peak_v]!,
    pointingErrorDeg: m[M.pointing_error_deg]!,
    pslIdealDb: finiteOrNull(m[M.psl_ideal_db]!),
    pslDb: finiteOrNull(m[M.psl_db]!),
    sllRiseDb: finiteOrNull(m[M.sll_rise_db]!),
    gainLossDb: m[M.gain_loss_db]!,
    rmsPhaseErrorDeg: m[M.rms_phase_error_deg]!,
    rmsAmpErrorDb: m[M.rms_amp_error_db]!,
    clipped: m[M.clipped]!,
    scanLossDb: finiteOrNull(m[M.scan_loss_db]!),
  };
}

/** The published estimates for the scenario's part and quantizer (README "Theory beside measurement"). */
export function theory(s: Scenario): Theory {
  return theoryFor(s.loaded.plan);
}

/**
 * `jobs` as the command line takes `--jobs`: a whole number from 1 to 256, more than the
 * cores only compete for them and are cut to the number of cores (silently: the library
 * writes nothing to the console).
 */
function jobsArg(jobs: unknown): number {
  // 0, −3, NaN and 1e9 were taken (one thread, or up to 1e9 − 1 workers allowed); 1.5 failed deep inside with a RangeError
  if (jobs === undefined) return 1;
  if (!isJobsCount(jobs)) throw new InputError({ message: `jobs ${typeof jobs === "string" ? JSON.stringify(jobs) : String(jobs)}: expected a whole number from 1 to ${MAX_JOBS} (the most threads for the analysis, this one included)` });
  return Math.min(jobs, availableParallelism());
}

export interface BuildOptions {
  /** Write beams.csv (default true). */
  analysis?: boolean;
  /** Threads for the analysis, this one included (default 1). */
  jobs?: number;
  /** Called as beams are done. */
  onProgress?: (done: number, total: number) => void;
}

/**
 * Write a build folder (tables, beams.csv, manifest, inputs/), staged and renamed into
 * place; an existing folder is replaced only when it is an earlier steercode build.
 */
export async function build(s: Scenario, outDir: string, opts: BuildOptions = {}): Promise<{ dir: string; manifest: Manifest }> {
  const jobs = jobsArg(opts?.jobs);
  checkTarget(outDir, "build");
  const r = await runBuild(s.loaded, outDir, { analysis: opts.analysis ?? true, jobs, ...(opts.onProgress ? { onProgress: opts.onProgress } : {}) });
  return { dir: r.dir, manifest: r.manifest };
}

/** Word-level changes between two build folders (what `steercode diff` reports). */
export function diffBuilds(dirA: string, dirB: string): DiffResult {
  return diffBuildFolders(dirA, dirB);
}

/**
 * Check a build folder end to end (what `steercode verify` does): every file regenerated
 * from the recorded inputs (the analysis rerun with `jobs` threads when the build had one)
 * and compared byte for byte; `ok` is false on any mismatch.
 */
export async function verifyBuild(dir: string, opts: { jobs?: number } = {}): Promise<VerifyResult> {
  return verifyBuildFolder(dir, { jobs: jobsArg(opts?.jobs) });
}

/** The package's version. */
export const version: string = toolVersion();

/** Calibration of every element at one frequency (Hz): the scenario's own set, or (cal.csv with frequency_hz) the listed or interpolated one. */
export function calibrationAt(s: Scenario, frequencyHz: number | string): { ok: true; phaseDeg: Float64Array; gainDb: Float64Array; served: CalibrationServed | null } | { ok: false; message: string } {
  // NaN, −1 Hz and 1e30 Hz were served the one calibration set (ok: true); "abc" threw a DecimalError
  const text = String(frequencyHz).trim();
  const f = typeof frequencyHz === "number" ? frequencyHz : /^[+]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/.test(text) ? Number(text) : NaN;
  if (!(f >= MIN_FREQUENCY_HZ && f <= MAX_FREQUENCY_HZ)) return { ok: false, message: `frequency ${text} Hz: expected a number of Hz from ${MIN_FREQUENCY_HZ} to ${MAX_FREQUENCY_HZ}` };
  const r = planCalibrationAt(s.loaded.plan, typeof frequencyHz === "number" ? frequencyHz : text);
  return r.ok ? { ok: true, phaseDeg: r.cal.phaseDeg, gainDb: r.cal.gainDb, served: r.served } : r;
}

/** `steercode calibrate` as a value: offsets, per-element report and the cal.csv text (nothing is written). */
export function calibrate(options: CalibrateOptions): CalibrateResult {
  // the command checks these on its command line; from code an unknown method was a TypeError and a NaN probe "non-finite value NaN in an output"
  const { method, probe } = options ?? ({} as CalibrateOptions);
  const problems: Problem[] = [];
  if (method !== "rev" && method !== "field") problems.push({ message: `method ${String(method)}: expected "rev" or "field"` });
  if (probe?.kind === "far") {
    if (![probe.azDeg, probe.elDeg].every((a) => Number.isFinite(a) && Math.abs(a) <= 90)) problems.push({ message: `probe direction az ${String(probe.azDeg)}, el ${String(probe.elDeg)}: expected |az| and |el| ≤ 90 degrees (in front of the array)` });
  } else if (probe?.kind === "near") {
    if (![probe.x, probe.y, probe.z].every((c) => Number.isFinite(c) && Math.abs(c) <= MAX_LENGTH_M)) problems.push({ message: `probe position ${String(probe.x)}, ${String(probe.y)}, ${String(probe.z)}: expected coordinates within ±${MAX_LENGTH_M} m` });
  } else problems.push({ message: 'probe: expected { kind: "far", azDeg, elDeg } or { kind: "near", x, y, z }' });
  if (problems.length) throw new InputError(problems);
  return runCalibrate(options);
}
export type { CalibrateOptions, CalibrateResult, CalibrationServed, Probe };
