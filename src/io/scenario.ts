/**
 * Scenario loading: JSON → schema → quantities, files and cross-checks → Plan.
 * Every problem is collected and reported at once (InputError), each naming the
 * file and the JSON pointer or CSV line.
 */
import { lstatSync } from "node:fs";
import { basename, dirname, isAbsolute, join, resolve } from "node:path";
import { axisCount, makeBeamSet, pastHorizon, type AxisSpec, type BeamSpec } from "../core/beams.js";
import { InputError, type Problem } from "../core/errors.js";
import { D, type Dec } from "../core/exact.js";
import { canonicalDecimal } from "../core/decimal-text.js";
import { emptyElements, latticeElements, type Elements, type LatticeSpec } from "../core/geometry.js";
import { MAX_BAND_POINTS, MAX_SQUINT_ROWS } from "../core/band.js";
import type { ElementSpec } from "../core/element.js";
import { OUTPUT_KINDS, type BandSpec, type Calibration, type OutputKind, type Plan, type QuantizerSpec, type StateTable } from "../core/plan.js";
import { makeTaper, type TaperSpec } from "../core/taper/index.js";
import { C_EXACT, parseQuantity, type QuantityKind } from "../core/units.js";
import { checkLayout, wordBytes, type WordLayout } from "../core/words.js";
import { numberCell, readCsv, type CsvRow, type CsvTable } from "./csv.js";
import { calibrationAt, type CalibrationServed, type CalibrationTable } from "../core/calibrate/per-frequency.js";
import { MAX_MANIFEST_BYTES, MAX_SCENARIO_BYTES, readInput, type InputFile } from "./files.js";
import { JsonError, parseJsonStrict, type RoundedNumber } from "./jsonparse.js";
import { ProblemList } from "./problems.js";
import { validateScenarioJson } from "./schema.js";
import { loadDevices } from "./devices-load.js";

export type InputRole = "elements" | "calibration" | "beams" | "phaseStates" | "attenStates" | "element" | "deviceMap";

export interface ScenarioInput {
  role: InputRole;
  /** The name as written in the scenario. */
  ref: string;
  file: InputFile;
  comments: string[];
}

export interface LoadedScenario {
  plan: Plan;
  scenario: InputFile;
  doc: Record<string, unknown>;
  inputs: ScenarioInput[];
}

export interface LoadOptions {
  /** Map a file reference in the scenario to a path (verify uses the copies in a build folder). */
  resolveRef?: (ref: string) => string;
  /** Display name for the scenario file (defaults to the path given). */
  displayName?: string;
  /** Leave the scenario's calibration file unread (calibrate writes it; it may not exist yet). */
  ignoreCalibration?: boolean;
  /**
   * Called once the element and beam counts are known and valid, before the calibration and
   * state files are read (build starts its analysis workers here when the work pays for them).
   */
  onSized?: (elements: number, beams: number, frequencies: number) => void;
}

/** Bounds on physical inputs (README "Limits"): beyond them a value is a typo, not a design. */
export const MIN_FREQUENCY_HZ = 1;
export const MAX_FREQUENCY_HZ = 1e15;
export const MIN_LENGTH_M = 1e-9;
export const MAX_LENGTH_M = 1e4;
export const MAX_ATTEN_STEP_DB = 100;
/** Largest |gain| in dB of a calibration offset or a measured state, largest |phase| in degrees. */
export const MAX_GAIN_DB = 200;
export const MAX_PHASE_DEG = 1e6;
/** Element ids are whole numbers 0 … 2^31 − 1. */
export const MAX_ELEMENT_ID = 2 ** 31 - 1;

/** Most beams one table may hold, and most bytes one table.bin may take. */
export const MAX_BEAMS = 1 << 20;
export const MAX_ELEMENTS = 65536;
/** Most listed frequencies (sets) in one cal.csv with a frequency_hz column. */
export const MAX_CAL_FREQUENCIES = 1024;
export const MAX_TABLE_BYTES = 2 ** 32;
const DEFAULT_SEED = 1;

/** A numeric cell's exact decimal text (as `new D(text).toString()`; decimal.js only when the text is not already canonical). */
const exactText = (text: string): string => canonicalDecimal(text, (t) => new D(t).toString());
const ID = { integer: true, min: 0, max: MAX_ELEMENT_ID };
const POSITION = { min: -MAX_LENGTH_M, max: MAX_LENGTH_M };
const PHASE = { min: -MAX_PHASE_DEG, max: MAX_PHASE_DEG };
const GAIN = { min: -MAX_GAIN_DB, max: MAX_GAIN_DB };

/** Where a build folder keeps its copy of each input file (fixed names: README "What verify checks"). */
export const INPUT_COPY: Record<InputRole, string> = {
  elements: "inputs/elements.csv",
  calibration: "inputs/calibration.csv",
  beams: "inputs/beams.csv",
  phaseStates: "inputs/phase-states.csv",
  attenStates: "inputs/atten-states.csv",
  element: "inputs/element.csv",
  deviceMap: "inputs/devices.csv",
};

/**
 * A scenario read from a build folder's `inputs/` (the folder holding it is named
 * `inputs` and the one above holds a steercode manifest.json): each file reference the
 * manifest lists (`inputs[k].ref`) maps to its stored copy (`inputs/<role>.csv`), so that
 * `build B/inputs/scenario.json` rebuilds B (its scenario says `"calibration": "cal.csv"`,
 * stored as inputs/calibration.csv: that rebuild was "cal.csv: file not found").
 * Null when the scenario is not in a build folder; references the manifest does not list
 * resolve as usual, next to the scenario.
 */
