/**
 * Element positions, lattices and directions. SI inside (metres, radians or
 * direction cosines); degree-valued names say Deg.
 */
import { D, type Dec, cosDeg, sinDeg } from "./exact.js";

export interface LatticeSpec {
  kind: "rectangular" | "triangular";
  columns: number;
  rows: number;
  /** Exact pitches in metres, as decimal strings (structured-clone safe). */
  dxExact: string;
  dyExact: string;
  dx: number;
  dy: number;
  /** Odd-row shift in units of dx (0 for rectangular). */
  offset: number;
  offsetExact: string;
}

export interface Elements {
  count: number;
  ids: Int32Array;
  x: Float64Array;
  y: Float64Array;
  z: Float64Array;
  /** Exact positions as decimal strings (metres), for boundary decisions. */
  exactX: string[];
  exactY: string[];
  exactZ: string[];
  enabled: Uint8Array;
  /** Lattice row/column of each element (-1 for element lists). */
  row: Int32Array;
  column: Int32Array;
  device: string[] | null;
  channel: string[] | null;
}

/** Row-major lattice (row outer, column inner), centred on its centroid. */
export function latticeElements(l: LatticeSpec): Elements {
  const n = l.columns * l.rows;
  const dx = new D(l.dxExact);
  const dy = new D(l.dyExact);
  const off = new D(l.offsetExact);
  const ex: Dec[] = [];
  const ey: Dec[] = [];
  let sx = new D(0);
  let sy = new D(0);
  for (let r = 0; r < l.rows; r++) {
    for (let c = 0; c < l.columns; c++) {
      const xc = new D(c).plus(off.times(r % 2)).times(dx);
      const yc = new D(r).times(dy);
      ex.push(xc);
      ey.push(yc);
      sx = sx.plus(xc);
      sy = sy.plus(yc);
    }
  }
  const mx = sx.div(n);
  const my = sy.div(n);
  const el = emptyElements(n);
  for (let i = 0; i < n; i++) {
    const xs = ex[i]!.minus(mx);
    const ys = ey[i]!.minus(my);
    el.ids[i] = i;
    el.exactX[i] = xs.toString();
    el.exactY[i] = ys.toString();
    el.exactZ[i] = "0";
    el.x[i] = xs.toNumber();
    el.y[i] = ys.toNumber();
    el.row[i] = Math.floor(i / l.columns);
    el.column[i] = i % l.columns;
  }
  return el;
}

export function emptyElements(n: number): Elements {
  return {
    count: n,
    ids: new Int32Array(n),
    x: new Float64Array(n),
    y: new Float64Array(n),
    z: new Float64Array(n),
    exactX: new Array<string>(n).fill("0"),
    exactY: new Array<string>(n).fill("0"),
    exactZ: new Array<string>(n).fill("0"),
    enabled: new Uint8Array(n).fill(1),
    row: new Int32Array(n).fill(-1),
    column: new Int32Array(n).fill(-1),
    device: null,
    channel: null,
  };
}

// ---------------------------------------------------------------- directions

export interface Direction {
  u: number;
  v: number;
  w: number;
}

export function azElToUvw(azDeg: number, elDeg: number): Direction {
  const az = (azDeg * Math.PI) / 180;
  const el = (elDeg * Math.PI) / 180;
  return { u: Math.cos(el) * Math.sin(az), v: Math.sin(el), w: Math.cos(el) * Math.cos(az) };
}
export function thetaPhiToUvw(thetaDeg: number, phiDeg: number): Direction {
  const t = (thetaDeg * Math.PI) / 180;
  const p = (phiDeg * Math.PI) / 180;
  return { u: Math.sin(t) * Math.cos(p), v: Math.sin(t) * Math.sin(p), w: Math.cos(t) };
}
/** w from (u, v) on the front hemisphere; 0 on or past the horizon. */
export function uvToW(u: number, v: number): number {
  const s = 1 - u * u - v * v;
  return s > 0 ? Math.sqrt(s) : 0;
}
export function uvToAzElDeg(u: number, v: number): { azDeg: number; elDeg: number } {
  const w = uvToW(u, v);
  return { azDeg: (Math.atan2(u, w) * 180) / Math.PI, elDeg: (Math.asin(Math.max(-1, Math.min(1, v))) * 180) / Math.PI };
}
/** Angle between two unit directions, in degrees, well conditioned for small angles. */
export function angleBetweenDeg(a: Direction, b: Direction): number {
  const cx = a.v * b.w - a.w * b.v;
  const cy = a.w * b.u - a.u * b.w;
  const cz = a.u * b.v - a.v * b.u;
  const cross = Math.sqrt(cx * cx + cy * cy + cz * cz);
  const dot = a.u * b.u + a.v * b.v + a.w * b.w;
  return (Math.atan2(cross, dot) * 180) / Math.PI;
}

