/**
 * The resolved build description: everything the engine needs, in SI units and
 * typed arrays, with exact decimal strings kept beside the floats for boundary
 * decisions. A Plan is structured-clone safe, so it can be sent to workers.
 */
import type { BeamSet } from "./beams.js";
import type { DeviceSpec } from "./devices.js";
import type { Elements, LatticeSpec } from "./geometry.js";
import type { TaperSpec } from "./taper/index.js";
import type { WordLayout } from "./words.js";
import type { ElementSpec } from "./element.js";
import type { CalibrationServed, CalibrationTable } from "./calibrate/per-frequency.js";

export type OutputKind = "csv" | "bin" | "c" | "mem" | "json";
export const OUTPUT_KINDS: readonly OutputKind[] = ["csv", "bin", "c", "mem", "json"];

export interface Calibration {
  /** c_n, degrees */
  phaseDeg: Float64Array;
  /** g_n, dB */
  gainDb: Float64Array;
  phaseExact: string[];
  gainExact: string[];
}

/**
 * A measured state table, flattened: value[e·states + s] when perElement, else value[s].
 * Phase shifter: primary = phase (deg) of each phase code, secondary = gain change (dB).
 * Attenuator: primary = attenuation (dB) of each code, secondary = phase change (deg).
 */
export interface StateTable {
  states: number;
  perElement: boolean;
  primary: Float64Array;
  secondary: Float64Array;
}

export type QuantizerMethod = "nearest" | "randomized" | "optimized";

export interface QuantizerSpec {
  method: QuantizerMethod;
  seed: number;
  /** optimized: objective (only "psl") and the gain-loss limit in dB (absent: nearest's loss + 0.1 dB). */
  objective?: "psl";
  maxGainLossDb?: number;
}

export interface Plan {
  name: string;
  frequenciesHz: number[];
  /** Exact frequencies in Hz, decimal strings. */
  frequenciesExact: string[];
  elements: Elements;
  lattice: LatticeSpec | null;
  beams: BeamSet;
  taper: TaperSpec;
  /** a_n, peak 1 */
  amplitude: Float64Array;
  /**
   * The calibration of each table frequency (index as frequenciesHz). Without a
   * frequency_hz column in cal.csv every entry is the same set.
   */
  cals: Calibration[];
  /** The listed sets when cal.csv has a frequency_hz column (else null); see calibrationAt. */
  calTable: CalibrationTable | null;
  /** Per table frequency, which listed set(s) served it (null without a frequency_hz column). */
  calServed: CalibrationServed[] | null;
  phaseBits: number;
  attenBits: number;
  attenStepDb: number;
  attenStepExact: string;
  phaseStates: StateTable | null;
  attenStates: StateTable | null;
  quantizer: QuantizerSpec;
  word: WordLayout;
  outputs: OutputKind[];
  /** Element pattern (interface contract v2); null: isotropic elements. */
  element: ElementSpec | null;
  /** Band analysis (squint.csv); null: none. */
  band: BandSpec | null;
  /** Per-device beam memories (scenario `devices`); null without. */
  devices: DeviceSpec | null;
}

/** The band the tables are played over: from … to inclusive in steps (exact decimal strings beside the floats). */
export interface BandSpec {
  frequenciesHz: number[];
  frequenciesExact: string[];
  /** The scenario's "to" in Hz (exact); the last band point falls short of it when the step does not divide the span. */
  toExact?: string;
}

export function enabledCount(plan: Plan): number {
  let n = 0;
  for (const e of plan.elements.enabled) n += e;
  return n;
}