function recordedCopies(path: string): Map<string, string> | null {
  const inputs = dirname(resolve(path));
  if (basename(inputs) !== "inputs") return null;
  const folder = dirname(inputs);
  const mp = join(folder, "manifest.json");
  try {
    if (!lstatSync(mp).isFile()) return null;
  } catch {
    return null;
  }
  const problems: Problem[] = [];
  const f = readInput(mp, mp, problems, undefined, MAX_MANIFEST_BYTES);
  if (!f) throw new InputError(problems);
  let m: { format?: unknown; inputs?: unknown };
  try {
    m = JSON.parse(f.text) as typeof m;
  } catch {
    return null; // not a build's manifest
  }
  if (typeof m !== "object" || m === null || m.format !== "steercode-manifest/1") return null;
  if (!Array.isArray(m.inputs)) throw new InputError({ file: mp, pointer: "/inputs", message: "expected a list of the copied input files (the scenario is read from this build folder's inputs/)" });
  const copies = new Map<string, string>();
  (m.inputs as unknown[]).forEach((i, k) => {
    const e = (typeof i === "object" && i !== null ? i : {}) as { role?: unknown; ref?: unknown; copy?: unknown };
    const role = typeof e.role === "string" && Object.hasOwn(INPUT_COPY, e.role) ? (e.role as InputRole) : null;
    if (!role || e.copy !== INPUT_COPY[role] || typeof e.ref !== "string") problems.push({ file: mp, pointer: `/inputs/${k}`, message: `expected { role, ref, copy } with copy inputs/<role>.csv (${Object.values(INPUT_COPY).join(", ")})` });
    else copies.set(e.ref, join(folder, INPUT_COPY[role]));
  });
  if (problems.length) throw new InputError(problems);
  return copies;
}

export function loadScenario(path: string, givenOpts: LoadOptions = {}): LoadedScenario {
  const recorded = givenOpts.resolveRef ? null : recordedCopies(path);
  const here = dirname(path);
  const opts: LoadOptions = recorded ? { ...givenOpts, resolveRef: (ref) => recorded.get(ref) ?? (isAbsolute(ref) ? ref : resolve(here, ref)) } : givenOpts;
  const display = opts.displayName ?? path;
  const problems: Problem[] = [];
  const scenario = readInput(path, display, problems, undefined, MAX_SCENARIO_BYTES);
  if (!scenario) throw new InputError(problems);
  let doc: unknown;
  const rounded: RoundedNumber[] = [];
  try {
    doc = parseJsonStrict(scenario.text, rounded);
  } catch (e) {
    if (!(e instanceof JsonError)) throw e;
    throw new InputError({ file: display, line: e.line, ...(e.pointer !== undefined ? { pointer: e.pointer } : {}), message: `not valid JSON (${e.message}) at column ${e.column}` });
  }
  if (typeof doc !== "object" || doc === null || Array.isArray(doc)) throw new InputError({ file: display, pointer: "", message: "expected a JSON object (a steercode-scenario/1 document)" });
  const schemaProblems = validateScenarioJson(doc, display);
  const due = rounded.length ? wholeNumbersDue(doc, rounded, display) : null;
  for (const r of rounded)
    if (due!.has(r.pointer)) schemaProblems.push({ file: display, pointer: r.pointer, message: `expected a whole number, got ${r.text} (not whole as written, though a double rounds it to ${r.value})` });
  const d = doc as Record<string, any>;
  const arr = (d.array ?? {}) as Record<string, unknown>;
  if (typeof d.array === "object" && d.array !== null && !Array.isArray(d.array)) {
    const hasL = arr.lattice !== undefined;
    const hasE = arr.elements !== undefined;
    if (hasL === hasE) schemaProblems.push({ file: display, pointer: "/array", message: hasL ? 'give either "lattice" or "elements", not both' : 'expected "lattice" (a rectangular or triangular lattice) or "elements" (an elements.csv file)' });
  }
  if (schemaProblems.length) {
    const capped = new ProblemList();
    for (const p of schemaProblems) capped.push(p);
    throw new InputError(capped.all());
  }
  return new Loader(path, display, scenario, d, opts).load();
}

/**
 * The pointers, among `rounded`, where the schema wants a whole number. Asked once for all of
 * them: 0.5 is put at each and a copy validated, looking for a type error at that pointer
 * (one validation, not one per number: 20 000 such numbers took 51 s that way).
 */
function wholeNumbersDue(doc: object, rounded: RoundedNumber[], display: string): Set<string> {
  const copy = structuredClone(doc) as Record<string, unknown>;
  for (const r of rounded) {
    const keys = r.pointer.split("/").slice(1).map((k) => k.replace(/~1/g, "/").replace(/~0/g, "~"));
    let at: any = copy;
    for (const k of keys.slice(0, -1)) at = at[k];
    at[keys[keys.length - 1]!] = 0.5;
  }
  const asked = new Set(rounded.map((r) => r.pointer));
  return new Set(validateScenarioJson(copy, display).filter((p) => p.pointer !== undefined && asked.has(p.pointer) && /\binteger\b/.test(p.message)).map((p) => p.pointer!));
}

class Loader {
  private readonly problems = new ProblemList();
  private readonly inputs: ScenarioInput[] = [];
  /** elements.csv line of each element id (device/channel problems name it) */
  private readonly elementLines = new Map<number, number>();
  private elementsFile = "";
  private readonly dir: string;
  constructor(
    path: string,
    private readonly display: string,
    private readonly scenario: InputFile,
    private readonly d: Record<string, any>,
    private readonly opts: LoadOptions,
  ) {
    this.dir = dirname(path);
  }

  private problem(pointer: string, message: string): void {
    this.problems.push({ file: this.display, pointer, message });
  }

  private quantity(raw: unknown, kind: QuantityKind, pointer: string, rule?: (v: number) => string | null) {
    const r = parseQuantity(raw, kind);
    if (!r.ok) {
      this.problem(pointer, `expected ${r.expected}, got ${JSON.stringify(raw)}`);
      return null;
    }
    if (!Number.isFinite(r.q.value)) {
      this.problem(pointer, `expected a ${kind} within the range of a double (±1.8e308 in SI units), got ${JSON.stringify(raw)}`);
      return null;
    }
    const msg = rule?.(r.q.value) ?? null;
    if (msg) {
      this.problem(pointer, `${msg}, got ${JSON.stringify(raw)}`);
      return null;
    }
    return r.q;
  }

