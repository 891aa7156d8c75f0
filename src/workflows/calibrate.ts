/**
 * `steercode calibrate`: range readings → calibration offsets → cal.csv.
 * Reads the scenario (geometry, enabled elements, state tables; its own calibration file
 * is not read: this step writes it), checks the data file row by row (all problems at
 * once, each naming the file and line), solves each frequency with the chosen method,
 * removes the probe path, refers the offsets and renders cal.csv. Writing is separate
 * (writeCalFile: a temporary file renamed into place), so nothing is written on error.
 */
import { renameSync, rmSync, writeFileSync } from "node:fs";
import { basename, dirname, resolve } from "node:path";
import { InputError, type Problem } from "../core/errors.js";
import { D } from "../core/exact.js";
import {
  elementCodeModel,
  fieldMethod,
  METHODS,
  probeNearest,
  referOffsets,
  revMethod,
  SUM_CHECK_MAX_UNDECIDED,
  type ElementOffsets,
  type FieldElementData,
  type MethodField,
  type MethodName,
  type Probe,
  type RevElementData,
} from "../core/calibrate/index.js";
import { SPEED_OF_LIGHT } from "../core/units.js";
import { numberCell, readCsv } from "../io/csv.js";
import { readInput, sha256 } from "../io/files.js";
import { fixed } from "../io/format.js";
import { checkCalibrationTarget } from "../io/outdir.js";
import { compactIds, loadScenario, MAX_ELEMENT_ID, MAX_FREQUENCY_HZ, MAX_GAIN_DB, MAX_PHASE_DEG, MIN_FREQUENCY_HZ } from "../io/scenario.js";

export interface CalibrateOptions {
  scenario: string;
  data: string;
  method: MethodName;
  probe: Probe;
}

export interface ElementReport extends ElementOffsets {
  /** rev only: both roots (x = e/E0), which was kept, whether the choice was decided, and why */
  roots?: { re: number; im: number; magnitude: number; phaseDeg: number; residualDb: number }[];
  kept?: number;
  decided?: boolean;
  why?: string;
  /** data lines this element's readings came from */
  lines: string;
}

export interface FrequencyReport {
  frequencyHz: string;
  elements: ElementReport[];
  /** rms of reading − model over every reading of this frequency (dB); null for `field` */
  rmsResidualDb: number | null;
  readings: number;
  commonPhaseDeg: number;
  commonGainDb: number;
  enabledUsed: number;
  /** rev: Σ x_n over the enabled elements, which should be 1 (their fields add up to the whole array's), and its 1σ from the fits */
  fieldSum: { re: number; im: number; error: number; sigma: number } | null;
  warnings: string[];
}

export interface CalibrateResult {
  method: MethodName;
  methodName: string;
  data: { file: string; sha256: string };
  scenario: { file: string; sha256: string };
  probe: Probe;
  probeText: string;
  /** false when the data have no frequency_hz column: one set serves every frequency */
  perFrequency: boolean;
  frequencies: FrequencyReport[];
  rmsResidualDb: number | null;
  flagged: { frequencyHz: string; element: number; flags: string[]; advice: string[] }[];
  /** elements of the array without readings (disabled ones only): written as 0, 0 */
  placeholders: number[];
  calCsv: string;
}

const SHAPES = {
  rev: { required: [["element", "phase_code", "power_db"]], optional: ["frequency_hz"] },
  field: { required: [["element", "amplitude_db", "phase_deg"]], optional: ["frequency_hz"] },
};

export function probeText(p: Probe): string {
  return p.kind === "far"
    ? `far field, az ${p.azDeg} deg, el ${p.elDeg} deg (path exp(+jk r_n.d) removed)`
    : `near field at x ${p.x} m, y ${p.y} m, z ${p.z} m (path exp(-jk|p - r_n|)/|p - r_n| removed)`;
}

interface Group {
  exact: string;
  hz: number;
  /** per element index: readings in data order */
  rows: Map<number, { code: number; a: number; b: number; line: number }[]>;
}

