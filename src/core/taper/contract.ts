/**
 * One contract for every amplitude taper. A taper turns the element geometry into
 * per-element amplitudes a_n, normalised to a peak of 1 (interface contract).
 */
import type { Elements, LatticeSpec } from "../geometry.js";

export interface TaperInput {
  elements: Elements;
  /** Present for lattice geometries; element lists use the aperture rules of apertureAxes(). */
  lattice: LatticeSpec | null;
}

export interface Taper {
  readonly kind: string;
  amplitudes(input: TaperInput): Float64Array;
}

/** Scale so that the largest amplitude is exactly 1. */
export function normalisePeak(a: Float64Array): Float64Array {
  let m = 0;
  for (const v of a) if (v > m) m = v;
  if (m > 0) for (let i = 0; i < a.length; i++) a[i] = a[i]! / m;
  return a;
}

/** One aperture axis: each element's normalised coordinate p and its index among distinct positions. */
export interface ApertureAxis {
  /** p = coordinate / aperture length, centred (lattice: x/(columns·dx)). */
  p: Float64Array;
  /** 0-based index of the element's position among the sorted distinct positions. */
  index: Int32Array;
  /** Number of distinct positions (lattice: columns or rows). */
  count: number;
}

/**
 * Aperture axes. Lattice: p_x = x/(columns·dx), p_y = y/(rows·dy), index = column / row.
 * Element list (README "Tapers on element lists"): the distinct x (or y) positions,
 * merged within 1 µm, are ranked; the aperture length is the span times M/(M−1) for
 * M distinct positions (so a regular line of M elements at pitch d gets M·d, as on a
 * lattice), centred on the middle of the span.
 */
export function apertureAxes(input: TaperInput): { x: ApertureAxis; y: ApertureAxis } {
  const { elements: el, lattice } = input;
  if (lattice) {
    const n = el.count;
    const ax: ApertureAxis = { p: new Float64Array(n), index: new Int32Array(n), count: lattice.columns };
    const ay: ApertureAxis = { p: new Float64Array(n), index: new Int32Array(n), count: lattice.rows };
    const lx = lattice.columns * lattice.dx;
    const ly = lattice.rows * lattice.dy;
    for (let i = 0; i < n; i++) {
      ax.p[i] = el.x[i]! / lx;
      ay.p[i] = el.y[i]! / ly;
      ax.index[i] = el.column[i]!;
      ay.index[i] = el.row[i]!;
    }
    return { x: ax, y: ay };
  }
  return { x: listAxis(el.x), y: listAxis(el.y) };
}

const MERGE_M = 1e-6;

function listAxis(coord: Float64Array): ApertureAxis {
  const n = coord.length;
  const order = Array.from({ length: n }, (_, i) => i).sort((a, b) => coord[a]! - coord[b]!);
  const index = new Int32Array(n);
  let k = -1;
  let last = -Infinity;
  for (const i of order) {
    if (coord[i]! - last > MERGE_M) {
      k++;
      last = coord[i]!;
    }
    index[i] = k;
  }
  const count = k + 1;
  const p = new Float64Array(n);
  if (count > 1) {
    const lo = coord[order[0]!]!;
    const hi = coord[order[n - 1]!]!;
    const length = ((hi - lo) * count) / (count - 1);
    const mid = (hi + lo) / 2;
    for (let i = 0; i < n; i++) p[i] = (coord[i]! - mid) / length;
  }
  return { p, index, count };
}