  private file(ref: string, role: InputRole, pointer: string, maxRows?: number, rowsWhat?: string): CsvTable | null {
    const path = this.opts.resolveRef ? this.opts.resolveRef(ref) : isAbsolute(ref) ? ref : resolve(this.dir, ref);
    const f = readInput(path, ref, this.problems, pointer);
    if (!f) return null;
    const shapes = {
      elements: { required: [["element", "x_m", "y_m"]], optional: ["z_m", "device", "channel", "enabled"] },
      calibration: { required: [["element", "phase_offset_deg", "gain_offset_db"]], optional: ["frequency_hz"] },
      beams: { required: [["az_deg", "el_deg"], ["u", "v"]], optional: ["beam"] },
      phaseStates: { required: [["code", "phase_deg", "gain_db"]], optional: ["element"] },
      attenStates: { required: [["code", "atten_db", "phase_deg"]], optional: ["element"] },
      element: { required: [["theta_deg", "phi_deg", "gain_db"]], optional: [] },
      deviceMap: { required: [["element", "device", "channel"]], optional: [] },
    } as const;
    const shape = shapes[role];
    const before = this.problems.count;
    const t = readCsv(f, { required: shape.required.map((s) => [...s]), optional: [...shape.optional], ...(maxRows !== undefined ? { maxRows, rowsWhat: rowsWhat ?? "" } : {}) }, this.problems);
    if (t) this.inputs.push({ role, ref, file: f, comments: t.comments });
    // a file with bad rows is reported, not used: nothing downstream sees half of it
    return this.problems.count > before ? null : t;
  }

  load(): LoadedScenario {
    const d = this.d;
    // ---- frequencies
    const fRaw: unknown[] = Array.isArray(d.frequency) ? d.frequency : [d.frequency];
    const freqs: { value: number; exact: string }[] = [];
    fRaw.forEach((raw, i) => {
      const q = this.quantity(raw, "frequency", Array.isArray(d.frequency) ? `/frequency/${i}` : "/frequency", (v) => (!(v > 0) ? "expected a frequency > 0" : v < MIN_FREQUENCY_HZ || v > MAX_FREQUENCY_HZ ? "expected a frequency from 1 Hz to 1000 THz" : null));
      if (q) freqs.push({ value: q.value, exact: q.exact.toString() });
    });
    const seenF = new Set<string>();
    freqs.forEach((f, i) => {
      const k = new D(f.exact).toString();
      if (seenF.has(k)) this.problem(`/frequency/${i}`, `frequency ${f.exact} Hz is listed twice`);
      seenF.add(k);
    });
    const lowest = freqs.length ? freqs.reduce((a, b) => (b.value < a.value ? b : a)) : null;
    const lambdaMin = lowest ? C_EXACT.div(lowest.exact) : null;

    // ---- geometry
    const { elements, lattice } = this.geometry(lambdaMin);

    // ---- beams
    const beams = this.beams();
    if (elements && beams && freqs.length && this.problems.count === 0) this.opts.onSized?.(elements.count, beams.count, freqs.length);

    // ---- hardware
    const phaseBits: number = d.phaseShifter.bits;
    const att = d.attenuator as { bits: number; step: unknown; states?: string } | undefined;
    let attenBits = 0;
    let attenStepDb = 1;
    let attenStepExact = "1";
    if (att) {
      attenBits = att.bits;
      const q = this.quantity(att.step, "level", "/attenuator/step", (v) => (v > 0 ? (v > MAX_ATTEN_STEP_DB ? `expected an attenuator step of at most ${MAX_ATTEN_STEP_DB} dB` : null) : "expected an attenuator step > 0 dB"));
      if (q) {
        attenStepDb = q.value;
        attenStepExact = q.exact.toString();
      }
    }
    const taper = this.taper();
    const calSets = this.calibration(elements, freqs);
    const phaseStates = d.phaseShifter.states ? this.states(d.phaseShifter.states, "phaseStates", "/phaseShifter/states", 2 ** phaseBits, elements) : null;
    const attenStates = att?.states ? this.states(att.states, "attenStates", "/attenuator/states", 2 ** attenBits, elements) : null;
    const quantizer: QuantizerSpec = { method: d.quantizer?.method ?? "nearest", seed: d.quantizer?.seed ?? DEFAULT_SEED };
    if (quantizer.method === "optimized") {
      quantizer.objective = "psl";
      if (typeof d.quantizer?.maxGainLossDb === "number") quantizer.maxGainLossDb = d.quantizer.maxGainLossDb;
    } else
      for (const key of ["objective", "maxGainLossDb"])
        if (d.quantizer?.[key] !== undefined) this.problem(`/quantizer/${key}`, `"${key}" applies to the optimized quantizer only; expected "method": "optimized" or no "${key}"`);
    if (quantizer.method === "randomized" && (phaseStates || attenStates))
      this.problem("/quantizer/method", 'expected "nearest" with measured state tables (the randomized quantizer works on ideal phase steps)');
    const word: WordLayout = { bits: d.word.bits, bytes: wordBytes(d.word.bits), off: d.word.off ?? 0, fields: d.word.fields };
    for (const p of checkLayout(word, phaseBits, attenBits, "/word")) this.problems.push({ file: this.display, ...p });
    const outputs: OutputKind[] = d.outputs ? OUTPUT_KINDS.filter((k) => (d.outputs as string[]).includes(k)) : [...OUTPUT_KINDS];
    const element = this.element();
    const band = this.band();
    if (element && beams && !(element.pattern === "cosine" && element.exponent === 0)) {
      // the element pattern is zero on the horizon: a beam there has no gain to analyse
      const onHorizon: number[] = [];
      for (let b = 0; b < beams.count; b++) if (element.pattern === "cosine" && beams.u[b]! ** 2 + beams.v[b]! ** 2 >= 1 - 1e-12) onHorizon.push(b);
      // the test is u² + v² ≥ 1 − 1e-12 (cos θ ≤ 1e-6), a margin for rounding: say so (θ = 89.99999° was refused as "on the horizon", "expected θ < 90°")
      if (onHorizon.length) this.problem("/beams", `${onHorizon.length} beam(s) on the horizon or within 0.0000573° of it (cos θ ≤ 1e-6, θ > 89.9999427°; first: beam ${onHorizon[0]}), where the cosine element pattern is zero; expected every beam at θ ≤ 89.9999427° with "element"`);
    }
    if (band && beams && freqs.length) {
      const rows = freqs.length * beams.count * band.frequenciesHz.length;
      if (rows > MAX_SQUINT_ROWS) this.problem("/band", `${freqs.length} table frequencies × ${beams.count} beams × ${band.frequenciesHz.length} band points = ${rows} squint.csv rows; expected at most ${MAX_SQUINT_ROWS}: use fewer band points or beams`);
    }
    if (band && calSets?.calTable) {
      // the band is played with the calibration at each band frequency: listed or interpolated, never extrapolated
      const t = calSets.calTable;
      const lo = new D(t.frequenciesExact[0]!), hi = new D(t.frequenciesExact[t.frequenciesExact.length - 1]!);
      const outside = band.frequenciesExact.filter((f) => new D(f).lt(lo) || new D(f).gt(hi));
      if (outside.length)
        this.problem(
          "/band",
          `${outside.length} of ${band.frequenciesExact.length} band point(s) (${outside.slice(0, 3).map((f) => `${f} Hz`).join(", ")}${outside.length > 3 ? ", …" : ""}) lie outside the span ${t.frequenciesExact[0]} … ${t.frequenciesExact[t.frequenciesExact.length - 1]} Hz of the frequency_hz sets in ${String(d.calibration)}; expected a band within the calibrated span (calibration is interpolated, never extrapolated)`,
        );
    }
    const devices = d.devices ? loadDevices(this.d.devices, { display: this.display, problems: this.problems, file: (ref) => this.file(ref, "deviceMap", "/devices/map", MAX_ELEMENTS, "elements in an array"), elements, elementLines: this.elementLines, elementsFile: this.elementsFile, word, blocks: beams ? freqs.length * beams.count : 0, beams: beams?.count ?? 0 }) : null;

    // ---- sizes
    if (beams && elements) {
      const words = freqs.length * beams.count * elements.count;
      const bytes = words * word.bytes;
      if (bytes > MAX_TABLE_BYTES) this.problem("/beams", `the table would hold ${words} words (${bytes} bytes); expected at most ${MAX_TABLE_BYTES} bytes: use fewer beams, elements or frequencies`);
    }
    if (elements && elements.count > 0 && !elements.enabled.some((e) => e === 1)) this.problem(this.d.array.elements ? "/array/elements" : "/array/disabled", "every element is disabled; expected at least one enabled element");

    if (this.problems.count || !elements || !beams || !taper || !calSets) throw new InputError(this.problems.all());
    const amplitude = makeTaper(taper).amplitudes({ elements, lattice });
    amplitude.forEach((a, i) => {
      if (!(a > 0)) this.problem("/taper", `the taper gives element ${elements.ids[i]} amplitude ${a}; expected > 0 (try a larger nbar or a milder sidelobe level)`);
    });
    if (this.problems.count) throw new InputError(this.problems.all());
    const plan: Plan = {
      name: typeof d.name === "string" ? d.name : "",
      frequenciesHz: freqs.map((f) => f.value),
      frequenciesExact: freqs.map((f) => f.exact),
      elements,
      lattice,
      beams,
      taper,
      amplitude,
      ...calSets,
      phaseBits,
      attenBits,
      attenStepDb,
      attenStepExact,
      phaseStates,
      attenStates,
      quantizer,
      word,
      outputs,
      element,
      band,
      devices,
    };
    return { plan, scenario: this.scenario, doc: d, inputs: this.inputs };
  }