/** Range readings (power or amplitude, dB, any common reference) within ±300 dB: 10^(±30) in power, far from a double's limits. */
export const MAX_READING_DB = 300;

export function runCalibrate(o: CalibrateOptions): CalibrateResult {
  const loaded = loadScenario(o.scenario, { ignoreCalibration: true });
  const plan = loaded.plan;
  const el = plan.elements;
  // the probe point is the caller's (--probe-position), not the data file's: checked first, named as given
  const near = probeNearest(o.probe, el);
  if (o.probe.kind === "near" && near.distanceM < 1e-6) {
    const at = (i: number) => `(${el.x[i]}, ${el.y[i]}, ${el.z[i]}) m`;
    throw new InputError({ message: `probe position (${o.probe.x}, ${o.probe.y}, ${o.probe.z}) m: ${near.distanceM === 0 ? "on" : `${near.distanceM.toPrecision(3)} m from`} element ${el.ids[near.index]} of ${basename(o.scenario)}, at ${at(near.index)}; expected a point away from the array (at least 1 µm from every element)` });
  }
  const problems: Problem[] = [];
  const input = readInput(o.data, o.data, problems);
  if (!input) throw new InputError(problems);
  const t = readCsv(input, SHAPES[o.method], problems);
  if (!t) throw new InputError(problems);
  const file = t.file;
  const index = new Map<number, number>();
  el.ids.forEach((id, i) => index.set(id, i));
  const states = 2 ** plan.phaseBits;
  const perFrequency = t.header.includes("frequency_hz");
  if (!perFrequency && plan.frequenciesHz.length > 1)
    problems.push({ file, line: 1, message: `the data have no frequency_hz column but the scenario lists ${plan.frequenciesHz.length} frequencies; expected a frequency_hz column saying which frequency each reading was taken at` });
  const groups = new Map<string, Group>();
  const seen = new Map<string, number>();
  const keyOf = new Map<string, string>();
  const [ca, cb] = o.method === "rev" ? ["power_db", "power_db"] : ["amplitude_db", "phase_deg"];
  for (const r of t.rows) {
    const id = numberCell(t, r, "element", problems, { integer: true, min: 0, max: MAX_ELEMENT_ID });
    const code = o.method === "rev" ? numberCell(t, r, "phase_code", problems, { integer: true, min: 0 }) : { text: "0", value: 0 };
    // bounded like every input: a power of −1e300 dB became 10^(−1e29) = 0 and then "non-finite value Infinity in an output" (exit 3)
    const a = numberCell(t, r, ca!, problems, { min: -MAX_READING_DB, max: MAX_READING_DB });
    const b = o.method === "rev" ? a : numberCell(t, r, cb!, problems, { min: -MAX_PHASE_DEG, max: MAX_PHASE_DEG });
    let f: { text: string; value: number } | null = { text: plan.frequenciesExact[0] ?? "0", value: plan.frequenciesHz[0] ?? 0 };
    if (perFrequency) {
      f = numberCell(t, r, "frequency_hz", problems, { min: MIN_FREQUENCY_HZ, max: MAX_FREQUENCY_HZ });
    }
    if (!id || !code || !a || !b || !f) continue;
    const i = index.get(id.value);
    if (i === undefined) {
      problems.push({ file, line: r.line, column: "element", message: `element ${id.value} is not in the array (ids ${el.ids[0]} … ${el.ids[el.count - 1]})` });
      continue;
    }
    if (code.value >= states) {
      problems.push({ file, line: r.line, column: "phase_code", message: `code ${code.value} does not exist on the scenario's ${plan.phaseBits}-bit phase shifter; expected 0 … ${states - 1}` });
      continue;
    }
    let key = keyOf.get(f.text);
    if (key === undefined) keyOf.set(f.text, (key = new D(f.text).toString()));
    const dupKey = `${key}/${id.value}/${code.value}`;
    const prev = seen.get(dupKey);
    if (prev !== undefined) {
      problems.push({ file, line: r.line, message: `element ${id.value}${o.method === "rev" ? ` code ${code.value}` : ""}${perFrequency ? ` at ${new D(f.text).toFixed()} Hz` : ""} is listed twice (also on line ${prev})` });
      continue;
    }
    seen.set(dupKey, r.line);
    let g = groups.get(key);
    if (!g) groups.set(key, (g = { exact: key, hz: f.value, rows: new Map() }));
    let list = g.rows.get(i);
    if (!list) g.rows.set(i, (list = []));
    list.push({ code: code.value, a: a.value, b: b.value, line: r.line });
  }
  if (problems.length) throw new InputError(problems);
  const sortedGroups = [...groups.values()].sort((x, y) => new D(x.exact).cmp(y.exact));
  for (const g of sortedGroups) {
    const at = perFrequency ? ` at ${new D(g.exact).toFixed()} Hz` : "";
    const missing: number[] = [];
    for (let i = 0; i < el.count; i++) if (el.enabled[i] && !g.rows.has(i)) missing.push(el.ids[i]!);
    if (missing.length) problems.push({ file, message: `no readings${at} for ${missing.length} enabled element(s): ${compactIds(missing)}; expected readings for every enabled element` });
    if (o.method !== "rev") continue;
    for (const [i, list] of g.rows) {
      const lines = compactIds(list.map((x) => x.line));
      if (!list.some((x) => x.code === 0)) problems.push({ file, line: list[0]!.line, message: `element ${el.ids[i]}${at} (lines ${lines}) has no reading at code 0; expected code 0 (the reference state) and at least three other codes` });
      const others = list.filter((x) => x.code !== 0).length;
      if (others < 3) problems.push({ file, line: list[0]!.line, message: `element ${el.ids[i]}${at} (lines ${lines}) has ${others} code(s) besides code 0; expected at least three` });
    }
  }
  if (problems.length) throw new InputError(problems);

  // ---- solve each frequency
  const models = Array.from({ length: el.count }, (_, i) => elementCodeModel(plan, i));
  const freqReports: FrequencyReport[] = [];
  let ssrAll = 0, nAll = 0;
  for (const g of sortedGroups) {
    const k = (2 * Math.PI * g.hz) / SPEED_OF_LIGHT;
    const idx = [...g.rows.keys()].sort((x, y) => x - y);
    let fields: MethodField[];
    const extra = new Map<number, Partial<ElementReport>>();
    let readings = 0, ssr = 0;
    if (o.method === "rev") {
      const data: RevElementData[] = idx.map((i) => {
        const list = g.rows.get(i)!;
        const m = models[i]!;
        return {
          index: i,
          id: el.ids[i]!,
          enabled: !!el.enabled[i],
          readings: { delta: Float64Array.from(list, (x) => m.delta(x.code)), rho: Float64Array.from(list, (x) => m.rho(x.code)), powerDb: Float64Array.from(list, (x) => x.a) },
        };
      });
      const r = revMethod(data);
      if (!r.ok) {
        const at = perFrequency ? ` at ${new D(g.exact).toFixed()} Hz` : "";
        throw new InputError(r.errors.map((e) => ({ file, line: g.rows.get(e.index)![0]!.line, message: `element ${el.ids[e.index]}${at} (lines ${compactIds(g.rows.get(e.index)!.map((x) => x.line))}): ${e.message}` })));
      }
      fields = r.fields;
      for (const { index, fit } of r.fits) {
        const n = g.rows.get(index)!.length;
        const root = fit.roots[fit.kept];
        readings += n;
        ssr += root.residualDb * root.residualDb * n;
        extra.set(index, {
          roots: fit.roots.map((q) => ({ re: q.x.re, im: q.x.im, magnitude: Math.hypot(q.x.re, q.x.im), phaseDeg: (Math.atan2(q.x.im, q.x.re) * 180) / Math.PI, residualDb: q.residualDb })),
          kept: fit.kept,
          decided: fit.decided,
          why: fit.why,
        });
      }
    } else {
      const data: FieldElementData[] = idx.map((i) => {
        const x = g.rows.get(i)![0]!;
        return { index: i, amplitudeDb: x.a, phaseDeg: x.b };
      });
      fields = fieldMethod(data);
      readings = data.length;
    }
    const ref = referOffsets(fields, { elements: el, probe: o.probe, k, codeZero: (i) => models[i]!.codeZero });
    let fieldSum: FrequencyReport["fieldSum"] = null;
    const warnings: string[] = [];
    if (o.method === "rev") {
      let sr = 0, si = 0, v = 0;
      for (const f of fields) {
        if (!el.enabled[f.index]) continue;
        sr += f.field.re;
        si += f.field.im;
        const m2 = f.field.re * f.field.re + f.field.im * f.field.im;
        const a = Number.isFinite(f.relStd) ? f.relStd! : 0, b = Number.isFinite(f.phaseStdRad) ? f.phaseStdRad! : 0;
        v += m2 * (a * a + b * b);
      }
      fieldSum = { re: sr, im: si, error: Math.hypot(sr - 1, si), sigma: Math.sqrt(v) };
      const undecided = fields.filter((f) => el.enabled[f.index] && f.flags.includes("ambiguous-root")).length;
      if (undecided > SUM_CHECK_MAX_UNDECIDED)
        warnings.push(`${undecided} enabled elements' root choices are undecided, more than the ${SUM_CHECK_MAX_UNDECIDED} the sum check (Σ e_n = E0) tries together, so it was not tried: the kept roots are the smaller ones, unchecked; re-measure with the array phased up toward the probe`);
      if (fieldSum.error > Math.max(5 * fieldSum.sigma, 0.05))
        warnings.push(`the kept element fields do not add up to the whole array's (Σ e_n/E0 = ${sr.toFixed(3)}${si < 0 ? " − " : " + "}${Math.abs(si).toFixed(3)}j, expected 1 within ${(5 * fieldSum.sigma).toFixed(3)}): some root choices are wrong or the readings drifted; re-measure with the array phased up toward the probe`);
    }
    // an offset build refuses (cal.csv gains within ±200 dB) is refused here, at the element's readings: it was written, and build then failed on it
    ref.offsets.forEach((off, j) => {
      if (Math.abs(off.gainDb) <= MAX_GAIN_DB) return;
      const rows = g.rows.get(fields[j]!.index)!;
      problems.push({ file, line: rows[0]!.line, message: `element ${off.element} (line${rows.length > 1 ? "s" : ""} ${compactIds(rows.map((x) => x.line), Infinity)}): its gain offset ${off.gainDb.toFixed(1)} dB (referred to the enabled elements' mean) lies outside ±${MAX_GAIN_DB} dB, which cal.csv holds; expected readings within that of the other channels (re-measure it, or add it to array.disabled)` });
    });
    ssrAll += ssr;
    nAll += readings;
    freqReports.push({
      frequencyHz: new D(g.exact).toFixed(),
      elements: ref.offsets.map((off, j) => ({ ...off, ...extra.get(fields[j]!.index), lines: compactIds(g.rows.get(fields[j]!.index)!.map((x) => x.line), Infinity) })),
      rmsResidualDb: o.method === "rev" ? Math.sqrt(ssr / readings) : null,
      readings,
      commonPhaseDeg: ref.commonPhaseDeg,
      commonGainDb: ref.commonGainDb,
      enabledUsed: ref.enabledUsed,
      fieldSum,
      warnings,
    });
  }
  if (problems.length) throw new InputError(problems);
  const rmsResidualDb = o.method === "rev" ? Math.sqrt(ssrAll / nAll) : null;
  const flagged = freqReports.flatMap((f) => f.elements.filter((e) => e.flags.length).map((e) => ({ frequencyHz: f.frequencyHz, element: e.element, flags: e.flags, advice: e.advice })));
  const withData = new Set(sortedGroups.flatMap((g) => [...g.rows.keys()]));
  const placeholders: number[] = [];
  for (let i = 0; i < el.count; i++) if (!withData.has(i)) placeholders.push(el.ids[i]!);
  const result: Omit<CalibrateResult, "calCsv"> = {
    method: o.method,
    methodName: METHODS[o.method],
    data: { file: basename(o.data), sha256: input.sha256 },
    scenario: { file: basename(o.scenario), sha256: loaded.scenario.sha256 },
    probe: o.probe,
    probeText: probeText(o.probe),
    perFrequency,
    frequencies: freqReports,
    rmsResidualDb,
    flagged,
    placeholders,
  };
  return { ...result, calCsv: renderCalCsv(result, plan.elements.ids, !!(plan.phaseStates || plan.attenStates)) };
}

