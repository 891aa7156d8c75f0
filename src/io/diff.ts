/**
 * Word-level comparison of two builds (`steercode diff`, `build --compare`).
 * Builds compare only when their layout, element set, frequencies and beam count
 * agree; otherwise the reason is said plainly (exit 2).
 */
import { join, resolve } from "node:path";
import { InputError } from "../core/errors.js";
import { packPlan, unpackWord, type WordLayout } from "../core/words.js";
import type { Manifest } from "./build.js";
import type { CalibrationServed } from "../core/calibrate/per-frequency.js";
import { buildWords, readManifest, tableShapeProblems } from "./readbuild.js";
import { stableJson } from "./build.js";
import { HashedFile, type FileDigest } from "./hashed.js";
import { deviceDiff, type DeviceDiff } from "../workflows/devices.js";
import { ImageFormatError } from "../formats/device-read.js";

export interface Change {
  frequency_hz: string;
  beam: number;
  element: number;
  old_word: number;
  new_word: number;
  old_phase_code: number;
  new_phase_code: number;
  old_atten_code: number;
  new_atten_code: number;
}

export interface DiffSummary {
  wordsCompared: number;
  wordsChanged: number;
  beamsTouched: number;
  elementsTouched: number;
  largestPhaseChangeLsb: number;
  largestAttenChangeSteps: number;
  gRefChangeDb: { frequencyHz: string; old: number; new: number }[];
  /** Ids of the elements with at least one changed word, ascending. */
  elementsChanged: number[];
  calibrationChanged: boolean;
  /** Which calibration produced each build: file, full SHA-256, header comments. */
  oldCalibration: CalibrationRef | null;
  newCalibration: CalibrationRef | null;
  /** Only when either build's cal.csv has a frequency_hz column: per frequency, the set(s) that served it before and after. */
  calibrationServed?: { frequencyHz: string; old: CalibrationServed | null; new: CalibrationServed | null; changed: boolean }[];
  /** Per device of the new build (only when it has `devices`): words changed and address ranges to reload. */
  devices?: DeviceDiff;
  /** Only when the old build wrote device images and the new one writes none. */
  devicesRemoved?: true;
}

export interface CalibrationRef {
  ref: string;
  sha256: string;
  comments: string[];
}

export interface DiffResult {
  identical: boolean;
  summary: DiffSummary;
  changes: Change[];
  /** word width, for printing words in hex */
  wordBits: number;
}

function layoutKey(l: WordLayout): string {
  return stableJson({ bits: l.bits, off: l.off, fields: l.fields.map((f) => ({ n: f.name, s: f.shift, w: f.width, v: f.value ?? null })) }) ?? "";
}

/** What decides whether two builds can be compared word by word. */
export type TableShape = Pick<Manifest, "layout" | "frequenciesHz" | "elementIds"> & { counts: Pick<Manifest["counts"], "elements" | "beams"> };

/** Why two tables cannot be compared word by word (empty: they can). */
export function incompatibility(a: TableShape, b: TableShape): string[] {
  const why: string[] = [];
  if (layoutKey(a.layout) !== layoutKey(b.layout)) why.push("the word layouts differ (bits, off word or fields)");
  if (a.counts.elements !== b.counts.elements) why.push(`the element counts differ (${a.counts.elements} vs ${b.counts.elements})`);
  if (a.counts.beams !== b.counts.beams) why.push(`the beam counts differ (${a.counts.beams} vs ${b.counts.beams})`);
  if (a.frequenciesHz.join(",") !== b.frequenciesHz.join(",")) why.push(`the frequencies differ (${a.frequenciesHz.join(", ")} Hz vs ${b.frequenciesHz.join(", ")} Hz)`);
  if (!why.length && a.elementIds.join(",") !== b.elementIds.join(",")) why.push("the element ids differ");
  return why;
}

/**
 * A diff held compactly: the summary, and the changes enumerated on demand from the two
 * word arrays (no object per changed word is kept, so a diff where every one of tens of
 * millions of words changed, as after a calibration change, stays within the two tables'
 * own memory).
 */
export interface DiffScan {
  identical: boolean;
  summary: DiffSummary;
  /** word width, for printing words in hex */
  wordBits: number;
  /**
   * Calls fn for each changed word in table order (frequency, beam, element), at most
   * `limit` times, starting at word index `from`; returns the word index to continue from
   * (the table's word count when every change was visited).
   */
  eachChange(fn: (c: Change) => void, limit?: number, from?: number): number;
}

/**
 * `manifestB` stands in for dirB's manifest.json while a build is still being staged;
 * `nameB` is how messages name dirB then (never the staging folder).
 */
