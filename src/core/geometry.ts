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
  /** Exact positions as decimal strings (metres), for boundary decisions; null on lattices (derived on demand). */
  exactX: string[] | null;
  exactY: string[] | null;
  exactZ: string[] | null;
  enabled: Uint8Array;
  /** Lattice row/column of each element (-1 for element lists). */
  row: Int32Array;
  column: Int32Array;
  device: string[] | null;
  channel: string[] | null;
}

/** Exact centroid of the uncentred lattice points (c + offset·(r mod 2))·dx, r·dy. */
function latticeCentroid(l: LatticeSpec): [Dec, Dec] {
  const C = l.columns, R = l.rows;
  const sumCol = new D(C * (C - 1)).div(2).times(R).plus(new D(l.offsetExact).times(C).times(Math.floor(R / 2)));
  return [sumCol.div(R * C).times(l.dxExact), new D(R - 1).div(2).times(l.dyExact)];
}

/** Exact position (metres) of lattice element i, as decimals. */
export function latticeExactPosition(l: LatticeSpec, i: number): [Dec, Dec] {
  const r = Math.floor(i / l.columns);
  const c = i % l.columns;
  const [mx, my] = latticeCentroid(l);
  return [new D(c).plus(new D(l.offsetExact).times(r % 2)).times(l.dxExact).minus(mx), new D(r).times(l.dyExact).minus(my)];
}

/**
 * Row-major lattice (row outer, column inner), centred on its centroid. Float
 * positions are the exact decimal positions rounded once; the exact ones are
 * derived on demand (latticeExactPosition) for boundary decisions.
 */
