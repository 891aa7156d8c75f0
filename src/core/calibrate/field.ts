/**
 * The `field` method: each channel's complex response measured alone at codes 0/0 (one
 * element on, or an element field back-projected from a near-field scan). The reading is
 * the field itself, so there is nothing to fit: amplitude (dB) and phase (deg) become
 * the complex field, and the shared contract removes the code-0 state and probe path.
 * (common practice: the one-element-on measurement of array calibration.)
 */
import type { MethodField } from "./contract.js";

export interface FieldElementData {
  index: number;
  amplitudeDb: number;
  phaseDeg: number;
}

export function fieldMethod(data: FieldElementData[]): MethodField[] {
  return data.map((d) => {
    const a = Math.pow(10, d.amplitudeDb / 20);
    const p = (d.phaseDeg * Math.PI) / 180;
    return { index: d.index, field: { re: a * Math.cos(p), im: a * Math.sin(p) }, residualDb: null, relStd: null, phaseStdRad: null, flags: [], advice: [] };
  });
}