/** cal.csv text: `#` lines (method, data SHA-256, probe, frequencies, fit quality), then the rows. Deterministic. */
export function renderCalCsv(r: Omit<CalibrateResult, "calCsv">, ids: ArrayLike<number>, measuredStates: boolean): string {
  const L: string[] = [];
  L.push(`# steercode calibrate: method ${r.method} (${r.methodName})`);
  L.push(`# data: ${r.data.file} sha256 ${r.data.sha256}`);
  L.push(`# scenario: ${r.scenario.file} sha256 ${r.scenario.sha256}; ${measuredStates ? "measured state tables" : "ideal phase states"}`);
  L.push(`# probe: ${r.probeText}`);
  L.push(`# frequencies: ${r.frequencies.map((f) => f.frequencyHz).join(", ")} Hz${r.perFrequency ? "" : " (one set for every frequency)"}`);
  if (r.rmsResidualDb !== null) {
    let worst = { v: -1, e: -1, f: "" };
    for (const f of r.frequencies) for (const e of f.elements) if ((e.residualDb ?? -1) > worst.v) worst = { v: e.residualDb!, e: e.element, f: f.frequencyHz };
    L.push(`# rms fit residual: ${fixed(r.rmsResidualDb, 4)} dB over ${r.frequencies.reduce((s, f) => s + f.readings, 0)} readings; worst element ${worst.e}${r.perFrequency ? ` at ${worst.f} Hz` : ""}: ${fixed(worst.v, 4)} dB`);
  } else L.push("# rms fit residual: none (the field method reads each channel directly; nothing is fitted)");
  L.push(`# referred: circular mean phase 0 deg and mean gain 0 dB over ${r.frequencies[0]?.enabledUsed ?? 0} enabled elements`);
  if (r.flagged.length) L.push(`# flagged: ${r.flagged.map((f) => `element ${f.element}${r.perFrequency ? ` at ${f.frequencyHz} Hz` : ""} ${f.flags.join("+")}`).join("; ")}`);
  for (const f of r.frequencies) for (const w of f.warnings) L.push(`# warning${r.perFrequency ? ` at ${f.frequencyHz} Hz` : ""}: ${w}`);
  if (r.placeholders.length) L.push(`# no readings (disabled): elements ${compactIds(r.placeholders, Infinity)} written as 0, 0`);
  L.push(r.perFrequency ? "frequency_hz,element,phase_offset_deg,gain_offset_db" : "element,phase_offset_deg,gain_offset_db");
  for (const f of r.frequencies) {
    const by = new Map(f.elements.map((e) => [e.element, e]));
    for (let i = 0; i < ids.length; i++) {
      const id = ids[i]!;
      const e = by.get(id);
      const row = `${id},${e ? fixed(e.phaseDeg, 4) : "0"},${e ? fixed(e.gainDb, 4) : "0"}`;
      L.push(r.perFrequency ? `${f.frequencyHz},${row}` : row);
    }
  }
  return L.join("\n") + "\n";
}

/** Write cal.csv through a temporary file renamed into place: never half-written. */
export function writeCalFile(path: string, text: string): string {
  checkCalibrationTarget(path);
  const abs = resolve(path);
  const tmp = `${dirname(abs)}/.${basename(abs)}.steercode-tmp-${process.pid}`;
  try {
    writeFileSync(tmp, text, { flag: "w" });
    renameSync(tmp, abs);
  } catch (e) {
    rmSync(tmp, { force: true });
    throw e;
  }
  return sha256(text);
}