export function latticeElements(l: LatticeSpec): Elements {
  const n = l.columns * l.rows;
  const [mxD, myD] = latticeCentroid(l);
  const dx = new D(l.dxExact), dy = new D(l.dyExact), off = new D(l.offsetExact);
  // x depends on (column, row parity) only and y on the row only: compute each once
  const xs: number[][] = [0, 1].map((odd) => Array.from({ length: l.columns }, (_, c) => new D(c).plus(off.times(odd)).times(dx).minus(mxD).toNumber()));
  const ys = Array.from({ length: l.rows }, (_, r) => new D(r).times(dy).minus(myD).toNumber());
  const el = emptyElements(n);
  el.exactX = null;
  el.exactY = null;
  el.exactZ = null;
  for (let i = 0; i < n; i++) {
    const r = Math.floor(i / l.columns);
    const c = i % l.columns;
    el.ids[i] = i;
    el.x[i] = xs[r % 2]![c]!;
    el.y[i] = ys[r]!;
    el.row[i] = r;
    el.column[i] = c;
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

/**
 * gratingLobeVisible for the beams of one lattice, cheaper per beam: from a visible beam
 * (|(u0, v0)| ≤ 1) a lobe at offset G = m·g1 + n·g2 reaches the unit disc only if |G| ≤ 2,
 * so only those (m, n) are listed (a few: four at λ/2 spacing, against 48) and tried per
 * beam, each sum formed in gratingLobeVisible's order (the same answers); a beam outside
 * the disc takes the full search.
 */
export function gratingLobeTest(g: [number, number, number, number]): (u0: number, v0: number) => boolean {
  const [g1x, g1y, g2x, g2y] = g;
  const reach = 3;
  const a: number[] = [], b: number[] = [], c: number[] = [], d: number[] = [];
  for (let m = -reach; m <= reach; m++)
    for (let n = -reach; n <= reach; n++) {
      if (m === 0 && n === 0) continue;
      const gx = m * g1x + n * g2x, gy = m * g1y + n * g2y;
      if (!(gx * gx + gy * gy <= (2 + 1e-9) ** 2)) continue;
      a.push(m * g1x); b.push(n * g2x); c.push(m * g1y); d.push(n * g2y);
    }
  const A = Float64Array.from(a), B = Float64Array.from(b), C = Float64Array.from(c), D = Float64Array.from(d);
  return (u0, v0) => {
    if (!(u0 * u0 + v0 * v0 <= 1)) return gratingLobeVisible(u0, v0, g);
    for (let k = 0; k < A.length; k++) {
      const u = u0 + A[k]! + B[k]!;
      const v = v0 + C[k]! + D[k]!;
      if (u * u + v * v <= 1 + 1e-12) return true;
    }
    return false;
  };
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

// ------------------------------------------------------------ aperture size

/**
 * The largest distance between two of the points (the diameter of the point set),
 * exact, without comparing every pair. Planar sets (every z equal, the usual array):
 * convex hull (monotone chain) and rotating calipers, O(N log N). Other sets: pairs in
 * order of decreasing distance from the centroid, stopping once r_i + r_j cannot beat the
 * best pair found (exact; fast unless most points sit at one distance from the centroid,
 * e.g. a sphere, where it degrades towards N²/2 pairs).
 */
export function pointSetDiameter(x: ArrayLike<number>, y: ArrayLike<number>, z: ArrayLike<number>, n: number): number {
  if (n < 2) return 0;
  let planar = true;
  for (let i = 1; i < n && planar; i++) if (z[i] !== z[0]) planar = false;
  return planar ? planarDiameter(x, y, n) : prunedDiameter(x, y, z, n);
}

function planarDiameter(x: ArrayLike<number>, y: ArrayLike<number>, n: number): number {
  const idx = Array.from({ length: n }, (_, i) => i).sort((a, b) => x[a]! - x[b]! || y[a]! - y[b]!);
  const cross = (o: number, a: number, b: number) => (x[a]! - x[o]!) * (y[b]! - y[o]!) - (y[a]! - y[o]!) * (x[b]! - x[o]!);
  const hull: number[] = [];
  for (const pass of [idx, [...idx].reverse()]) {
    const start = hull.length;
    for (const p of pass) {
      while (hull.length >= start + 2 && cross(hull[hull.length - 2]!, hull[hull.length - 1]!, p) <= 0) hull.pop();
      hull.push(p);
    }
    hull.pop(); // the last point of each chain starts the other
  }
  const d = (a: number, b: number) => Math.hypot(x[a]! - x[b]!, y[a]! - y[b]!);
  const h = hull.length;
  if (h <= 1) return d(idx[0]!, idx[n - 1]!); // every point at one place
  if (h === 2) return d(hull[0]!, hull[1]!);
  let best = 0;
  let j = 1;
  for (let i = 0; i < h; i++) {
    const a = hull[i]!, b = hull[(i + 1) % h]!;
    while (Math.abs(cross(a, b, hull[(j + 1) % h]!)) > Math.abs(cross(a, b, hull[j]!))) j = (j + 1) % h;
    best = Math.max(best, d(a, hull[j]!), d(b, hull[j]!));
  }
  return best;
}

function prunedDiameter(x: ArrayLike<number>, y: ArrayLike<number>, z: ArrayLike<number>, n: number): number {
  let cx = 0, cy = 0, cz = 0;
  for (let i = 0; i < n; i++) {
    cx += x[i]!;
    cy += y[i]!;
    cz += z[i]!;
  }
  cx /= n;
  cy /= n;
  cz /= n;
  const r = new Float64Array(n);
  for (let i = 0; i < n; i++) r[i] = Math.hypot(x[i]! - cx, y[i]! - cy, z[i]! - cz);
  const order = Array.from({ length: n }, (_, i) => i).sort((a, b) => r[b]! - r[a]!);
  let best = 0;
  // r_i + r_j bounds |p_i − p_j| (triangle inequality); a small relative margin covers rounding
  const slack = 1 + 1e-12;
  for (let a = 0; a < n; a++) {
    const i = order[a]!;
    if ((r[i]! + r[order[0]!]!) * slack < best) break;
    for (let b = a + 1; b < n; b++) {
      const j = order[b]!;
      if ((r[i]! + r[j]!) * slack < best) break;
      best = Math.max(best, Math.hypot(x[i]! - x[j]!, y[i]! - y[j]!, z[i]! - z[j]!));
    }
  }
  return best;
}
