/**
 * Taylor n̄ line-source distribution (T. T. Taylor, "Design of line-source antennas
 * for narrow beamwidth and low side lobes", IRE Trans. AP-3, 1955; Mailloux,
 * Phased Array Antenna Handbook, ch. 3). Evaluated continuously at p ∈ [−1/2, 1/2].
 */
import { apertureAxes, normalisePeak, type Taper, type TaperInput } from "./contract.js";

/** Fourier coefficients F_m, m = 1 … n̄−1, of the Taylor distribution. sidelobeDb < 0. */
export function taylorCoefficients(sidelobeDb: number, nbar: number): Float64Array {
  const R = Math.pow(10, -sidelobeDb / 20);
  const A = Math.acosh(R) / Math.PI;
  const s2 = (nbar * nbar) / (A * A + (nbar - 0.5) * (nbar - 0.5));
  const F = new Float64Array(Math.max(0, nbar - 1));
  for (let m = 1; m < nbar; m++) {
    let num = 1;
    let den = 1;
    for (let i = 1; i < nbar; i++) {
      num *= 1 - (m * m) / (s2 * (A * A + (i - 0.5) * (i - 0.5)));
      if (i !== m) den *= 1 - (m * m) / (i * i);
    }
    F[m - 1] = ((m % 2 === 1 ? 1 : -1) * num) / (2 * den);
  }
  return F;
}

/** The continuous distribution at normalised position p (p = ±1/2 at the aperture edges). */
export function taylorAt(p: number, F: Float64Array): number {
  let s = 1;
  for (let m = 1; m <= F.length; m++) s += 2 * F[m - 1]! * Math.cos(2 * Math.PI * m * p);
  return s;
}

export function taylorTaper(sidelobeDb: number, nbar: number): Taper {
  const F = taylorCoefficients(sidelobeDb, nbar);
  return {
    kind: "taylor",
    amplitudes(input: TaperInput): Float64Array {
      const { x, y } = apertureAxes(input);
      const n = input.elements.count;
      const a = new Float64Array(n);
      for (let i = 0; i < n; i++) {
        const ax = x.count > 1 ? taylorAt(x.p[i]!, F) : 1;
        const ay = y.count > 1 ? taylorAt(y.p[i]!, F) : 1;
        a[i] = ax * ay;
      }
      return normalisePeak(a);
    },
  };
}