export function scanDiff(dirA: string, dirB: string, manifestB?: Manifest, nameB = dirB): DiffScan {
  const a = readManifest(dirA);
  const b = manifestB ?? readManifest(dirB);
  const shape = [...tableShapeProblems(dirA, a), ...(manifestB || resolve(dirB) === resolve(dirA) ? [] : tableShapeProblems(dirB, b))];
  if (shape.length) throw new InputError(shape.map((p) => ({ ...p, message: `${p.message}; run steercode verify on this folder` })));
  const why = incompatibility(a, b);
  if (why.length) throw new InputError({ file: `${dirA} vs ${nameB}`, message: `these builds cannot be compared word by word: ${why.join("; ")}` });
  const idsA = a.elementIds;
  const da = buildWords(dirA, a);
  const db = buildWords(dirB, b);
  const wa = da.words;
  const wb = db.words;
  const E = a.counts.elements;
  const B = a.counts.beams;
  if (wa.length !== a.counts.words || wb.length !== b.counts.words) {
    const [dir, d, m] = wa.length !== a.counts.words ? [dirA, da, a] : [nameB, db, b];
    throw new InputError({ file: join(dir, d.file), message: `holds ${d.words.length} words, manifest.json's counts give ${m.counts.words}; run steercode verify on this folder` });
  }
  const pp = packPlan(a.layout);
  const states = 2 ** a.phaseShifter.bits;
  // beams (per frequency) and elements touched, as flags: bounded by the table's shape, not by the changes
  const beamTouched = new Uint8Array(a.frequenciesHz.length * B);
  const elemTouched = new Uint8Array(E);
  let changed = 0;
  let maxPhase = 0;
  let maxAtten = 0;
  for (let i = 0; i < wa.length; i++) {
    if (wa[i] === wb[i]) continue;
    changed++;
    const ua = unpackWord(pp, a.layout, wa[i]!);
    const ub = unpackWord(pp, a.layout, wb[i]!);
    const dp = Math.abs(ua.phaseCode - ub.phaseCode) % states;
    maxPhase = Math.max(maxPhase, Math.min(dp, states - dp));
    maxAtten = Math.max(maxAtten, Math.abs(ua.attenCode - ub.attenCode));
    beamTouched[Math.floor(i / E)] = 1;
    elemTouched[i % E] = 1;
  }
  const eachChange = (fn: (c: Change) => void, limit = Infinity, from = 0): number => {
    let n = 0;
    let i = from;
    for (; i < wa.length && n < limit; i++) {
      if (wa[i] === wb[i]) continue;
      n++;
      const fi = Math.floor(i / (B * E));
      const ua = unpackWord(pp, a.layout, wa[i]!);
      const ub = unpackWord(pp, a.layout, wb[i]!);
      fn({ frequency_hz: a.frequenciesHz[fi]!, beam: Math.floor(i / E) % B, element: idsA[i % E]!, old_word: wa[i]!, new_word: wb[i]!, old_phase_code: ua.phaseCode, new_phase_code: ub.phaseCode, old_atten_code: ua.attenCode, new_atten_code: ub.attenCode });
    }
    return i;
  };
  let beamsTouched = 0;
  for (const t of beamTouched) beamsTouched += t;
  const elementsChanged: number[] = [];
  for (let e = 0; e < E; e++) if (elemTouched[e]) elementsChanged.push(idsA[e]!);
  elementsChanged.sort((x, y) => x - y);
  const gRefChangeDb = a.perFrequency
    .map((p, i) => ({ frequencyHz: p.frequencyHz, old: p.gRefDb, new: b.perFrequency[i]?.gRefDb ?? NaN }))
    .filter((g) => g.old !== g.new);
  const summary: DiffSummary = {
    wordsCompared: wa.length,
    wordsChanged: changed,
    beamsTouched,
    elementsTouched: elementsChanged.length,
    elementsChanged,
    largestPhaseChangeLsb: maxPhase,
    largestAttenChangeSteps: maxAtten,
    gRefChangeDb,
    calibrationChanged: (a.calibration?.sha256 ?? null) !== (b.calibration?.sha256 ?? null),
    oldCalibration: a.calibration ? { ref: a.calibration.ref, sha256: a.calibration.sha256, comments: a.calibration.comments } : null,
    newCalibration: b.calibration ? { ref: b.calibration.ref, sha256: b.calibration.sha256, comments: b.calibration.comments } : null,
  };
  const sa = a.calibration?.perFrequency, sb = b.calibration?.perFrequency;
  if (sa || sb)
    summary.calibrationServed = a.frequenciesHz.map((f, i) => {
      const o = sa?.[i] ?? null, n = sb?.[i] ?? null;
      return { frequencyHz: f, old: o, new: n, changed: stableJson(o) !== stableJson(n) };
    });
  try {
    const dd = deviceDiff(dirA, a, dirB, b, eachChange);
    if (dd) summary.devices = dd;
  } catch (e) {
    if (e instanceof ImageFormatError) throw new InputError({ file: dirB, message: `${e.message}; run steercode verify on it` });
    throw e;
  }
  if (a.devices && !b.devices) summary.devicesRemoved = true;
  // what is flashed differs when any word changed, or when the device images are laid out
  // differently (or appear or disappear) although every word agrees
  const imagesDiffer = summary.devices?.layoutChanged === true || summary.devicesRemoved === true;
  return { identical: changed === 0 && !imagesDiffer, summary, wordBits: a.layout.bits, eachChange };
}

/** Every changed word as an object (the library's diff; scanDiff keeps memory flat). */
export function diffBuilds(dirA: string, dirB: string, manifestB?: Manifest, nameB = dirB): DiffResult {
  const r = scanDiff(dirA, dirB, manifestB, nameB);
  const changes: Change[] = [];
  r.eachChange((c) => changes.push(c));
  return { identical: r.identical, summary: r.summary, changes, wordBits: r.wordBits };
}

export const CHANGE_COLUMNS = ["frequency_hz", "beam", "element", "old_word", "new_word", "old_phase_code", "new_phase_code", "old_atten_code", "new_atten_code"] as const;

/** changes.csv: one row per changed word; every cell is an integer or an exact decimal. */
export function writeChangesCsv(path: string, r: Pick<DiffScan, "eachChange">): FileDigest {
  const f = new HashedFile(path);
  f.write(CHANGE_COLUMNS.join(",") + "\n");
  const lines: string[] = [];
  r.eachChange((c) => {
    lines.push(CHANGE_COLUMNS.map((k) => String(c[k])).join(","));
    if (lines.length >= 4096) {
      f.write(lines.join("\n") + "\n");
      lines.length = 0;
    }
  });
  if (lines.length) f.write(lines.join("\n") + "\n");
  return f.close();
}
