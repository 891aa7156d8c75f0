/**
 * Dolph–Chebyshev weights (C. L. Dolph, Proc. IRE 34, 1946): the array factor is
 * A(ψ) = T_{N−1}(x0·cos(ψ/2)), x0 = cosh(acosh(R)/(N−1)), R the main-lobe to
 * sidelobe voltage ratio. Weights are the Fourier coefficients of A, obtained by
 * sampling ψ_k = 2πk/N and inverting the N-point DFT (exact for a polynomial of
 * this degree).
 */
import { apertureAxes, normalisePeak, type Taper, type TaperInput } from "./contract.js";

export function chebyshevPoly(n: number, x: number): number {
  if (Math.abs(x) <= 1) return Math.cos(n * Math.acos(x));
  const v = Math.cosh(n * Math.acosh(Math.abs(x)));
  return x < 0 && n % 2 === 1 ? -v : v;
}

/** Dolph–Chebyshev weights of n elements for sidelobe level sidelobeDb (< 0), peak 1. */
export function chebyshevWeights(n: number, sidelobeDb: number): Float64Array {
  const w = new Float64Array(n);
  if (n === 1) {
    w[0] = 1;
    return w;
  }
  const R = Math.pow(10, -sidelobeDb / 20);
  const x0 = Math.cosh(Math.acosh(R) / (n - 1));
  const centre = (n - 1) / 2;
  const A = new Float64Array(n);
  for (let k = 0; k < n; k++) A[k] = chebyshevPoly(n - 1, x0 * Math.cos((Math.PI * k) / n));
  for (let m = 0; m < n; m++) {
    let s = 0;
    for (let k = 0; k < n; k++) s += A[k]! * Math.cos((2 * Math.PI * k * (m - centre)) / n);
    w[m] = s / n;
  }
  return normalisePeak(w);
}

export function chebyshevTaper(sidelobeDb: number): Taper {
  return {
    kind: "chebyshev",
    amplitudes(input: TaperInput): Float64Array {
      const { x, y } = apertureAxes(input);
      const wx = chebyshevWeights(x.count, sidelobeDb);
      const wy = chebyshevWeights(y.count, sidelobeDb);
      const n = input.elements.count;
      const a = new Float64Array(n);
      for (let i = 0; i < n; i++) a[i] = wx[x.index[i]!]! * wy[y.index[i]!]!;
      return normalisePeak(a);
    },
  };
}