  private geometry(lambdaMin: InstanceType<typeof D> | null): { elements: Elements | null; lattice: LatticeSpec | null } {
    const a = this.d.array as Record<string, any>;
    let elements: Elements | null = null;
    let lattice: LatticeSpec | null = null;
    if (a.lattice) {
      const l = a.lattice as Record<string, any>;
      const pitch = (key: "dx" | "dy") => {
        const q = this.quantity(l[key], "length", `/array/lattice/${key}`, (v) => (v > 0 ? null : "expected a spacing > 0"));
        if (!q) return null;
        let m = q.exact;
        if (q.inLambda) {
          if (!lambdaMin) return null;
          m = q.exact.times(lambdaMin);
        }
        if (m.lt(MIN_LENGTH_M) || m.gt(MAX_LENGTH_M)) {
          this.problem(`/array/lattice/${key}`, `expected a spacing from 1 nm to 10 km, got ${JSON.stringify(l[key])}${q.inLambda ? ` (${m.toSignificantDigits(6).toString()} m)` : ""}`);
          return null;
        }
        return m;
      };
      const dx = pitch("dx");
      const dy = pitch("dy");
      const offset: number = l.kind === "triangular" ? (l.offset ?? 0.5) : 0;
      if (l.kind === "rectangular" && l.offset !== undefined && l.offset !== 0) this.problem("/array/lattice/offset", 'an offset needs kind "triangular"; expected no offset (or 0) for a rectangular lattice');
      const tooMany = l.columns * l.rows > 65536;
      if (tooMany) this.problem("/array/lattice", `${l.columns}×${l.rows} = ${l.columns * l.rows} elements; expected at most 65536`);
      // built even when other parts of the scenario have problems, so that the files that
      // depend on the elements (calibration, states) are checked in the same run
      const offsetOk = !(l.kind === "rectangular" && l.offset !== undefined && l.offset !== 0);
      if (dx && dy && !tooMany && offsetOk) {
        lattice = { kind: l.kind, columns: l.columns, rows: l.rows, dxExact: dx.toString(), dyExact: dy.toString(), dx: dx.toNumber(), dy: dy.toNumber(), offset, offsetExact: String(offset) };
        elements = latticeElements(lattice);
      }
    } else if (typeof a.elements === "string") {
      elements = this.elementList(a.elements);
    }
    if (elements && Array.isArray(a.disabled)) {
      const index = new Map<number, number>();
      elements.ids.forEach((id, i) => index.set(id, i));
      (a.disabled as number[]).forEach((id, k) => {
        const i = index.get(id);
        if (i === undefined) this.problem(`/array/disabled/${k}`, `no element ${id} in the array (ids ${elements!.ids[0]} … ${elements!.ids[elements!.count - 1]})`);
        else elements!.enabled[i] = 0;
      });
    }
    return { elements, lattice };
  }

