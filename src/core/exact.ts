/**
 * Exact decimal arithmetic for values that sit on a rounding boundary.
 * The hot loops work in float64 and call into here only when a value is within
 * 1e-9 LSB of a boundary (interface contract: "decided in exact decimal arithmetic").
 */
import { Decimal } from "decimal.js";

/** 60 significant digits: far beyond any input's own precision. */
export const D = Decimal.clone({ precision: 60, rounding: Decimal.ROUND_HALF_EVEN });
export type Dec = InstanceType<typeof D>;

export const PI = D.acos(-1);
const DEG = PI.div(180);

/**
 * Two decimal results closer than this are the same number: transcendental steps
 * (sin, cos, sqrt) carry ~1e-59 relative error at 60 digits, so an exact tie such as
 * sin(30°) = 0.5 comes out as 0.49999…9 or 0.50000…1. Anything within 1e-40 of a
 * boundary is treated as sitting on it, i.e. as an exact tie.
 */
export const TIE_EPSILON = new D("1e-40");

export function dec(x: string | number | Dec): Dec {
  return new D(x);
}
export function sinDeg(deg: Dec): Dec {
  return D.sin(deg.times(DEG));
}
export function cosDeg(deg: Dec): Dec {
  return D.cos(deg.times(DEG));
}

/** round-half-up with a tie tolerance: floor(t + 1/2), with t within TIE_EPSILON of k+1/2 going up. */
export function roundHalfUp(t: Dec): Dec {
  return t.plus(0.5).plus(TIE_EPSILON).floor();
}

/** Float64 test: is t within 1e-9 of a half-integer (a rounding boundary)? */
export function nearHalf(t: number): boolean {
  const f = t - Math.floor(t);
  return Math.abs(f - 0.5) < 1e-9;
}
