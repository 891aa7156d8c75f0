/**
 * Beam-pointing sets: az/el, u/v and θ/φ grids and explicit lists. Beam order
 * (interface contract): the second axis named is the outer loop, the first the
 * inner one, both ascending.
 */
import { D } from "./exact.js";
import { exactAzEl, exactThetaPhi, exactUv, type ExactDirection, uvToAzElDeg } from "./geometry.js";

export type BeamKind = "azel" | "uv" | "thetaphi";

/** A grid axis as exact decimal strings: values from + i·step, i = 0 … count−1. */
export interface AxisSpec {
  from: string;
  step: string;
  count: number;
  /** The scenario's "to" (exact); the last value from + (count − 1)·step falls short of it when the step does not divide the span. */
  to?: string;
}

export type BeamSpec =
  | { kind: BeamKind; grid: true; inner: AxisSpec; outer: AxisSpec }
  | { kind: "azel" | "uv"; grid: false; a: string[]; b: string[] };

export interface BeamSet {
  spec: BeamSpec;
  count: number;
  u: Float64Array;
  v: Float64Array;
  w: Float64Array;
  azDeg: Float64Array;
  elDeg: Float64Array;
}

/** Number of grid values from `from` to `to` inclusive in `step`s (exact). */
export function axisCount(from: string, to: string, step: string): number {
  const span = new D(to).minus(from);
  return span.div(step).plus("1e-30").floor().toNumber() + 1;
}

export function axisValue(a: AxisSpec, i: number): string {
  return new D(a.from).plus(new D(a.step).times(i)).toString();
}

/** The (first, second) coordinate of beam i as exact decimal strings. */
export function beamCoordinates(spec: BeamSpec, i: number): [string, string] {
  if (!spec.grid) return [spec.a[i]!, spec.b[i]!];
  const n = spec.inner.count;
  return [axisValue(spec.inner, i % n), axisValue(spec.outer, Math.floor(i / n))];
}

export function beamCount(spec: BeamSpec): number {
  return spec.grid ? spec.inner.count * spec.outer.count : spec.a.length;
}

/** Exact direction of beam i (decimal), for boundary decisions. */
export function exactBeamDirection(spec: BeamSpec, i: number): ExactDirection {
  const [a, b] = beamCoordinates(spec, i);
  switch (spec.kind) {
    case "azel":
      return exactAzEl(new D(a), new D(b));
    case "uv":
      return exactUv(new D(a), new D(b));
    case "thetaphi":
      return exactThetaPhi(new D(a), new D(b));
  }
}

/**
 * u² + v² is past the horizon by more than a rounding: within 1e-12 of 1 is the horizon
 * (cos 45° written to 16 digits for both u and v sums to 1 + 2e-16 in doubles).
 */
export function pastHorizon(u: number, v: number): boolean {
  return 1 - u * u - v * v < -1e-12;
}

/** Float64 directions of every beam. Returns the index of the first beam outside visible space, or -1. */
export function makeBeamSet(spec: BeamSpec): { set: BeamSet; invisible: number[] } {
  const count = beamCount(spec);
  const set: BeamSet = {
    spec,
    count,
    u: new Float64Array(count),
    v: new Float64Array(count),
    w: new Float64Array(count),
    azDeg: new Float64Array(count),
    elDeg: new Float64Array(count),
  };
  const invisible: number[] = [];
  // float values of each axis once (exact decimal → nearest double)
  const innerVals = spec.grid ? Array.from({ length: spec.inner.count }, (_, k) => Number(axisValue(spec.inner, k))) : null;
  const outerVals = spec.grid ? Array.from({ length: spec.outer.count }, (_, k) => Number(axisValue(spec.outer, k))) : null;
  for (let i = 0; i < count; i++) {
    let a: number, b: number;
    if (spec.grid) {
      a = innerVals![i % spec.inner.count]!;
      b = outerVals![Math.floor(i / spec.inner.count)]!;
    } else {
      a = Number(spec.a[i]);
      b = Number(spec.b[i]);
    }
    let u: number, v: number, w: number;
    if (spec.kind === "azel") {
      const az = (a * Math.PI) / 180;
      const el = (b * Math.PI) / 180;
      u = Math.cos(el) * Math.sin(az);
      v = Math.sin(el);
      w = Math.cos(el) * Math.cos(az);
      if (Math.abs(a) > 90 || Math.abs(b) > 90) invisible.push(i);
      set.azDeg[i] = a;
      set.elDeg[i] = b;
    } else {
      if (spec.kind === "uv") {
        u = a;
        v = b;
      } else {
        const t = (a * Math.PI) / 180;
        const p = (b * Math.PI) / 180;
        u = Math.sin(t) * Math.cos(p);
        v = Math.sin(t) * Math.sin(p);
        if (a < 0 || a > 90) invisible.push(i);
      }
      const s = 1 - u * u - v * v;
      if (pastHorizon(u, v)) invisible.push(i);
      w = s > 0 ? Math.sqrt(s) : 0;
      const ae = uvToAzElDeg(u, v);
      set.azDeg[i] = ae.azDeg;
      set.elDeg[i] = ae.elDeg;
    }
    set.u[i] = u;
    set.v[i] = v;
    set.w[i] = w;
  }
  return { set, invisible };
}