  private elementList(ref: string): Elements | null {
    const t = this.file(ref, "elements", "/array/elements", MAX_ELEMENTS, "elements in an array");
    if (!t) return null;
    this.elementsFile = t.file;
    const before = this.problems.count;
    const rows: { id: number; x: string; y: string; z: string; device: string; channel: string; enabled: number; line: number }[] = [];
    const seen = new Map<number, number>();
    for (const r of t.rows) {
      const id = numberCell(t, r, "element", this.problems, ID);
      const x = numberCell(t, r, "x_m", this.problems, POSITION);
      const y = numberCell(t, r, "y_m", this.problems, POSITION);
      const z = t.header.includes("z_m") ? numberCell(t, r, "z_m", this.problems, POSITION) : { text: "0", value: 0 };
      let enabled = 1;
      const en = r.cells.get("enabled");
      if (en !== undefined) {
        const v = en.toLowerCase();
        if (["1", "true", "yes", "y", "on"].includes(v)) enabled = 1;
        else if (["0", "false", "no", "n", "off"].includes(v)) enabled = 0;
        else this.problems.push({ file: t.file, line: r.line, column: "enabled", message: `expected 1/0, true/false or yes/no, got "${en}"` });
      }
      if (!id || !x || !y || !z) continue;
      const prev = seen.get(id.value);
      if (prev !== undefined) {
        this.problems.push({ file: t.file, line: r.line, column: "element", message: `element ${id.value} is listed twice (also on line ${prev})` });
        continue;
      }
      seen.set(id.value, r.line);
      this.elementLines.set(id.value, r.line);
      rows.push({ id: id.value, x: x.text, y: y.text, z: z.text, device: r.cells.get("device") ?? "", channel: r.cells.get("channel") ?? "", enabled, line: r.line });
    }
    if (this.problems.count > before) return null;
    if (rows.length > 65536) {
      this.problems.push({ file: t.file, message: `${rows.length} elements; expected at most 65536` });
      return null;
    }
    rows.sort((a, b) => a.id - b.id);
    const el = emptyElements(rows.length);
    const ex: string[] = [], ey: string[] = [], ez: string[] = [];
    el.exactX = ex;
    el.exactY = ey;
    el.exactZ = ez;
    rows.forEach((r, i) => {
      el.ids[i] = r.id;
      ex.push(exactText(r.x));
      ey.push(exactText(r.y));
      ez.push(exactText(r.z));
      el.x[i] = Number(r.x);
      el.y[i] = Number(r.y);
      el.z[i] = Number(r.z);
      el.enabled[i] = r.enabled;
    });
    if (t.header.includes("device")) el.device = rows.map((r) => r.device);
    if (t.header.includes("channel")) el.channel = rows.map((r) => r.channel);
    // every coincident pair, wherever the two sit in the file: sort by position, compare neighbours
    const order = Array.from({ length: rows.length }, (_, i) => i).sort((i, j) => el.x[i]! - el.x[j]! || el.y[i]! - el.y[j]! || el.z[i]! - el.z[j]! || i - j);
    let dup = false;
    for (let k = 1, first = order[0]!; k < order.length; k++) {
      const i = order[k]!;
      if (el.x[i] === el.x[first] && el.y[i] === el.y[first] && el.z[i] === el.z[first]) {
        this.problems.push({ file: t.file, line: rows[i]!.line, message: `element ${rows[i]!.id} sits at the same position as element ${rows[first]!.id}` });
        dup = true;
      } else first = i;
    }
    return dup ? null : el;
  }

  private axis(raw: { from: number; to: number; step: number }, pointer: string, limits: [number, number]): AxisSpec | null {
    let ok = true;
    for (const key of ["from", "to"] as const) {
      if (raw[key] < limits[0] || raw[key] > limits[1]) {
        this.problem(`${pointer}/${key}`, `expected a value from ${limits[0]} to ${limits[1]} (visible space), got ${raw[key]}`);
        ok = false;
      }
    }
    if (raw.to < raw.from) {
      this.problem(pointer, `"to" (${raw.to}) is below "from" (${raw.from}); expected from ≤ to`);
      ok = false;
    }
    if (!ok) return null;
    const from = new D(raw.from).toString();
    const step = new D(raw.step).toString();
    const count = axisCount(from, new D(raw.to).toString(), step);
    const span = new D(raw.to).minus(raw.from);
    if (span.gt(0) && new D(raw.step).gt(span)) {
      this.problem(`${pointer}/step`, `step ${raw.step} is larger than the span ${span.toString()}; the grid would hold only "from". Expected a step ≤ ${span.toString()} (or from = to for one value)`);
      return null;
    }
    if (count > MAX_BEAMS) {
      this.problem(`${pointer}/step`, `step ${raw.step} gives ${count} values; expected at most ${MAX_BEAMS} beams in a table`);
      return null;
    }
    return { from, step, count, to: new D(raw.to).toString() };
  }

