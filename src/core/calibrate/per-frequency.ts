/**
 * Calibration per frequency (interface contract, Version 2, "Calibration per
 * frequency"): cal.csv with a `frequency_hz` column holds one complete set per listed
 * frequency. A frequency that is listed uses its set; one between two listed
 * frequencies gets, per element, the gain interpolated linearly in dB and the phase
 * linearly along the shorter way round the circle; one outside the span is refused (no
 * extrapolation). Interpolation is done in 60-digit decimal arithmetic from the exact
 * cell texts, so the exact strings the boundary decisions use stay exact.
 */
import { D, type Dec } from "../exact.js";
import type { Calibration, Plan } from "../plan.js";

/** The sets of a cal.csv with a frequency_hz column, in ascending frequency. */
export interface CalibrationTable {
  /** Exact listed frequencies (Hz, decimal strings), ascending. */
  frequenciesExact: string[];
  sets: Calibration[];
  /** CSV lines that hold each set, compacted ("5–260"), for the manifest. */
  lines: string[];
}

/** Which listed set(s) served a frequency, and with what weight. */
export interface CalibrationServed {
  frequencyHz: string;
  interpolated: boolean;
  /** One entry when listed; two (lower, upper) when interpolated. weight = share of that set. */
  from: { frequencyHz: string; lines: string; weight: string }[];
}

export type CalibrationAtResult =
  | { ok: true; cal: Calibration; served: CalibrationServed }
  | { ok: false; message: string };

/** Wrap a decimal angle difference into (−180, 180]; exactly 180 stays +180 (the tie goes the positive way). */
function shorter(d: Dec): Dec {
  let x = d.mod(360); // sign of the dividend
  if (x.gt(180)) x = x.minus(360);
  else if (x.lte(-180)) x = x.plus(360);
  return x;
}

function text(x: Dec): string {
  return x.toFixed();
}

/**
 * The calibration at one frequency (Hz, exact decimal string or number). Pure; used by the
 * scenario loader for every table frequency, and usable for any other frequency (a band
 * analysis plays a table at frequencies in between).
 */
export function calibrationAt(table: CalibrationTable, frequencyHz: string | number): CalibrationAtResult {
  const f = new D(frequencyHz);
  const fs = table.frequenciesExact.map((x) => new D(x));
  const n = fs.length;
  if (n === 0) return { ok: false, message: "the calibration table lists no frequency" };
  const exact = fs.findIndex((x) => x.eq(f));
  if (exact >= 0)
    return { ok: true, cal: table.sets[exact]!, served: { frequencyHz: text(f), interpolated: false, from: [{ frequencyHz: text(fs[exact]!), lines: table.lines[exact]!, weight: "1" }] } };
  if (f.lt(fs[0]!) || f.gt(fs[n - 1]!))
    return { ok: false, message: `frequency ${text(f)} Hz lies outside the calibrated span ${text(fs[0]!)} … ${text(fs[n - 1]!)} Hz; expected a frequency within it (calibration is interpolated, never extrapolated)` };
  let k = 0;
  while (!(fs[k]!.lt(f) && fs[k + 1]!.gt(f))) k++;
  const t = f.minus(fs[k]!).div(fs[k + 1]!.minus(fs[k]!));
  const a = table.sets[k]!, b = table.sets[k + 1]!;
  const m = a.phaseDeg.length;
  const cal: Calibration = { phaseDeg: new Float64Array(m), gainDb: new Float64Array(m), phaseExact: new Array<string>(m), gainExact: new Array<string>(m) };
  for (let i = 0; i < m; i++) {
    const p0 = new D(a.phaseExact[i]!), p1 = new D(b.phaseExact[i]!);
    const g0 = new D(a.gainExact[i]!), g1 = new D(b.gainExact[i]!);
    const p = p0.plus(shorter(p1.minus(p0)).times(t));
    const g = g0.plus(g1.minus(g0).times(t));
    cal.phaseExact[i] = p.toString();
    cal.gainExact[i] = g.toString();
    cal.phaseDeg[i] = p.toNumber();
    cal.gainDb[i] = g.toNumber();
  }
  const one = new D(1);
  return {
    ok: true,
    cal,
    served: {
      frequencyHz: text(f),
      interpolated: true,
      from: [
        { frequencyHz: text(fs[k]!), lines: table.lines[k]!, weight: one.minus(t).toSignificantDigits(12).toString() },
        { frequencyHz: text(fs[k + 1]!), lines: table.lines[k + 1]!, weight: t.toSignificantDigits(12).toString() },
      ],
    },
  };
}

/**
 * The calibration a plan gives at any frequency (Hz, exact decimal string or number): its
 * one set when cal.csv has no frequency_hz column (that set serves every frequency;
 * `served` is null), else the listed set or the one interpolated between the two listed
 * around it (calibrationAt on the table, the way the loader serves the table frequencies).
 */
export function planCalibrationAt(plan: Pick<Plan, "cals" | "calTable">, frequencyHz: string | number): { ok: true; cal: Calibration; served: CalibrationServed | null } | { ok: false; message: string } {
  if (!plan.calTable) return { ok: true, cal: plan.cals[0]!, served: null };
  return calibrationAt(plan.calTable, frequencyHz);
}
