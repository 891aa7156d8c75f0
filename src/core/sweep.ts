/**
 * Bit-depth trade-off study: one row per (phase bits, attenuator step, quantizer),
 * aggregated over every beam (and frequency) of the grid, beside the published theory.
 */
import type { QuantizerMethod } from "./plan.js";
import { M, METRICS } from "./pattern/analyze.js";
import { quantile } from "./pattern/summary.js";
import type { Plan } from "./plan.js";
import { planForPart, theoryFor } from "./theory.js";

export interface SweepVariantSpec {
  phaseBits: number;
  attenStepDb: number;
  attenStepExact: string;
  attenBits: number;
  quantizer: QuantizerMethod;
}

export const SWEEP_COLUMNS = [
  "phase_bits",
  "atten_step_db",
  "atten_bits",
  "beams",
  "psl_db_max",
  "sll_rise_db_median",
  "sll_rise_db_p95",
  "sll_rise_db_max",
  "pointing_error_deg_rms",
  "pointing_error_deg_max",
  "gain_loss_db_median",
  "gain_loss_db_max",
  "rms_phase_error_deg",
  "rms_amp_error_db",
  "theory_gain_loss_db",
  "theory_rms_phase_error_deg",
  "theory_quantization_lobe_db",
  "quantizer",
] as const;

export type SweepRow = Record<(typeof SWEEP_COLUMNS)[number], number | string> & {
  psl_ideal_db_max: number;
  theory_random_floor_db: number;
  theory_rms_amp_error_db: number;
  theory_atten_gain_change_db: number;
  theory_expected_gain_loss_db: number;
  /** enabled elements the attenuator clips, summed over the frequencies */
  clipped_elements: number;
};

/**
 * Attenuator bits for a new step at the same range in dB: the range of the scenario's
 * part is (2^Ba − 1)·step; the new part needs 2^Ba' − 1 ≥ range/step' (a tiny tolerance
 * keeps exact multiples exact).
 */
export function attenBitsFor(rangeDb: number, stepDb: number): number {
  if (rangeDb <= 0) return 0;
  return Math.max(1, Math.ceil(Math.log2(rangeDb / stepDb + 1 - 1e-9)));
}

/** Aggregate one variant's metrics block ([frequency][beam][metric]) into a sweep row. */
export function sweepRow(plan: Plan, v: SweepVariantSpec, block: Float64Array, idealPsl: Float64Array): SweepRow {
  const n = block.length / METRICS;
  const col = (k: number) => Float64Array.from({ length: n }, (_, i) => block[i * METRICS + k]!);
  const rise = Float64Array.from({ length: n }, (_, i) => block[i * METRICS + M.psl_db]! - idealPsl[i]!).filter((x) => !Number.isNaN(x)).sort();
  const psl = col(M.psl_db).filter((x) => !Number.isNaN(x));
  const point = col(M.pointing_error_deg);
  const gl = col(M.gain_loss_db).sort();
  const rp = col(M.rms_phase_error_deg);
  const ra = col(M.rms_amp_error_db);
  const rms = (a: Float64Array) => Math.sqrt(a.reduce((s, x) => s + x * x, 0) / a.length);
  const max = (a: Float64Array) => a.reduce((m, x) => Math.max(m, x), -Infinity);
  const t = theoryFor(planForPart(plan, v));
  return {
    phase_bits: v.phaseBits,
    atten_step_db: v.attenStepDb,
    atten_bits: v.attenBits,
    beams: n,
    psl_db_max: psl.length ? max(psl) : NaN,
    sll_rise_db_median: quantile(rise, 0.5),
    sll_rise_db_p95: quantile(rise, 0.95),
    sll_rise_db_max: rise.length ? rise[rise.length - 1]! : NaN,
    pointing_error_deg_rms: rms(point),
    pointing_error_deg_max: max(point),
    gain_loss_db_median: quantile(gl, 0.5),
    gain_loss_db_max: gl[gl.length - 1]!,
    // every beam has the same enabled elements, so the rms over all beams and elements is the rms of the per-beam rms values
    rms_phase_error_deg: rms(rp),
    rms_amp_error_db: rms(ra),
    // n/a (no estimate fits this quantizer or part) is NaN: an empty cell in sweep.csv, null in sweep.json
    theory_gain_loss_db: t.gainLossDb.value ?? NaN,
    theory_rms_phase_error_deg: t.rmsPhaseErrorDeg.value ?? NaN,
    theory_quantization_lobe_db: t.quantizationLobeDb.value ?? NaN,
    quantizer: v.quantizer,
    psl_ideal_db_max: max(idealPsl.filter((x) => !Number.isNaN(x))),
    theory_random_floor_db: t.randomSidelobeFloorDb.value ?? NaN,
    theory_rms_amp_error_db: t.rmsAmpErrorDb.value ?? NaN,
    theory_atten_gain_change_db: t.attenGainChangeDb.value ?? NaN,
    theory_expected_gain_loss_db: t.expectedGainLossDb.value ?? NaN,
    clipped_elements: t.clippedElements,
  };
}