  private beams() {
    const b = this.d.beams as Record<string, any>;
    let spec: BeamSpec | null = null;
    if (b.kind === "list") {
      const t = this.file(b.file, "beams", "/beams/file", MAX_BEAMS, "beams in a table");
      if (!t) return null;
      const azel = t.header.includes("az_deg");
      // both pairs of columns: the u,v columns were ignored without a word
      const mixed = t.header.filter((c) => c === "az_deg" || c === "el_deg").length && t.header.filter((c) => c === "u" || c === "v").length;
      if (mixed) {
        this.problems.push({ file: t.file, line: t.comments.length + 1, message: `header ${t.header.join(",")} names both az_deg,el_deg and u,v columns; expected one pair (az_deg,el_deg or u,v)` });
        return null;
      }
      const [ca, cb] = azel ? ["az_deg", "el_deg"] : ["u", "v"];
      const a: string[] = [];
      const bb: string[] = [];
      const before = this.problems.count;
      for (const r of t.rows) {
        const x = numberCell(t, r, ca!, this.problems);
        const y = numberCell(t, r, cb!, this.problems);
        if (!x || !y) continue;
        // u² + v² within a rounding of 1 is the horizon, as for a u-v grid (makeBeamSet)
        const outside = azel ? Math.abs(x.value) > 90 || Math.abs(y.value) > 90 : pastHorizon(x.value, y.value);
        if (outside) this.problems.push({ file: t.file, line: r.line, message: `beam (${ca}=${x.text}, ${cb}=${y.text}) is outside visible space; expected ${azel ? "|az|, |el| ≤ 90" : "u² + v² ≤ 1"}` });
        a.push(exactText(x.text));
        bb.push(exactText(y.text));
      }
      if (this.problems.count > before) return null;
      if (a.length > MAX_BEAMS) {
        this.problems.push({ file: t.file, message: `${a.length} beams; expected at most ${MAX_BEAMS}` });
        return null;
      }
      spec = { kind: azel ? "azel" : "uv", grid: false, a, b: bb };
    } else {
      const [k1, k2, l1, l2]: [string, string, [number, number], [number, number]] =
        b.kind === "azel" ? ["az", "el", [-90, 90], [-90, 90]] : b.kind === "uv" ? ["u", "v", [-1, 1], [-1, 1]] : ["theta", "phi", [0, 90], [-360, 360]];
      const inner = this.axis(b[k1], `/beams/${k1}`, l1);
      const outer = this.axis(b[k2], `/beams/${k2}`, l2);
      if (!inner || !outer) return null;
      if (inner.count * outer.count > MAX_BEAMS) {
        this.problem("/beams", `${inner.count}×${outer.count} = ${inner.count * outer.count} beams; expected at most ${MAX_BEAMS}`);
        return null;
      }
      spec = { kind: b.kind, grid: true, inner, outer };
    }
    const { set, invisible } = makeBeamSet(spec);
    if (invisible.length) {
      const show = invisible.slice(0, 5).map((i) => `beam ${i} (u=${set.u[i]!.toFixed(4)}, v=${set.v[i]!.toFixed(4)})`);
      this.problem("/beams", `${invisible.length} beam(s) outside visible space (u² + v² > 1): ${show.join(", ")}${invisible.length > 5 ? ", …" : ""}; expected every beam inside the unit circle`);
      return null;
    }
    return set;
  }

  /** `element`: a cosine^q power pattern or a measured table covering the upper hemisphere. */
  private element(): ElementSpec | null {
    const e = this.d.element as { pattern: string; exponent?: number; file?: string } | undefined;
    if (!e) return null;
    if (e.pattern === "cosine") return { pattern: "cosine", exponent: e.exponent! };
    const t = this.file(e.file!, "element", "/element/file");
    if (!t) return null;
    const before = this.problems.length;
    const cells = new Map<string, { line: number; g: number }>();
    const thetas = new Map<number, string>();
    const phis = new Map<number, string>();
    for (const r of t.rows) {
      const th = numberCell(t, r, "theta_deg", this.problems);
      const ph = numberCell(t, r, "phi_deg", this.problems);
      const g = numberCell(t, r, "gain_db", this.problems);
      if (!th || !ph || !g) continue;
      if (th.value < 0 || th.value > 180) { this.problems.push({ file: t.file, line: r.line, column: "theta_deg", message: `expected θ from 0 to 180 degrees, got "${th.text}"` }); continue; }
      if (ph.value < 0 || ph.value > 360) { this.problems.push({ file: t.file, line: r.line, column: "phi_deg", message: `expected φ from 0 to 360 degrees, got "${ph.text}"` }); continue; }
      if (Math.abs(g.value) > 300) { this.problems.push({ file: t.file, line: r.line, column: "gain_db", message: `expected a gain within ±300 dB, got "${g.text}"` }); continue; }
      if (th.value > 90) continue; // below the horizon: nothing radiates there in the analysis
      const key = `${th.value}/${ph.value}`;
      const prev = cells.get(key);
      if (prev) { this.problems.push({ file: t.file, line: r.line, message: `θ = ${th.text}°, φ = ${ph.text}° is listed twice (also on line ${prev.line})` }); continue; }
      cells.set(key, { line: r.line, g: g.value });
      thetas.set(th.value, th.text);
      phis.set(ph.value, ph.text);
    }
    if (this.problems.length > before) return null;
    const thetaDeg = Float64Array.from([...thetas.keys()].sort((a, b) => a - b));
    let phiDeg = Float64Array.from([...phis.keys()].sort((a, b) => a - b));
    const cover: string[] = [];
    if (!thetaDeg.length || thetaDeg[0] !== 0) cover.push(`θ starts at ${thetaDeg[0] ?? "nothing"}°, not at 0° (boresight)`);
    if (!thetaDeg.length || thetaDeg[thetaDeg.length - 1]! < 90) cover.push(`θ ends at ${thetaDeg[thetaDeg.length - 1] ?? "nothing"}°, below 90° (the horizon)`);
    // φ = 360 repeats φ = 0 (when both are given they must agree)
    if (phiDeg.length > 1 && phiDeg[0] === 0 && phiDeg[phiDeg.length - 1] === 360) {
      for (const th of thetaDeg) {
        const a = cells.get(`${th}/0`), b = cells.get(`${th}/360`);
        if (a && b && a.g !== b.g) cover.push(`at θ = ${th}° the gain at φ = 360° (line ${b.line}) differs from φ = 0° (line ${a.line}); they are the same direction`);
      }
      phiDeg = phiDeg.subarray(0, phiDeg.length - 1).slice();
    }
    const missing: string[] = [];
    for (const th of thetaDeg) for (const ph of phiDeg) if (!cells.has(`${th}/${ph}`)) missing.push(`θ = ${th}°, φ = ${ph}°`);
    if (missing.length) cover.push(`the θ/φ grid has ${missing.length} hole(s): ${missing.slice(0, 4).join("; ")}${missing.length > 4 ? "; …" : ""}`);
    if (cover.length) {
      this.problems.push({ file: t.file, message: `does not cover the upper hemisphere: ${cover.join("; ")}; expected gain_db at every θ of a grid from 0 to 90° for every φ of a grid (one φ: rotationally symmetric)` });
      return null;
    }
    const np = phiDeg.length;
    const gainDb = new Float64Array(thetaDeg.length * np);
    thetaDeg.forEach((th, i) => phiDeg.forEach((ph, j) => (gainDb[i * np + j] = cells.get(`${th}/${ph}`)!.g)));
    return { pattern: "table", thetaDeg, phiDeg, gainDb };
  }