export interface ExactDirection {
  u: Dec;
  v: Dec;
  w: Dec;
}
export function exactAzEl(azDeg: Dec, elDeg: Dec): ExactDirection {
  const ce = cosDeg(elDeg);
  return { u: ce.times(sinDeg(azDeg)), v: sinDeg(elDeg), w: ce.times(cosDeg(azDeg)) };
}
export function exactThetaPhi(thetaDeg: Dec, phiDeg: Dec): ExactDirection {
  const st = sinDeg(thetaDeg);
  return { u: st.times(cosDeg(phiDeg)), v: st.times(sinDeg(phiDeg)), w: cosDeg(thetaDeg) };
}
export function exactUv(u: Dec, v: Dec): ExactDirection {
  const s = new D(1).minus(u.times(u)).minus(v.times(v));
  return { u, v, w: s.gt(0) ? s.sqrt() : new D(0) };
}

// ------------------------------------------------------------ grating lobes

/**
 * Reciprocal-lattice vectors, in direction-cosine units (multiplied by λ), of the
 * lattice of element positions. Grating lobes sit at d̂ + m·g1 + n·g2 (m, n ≠ 0, 0).
 * Primitive vectors: a1 = (dx, 0) and a2 = (offset·dx, dy). That is the exact Bravais
 * lattice for offset 0 (rectangular) and 1/2 (the usual triangular lattice). Any
 * other offset is not a Bravais lattice: we then use the two-row superlattice
 * a2 = (0, 2·dy), which lists every true grating lobe and possibly a few that the
 * two-point basis cancels (conservative: a warning too many, never one too few).
 */
export function reciprocalVectors(l: { dx: number; dy: number; offset: number }, lambda: number): [number, number, number, number] {
  const { dx } = l;
  const bravais = l.offset === 0 || l.offset === 0.5;
  const a2x = bravais ? l.offset * dx : 0;
  const a2y = bravais ? l.dy : 2 * l.dy;
  const det = dx * a2y; // a1 × a2 with a1 = (dx, 0)
  // g1 = (a2y, -a2x)/det, g2 = (0, dx)/det: g_i · a_j = δ_ij
  return [(a2y / det) * lambda, (-a2x / det) * lambda, 0, (dx / det) * lambda];
}

/** Does a grating lobe of the given lattice fall inside visible space (u²+v² ≤ 1) for beam (u0, v0)? */
export function gratingLobeVisible(u0: number, v0: number, g: [number, number, number, number]): boolean {
  const [g1x, g1y, g2x, g2y] = g;
  const reach = 3;
  for (let m = -reach; m <= reach; m++) {
    for (let n = -reach; n <= reach; n++) {
      if (m === 0 && n === 0) continue;
      const u = u0 + m * g1x + n * g2x;
      const v = v0 + m * g1y + n * g2y;
      if (u * u + v * v <= 1 + 1e-12) return true;
    }
  }
  return false;
}

/** Widest scan from broadside along a direction (angle psiRad in the u-v plane) that keeps every grating lobe out of visible space, in degrees of θ. */
export function gratingFreeScanDeg(g: [number, number, number, number], psiRad: number): number {
  const cu = Math.cos(psiRad);
  const cv = Math.sin(psiRad);
  if (gratingLobeVisible(0, 0, g)) return 0;
  if (!gratingLobeVisible(cu, cv, g)) return 90;
  let lo = 0;
  let hi = 1;
  for (let i = 0; i < 60; i++) {
    const mid = (lo + hi) / 2;
    if (gratingLobeVisible(mid * cu, mid * cv, g)) hi = mid;
    else lo = mid;
  }
  return (Math.asin(lo) * 180) / Math.PI;
}