  /** `band`: from … to inclusive in steps, all > 0, at most MAX_BAND_POINTS points. */
  private band(): BandSpec | null {
    const b = this.d.band as { from: unknown; to: unknown; step: unknown } | undefined;
    if (!b) return null;
    const positive = (v: number) => (v > 0 && Number.isFinite(v) ? null : "expected a frequency in (0, ∞)");
    const from = this.quantity(b.from, "frequency", "/band/from", positive);
    const to = this.quantity(b.to, "frequency", "/band/to", positive);
    const step = this.quantity(b.step, "frequency", "/band/step", positive);
    if (!from || !to || !step) return null;
    if (to.exact.lt(from.exact)) {
      this.problem("/band", `"to" (${to.exact.toString()} Hz) is below "from" (${from.exact.toString()} Hz); expected from ≤ to`);
      return null;
    }
    const span = to.exact.minus(from.exact);
    if (span.gt(0) && step.exact.gt(span)) {
      this.problem("/band/step", `step ${step.exact.toString()} Hz is larger than the span ${span.toString()} Hz; the band would hold only "from". Expected a step ≤ ${span.toString()} Hz (or from = to for one point)`);
      return null;
    }
    const count = axisCount(from.exact.toString(), to.exact.toString(), step.exact.toString());
    if (count > MAX_BAND_POINTS) {
      this.problem("/band/step", `step ${step.exact.toString()} Hz gives ${count} band points; expected at most ${MAX_BAND_POINTS}`);
      return null;
    }
    const frequenciesExact: string[] = [];
    for (let i = 0; i < count; i++) frequenciesExact.push(from.exact.plus(step.exact.times(i)).toString());
    return { frequenciesExact, frequenciesHz: frequenciesExact.map(Number), toExact: to.exact.toString() };
  }

  private taper(): TaperSpec | null {
    const t = this.d.taper as Record<string, any> | undefined;
    if (!t || t.kind === "uniform") return { kind: "uniform" };
    const sll = this.quantity(t.sidelobe, "level", "/taper/sidelobe", (v) => (v < 0 ? (v < -120 ? "expected a sidelobe level above -120 dB" : null) : 'expected a negative sidelobe level in dB such as "-30 dB"'));
    if (!sll) return null;
    if (t.kind === "taylor") return { kind: "taylor", sidelobeDb: sll.value, nbar: t.nbar };
    return { kind: "chebyshev", sidelobeDb: sll.value };
  }

  private coverage(t: CsvTable, elements: Elements, ids: (number | null)[], what: string, at = ""): void {
    const known = new Set(elements.ids);
    const seen = new Map<number, number>();
    t.rows.forEach((r, k) => {
      const id = ids[k];
      if (id === null || id === undefined) return;
      if (!known.has(id)) this.problems.push({ file: t.file, line: r.line, column: "element", message: `element ${id} is not in the array (${what} must cover exactly the array's elements)` });
      const prev = seen.get(id);
      if (prev !== undefined) this.problems.push({ file: t.file, line: r.line, column: "element", message: `element ${id} is listed twice (also on line ${prev})` });
      else seen.set(id, r.line);
    });
    const missing = Array.from(elements.ids).filter((id) => !seen.has(id));
    if (missing.length) this.problems.push({ file: t.file, message: `missing ${missing.length} element(s)${at}: ${compactIds(missing)}; expected a row for every element of the array${at ? " at every listed frequency" : ""}` });
  }

  private calibration(elements: Elements | null, freqs: { value: number; exact: string }[]): Pick<Plan, "cals" | "calTable" | "calServed"> | null {
    const n = elements?.count ?? 0;
    const zero = (): Calibration => ({ phaseDeg: new Float64Array(n), gainDb: new Float64Array(n), phaseExact: new Array<string>(n).fill("0"), gainExact: new Array<string>(n).fill("0") });
    const single = (cal: Calibration) => ({ cals: freqs.map(() => cal), calTable: null, calServed: null });
    const ref = this.opts.ignoreCalibration ? undefined : (this.d.calibration as string | undefined);
    if (!ref) return elements ? single(zero()) : null;
    const t = this.file(ref, "calibration", "/calibration", MAX_ELEMENTS * MAX_CAL_FREQUENCIES, "rows (elements × listed frequencies)");
    if (!t || !elements) return null;
    const before = this.problems.count;
    const index = new Map<number, number>();
    elements.ids.forEach((id, i) => index.set(id, i));
    const perFrequency = t.header.includes("frequency_hz");
    // rows grouped by listed frequency (exact decimal); one group without the column
    const groups = new Map<string, { value: Dec; cal: Calibration; rows: CsvRow[]; ids: (number | null)[] }>();
    for (const r of t.rows) {
      let key = "";
      if (perFrequency) {
        const f = numberCell(t, r, "frequency_hz", this.problems);
        if (!f) continue;
        if (!(f.value >= MIN_FREQUENCY_HZ && f.value <= MAX_FREQUENCY_HZ)) {
          this.problems.push({ file: t.file, line: r.line, column: "frequency_hz", message: `expected a frequency from 1 Hz to 1000 THz, got "${f.text}"` });
          continue;
        }
        key = exactText(f.text);
      }
      let g = groups.get(key);
      if (!g) groups.set(key, (g = { value: new D(perFrequency ? key : 0), cal: zero(), rows: [], ids: [] }));
      const id = numberCell(t, r, "element", this.problems, ID);
      const ph = numberCell(t, r, "phase_offset_deg", this.problems);
      const gn = numberCell(t, r, "gain_offset_db", this.problems);
      g.rows.push(r);
      g.ids.push(id ? id.value : null);
      if (ph && Math.abs(ph.value) > MAX_PHASE_DEG) this.problems.push({ file: t.file, line: r.line, column: "phase_offset_deg", message: `expected a phase offset within ±1e6 degrees, got "${ph.text}"` });
      if (gn && Math.abs(gn.value) > MAX_GAIN_DB) this.problems.push({ file: t.file, line: r.line, column: "gain_offset_db", message: `expected a gain offset within ±200 dB, got "${gn.text}"` });
      const i = id ? index.get(id.value) : undefined;
      if (i === undefined || !ph || !gn) continue;
      g.cal.phaseDeg[i] = ph.value;
      g.cal.gainDb[i] = gn.value;
      g.cal.phaseExact[i] = exactText(ph.text);
      g.cal.gainExact[i] = exactText(gn.text);
    }
    for (const g of groups.values()) this.coverage({ ...t, rows: g.rows }, elements, g.ids, "a calibration file", perFrequency ? ` at frequency_hz ${g.value.toFixed()}` : "");
    if (this.problems.count > before) return null;
    if (!perFrequency) return single(groups.get("")!.cal);
    const sorted = [...groups.values()].sort((a, b) => a.value.cmp(b.value));
    const table: CalibrationTable = {
      frequenciesExact: sorted.map((g) => g.value.toString()),
      sets: sorted.map((g) => g.cal),
      lines: sorted.map((g) => compactIds(g.rows.map((r) => r.line), Infinity)),
    };
    const cals: Calibration[] = [];
    const served: CalibrationServed[] = [];
    freqs.forEach((f, i) => {
      const r = calibrationAt(table, f.exact);
      if (!r.ok) {
        this.problem(Array.isArray(this.d.frequency) ? `/frequency/${i}` : "/frequency", `${r.message} (the frequency_hz sets of ${ref})`);
        return;
      }
      cals.push(r.cal);
      served.push(r.served);
    });
    return this.problems.count > before ? null : { cals, calTable: table, calServed: served };
  }

  private states(ref: string, role: "phaseStates" | "attenStates", pointer: string, states: number, elements: Elements | null): StateTable | null {
    const t = this.file(ref, role, pointer, 2 * (elements ? elements.count : MAX_ELEMENTS) * states, `twice one row per code${elements ? ` and per element (${elements.count})` : ""} of a ${Math.log2(states)}-bit part`);
    if (!t || !elements) return null;
    const before = this.problems.count;
    const perElement = t.header.includes("element");
    const [c1, c2] = role === "phaseStates" ? ["phase_deg", "gain_db"] : ["atten_db", "phase_deg"];
    const n = perElement ? elements.count : 1;
    const primary = new Float64Array(n * states).fill(NaN);
    const secondary = new Float64Array(n * states).fill(NaN);
    const index = new Map<number, number>();
    elements.ids.forEach((id, i) => index.set(id, i));
    const seen = new Map<string, number>();
    for (const r of t.rows) {
      const code = numberCell(t, r, "code", this.problems, { integer: true, min: 0 });
      const a = numberCell(t, r, c1!, this.problems, role === "phaseStates" ? PHASE : { min: -1, max: MAX_GAIN_DB });
      const b = numberCell(t, r, c2!, this.problems, role === "phaseStates" ? GAIN : PHASE);
      const el = perElement ? numberCell(t, r, "element", this.problems, ID) : { text: "", value: 0 };
      if (!code || !a || !b || !el) continue;
      if (code.value >= states) {
        this.problems.push({ file: t.file, line: r.line, column: "code", message: `code ${code.value} does not exist on a ${Math.log2(states)}-bit part; expected 0 … ${states - 1}` });
        continue;
      }
      const i = perElement ? index.get(el.value) : 0;
      if (i === undefined) {
        this.problems.push({ file: t.file, line: r.line, column: "element", message: `element ${el.value} is not in the array` });
        continue;
      }
      const key = `${el.value}/${code.value}`;
      const prev = seen.get(key);
      if (prev !== undefined) {
        this.problems.push({ file: t.file, line: r.line, message: `${perElement ? `element ${el.value} ` : ""}code ${code.value} is listed twice (also on line ${prev})` });
        continue;
      }
      seen.set(key, r.line);
      primary[i * states + code.value] = a.value;
      secondary[i * states + code.value] = b.value;
    }
    if (this.problems.count === before) {
      const missing: string[] = [];
      for (let i = 0; i < n; i++)
        for (let s = 0; s < states; s++)
          if (Number.isNaN(primary[i * states + s]!)) missing.push(perElement ? `element ${elements.ids[i]} code ${s}` : `code ${s}`);
      if (missing.length) this.problems.push({ file: t.file, message: `missing ${missing.length} state(s): ${missing.slice(0, 6).join(", ")}${missing.length > 6 ? ", …" : ""}; expected every code 0 … ${states - 1}${perElement ? " for every element" : ""}` });
    }
    return this.problems.count > before ? null : { states, perElement, primary, secondary };
  }
}

export function compactIds(ids: number[], maxParts = 8): string {
  const parts: string[] = [];
  let i = 0;
  while (i < ids.length && parts.length < maxParts) {
    let j = i;
    while (j + 1 < ids.length && ids[j + 1] === ids[j]! + 1) j++;
    parts.push(j > i ? `${ids[i]}–${ids[j]}` : String(ids[i]));
    i = j + 1;
  }
  return parts.join(", ") + (i < ids.length ? ", …" : "");
}
