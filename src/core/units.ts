/**
 * Quantities with units, parsed exactly (decimal.js) and converted to SI.
 * Plain numbers are already SI (Hz, m); dB quantities are numbers in dB.
 */
import { D, type Dec } from "./exact.js";

export const SPEED_OF_LIGHT = 299_792_458; // m/s, exact by definition (SI)
export const C_EXACT = new D(SPEED_OF_LIGHT);

export type QuantityKind = "frequency" | "length" | "level";

const NUMBER = String.raw`[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?`;
const QUANTITY_RE = new RegExp(String.raw`^\s*(${NUMBER})\s*([A-Za-zµ]*)\s*$`);

const FREQUENCY_UNITS: Record<string, string> = { hz: "1", khz: "1e3", mhz: "1e6", ghz: "1e9", thz: "1e12" };
const LENGTH_UNITS: Record<string, string> = {
  m: "1", cm: "0.01", mm: "0.001", um: "1e-6", µm: "1e-6", in: "0.0254", mil: "0.0000254",
};

export interface ParsedQuantity {
  /** Exact value in SI (Hz, m) or dB. For lambda lengths, the multiple of λ. */
  exact: Dec;
  value: number;
  /** True when the quantity was given in wavelengths. */
  inLambda: boolean;
}

export type ParseResult = { ok: true; q: ParsedQuantity } | { ok: false; expected: string };

const EXPECTED: Record<QuantityKind, string> = {
  frequency: 'a frequency: a number in Hz or a string like "28 GHz" (Hz, kHz, MHz, GHz, THz)',
  length: 'a length: a number in metres or a string like "5.2 mm" or "0.5 lambda" (m, cm, mm, um, in, mil, lambda)',
  level: 'a level in dB: a number or a string like "-30 dB"',
};

/** Parse a quantity given as a JSON number (SI) or a string with a unit. */
export function parseQuantity(raw: unknown, kind: QuantityKind): ParseResult {
  const fail = { ok: false as const, expected: EXPECTED[kind] };
  let numText: string;
  let unit: string;
  if (typeof raw === "number") {
    if (!Number.isFinite(raw)) return fail;
    numText = String(raw);
    unit = "";
  } else if (typeof raw === "string") {
    const m = QUANTITY_RE.exec(raw);
    if (!m || m[1] === undefined) return fail;
    numText = m[1];
    unit = (m[2] ?? "").toLowerCase();
  } else return fail;
  let exact: Dec;
  try {
    exact = new D(numText);
  } catch {
    return fail;
  }
  let inLambda = false;
  if (kind === "frequency") {
    const f = unit === "" ? "1" : FREQUENCY_UNITS[unit];
    if (f === undefined) return fail;
    exact = exact.times(f);
  } else if (kind === "length") {
    if (unit === "lambda" || unit === "λ" || unit === "wavelength" || unit === "wavelengths") inLambda = true;
    else {
      const f = unit === "" ? "1" : LENGTH_UNITS[unit];
      if (f === undefined) return fail;
      exact = exact.times(f);
    }
  } else if (unit !== "" && unit !== "db") return fail;
  return { ok: true, q: { exact, value: exact.toNumber(), inLambda } };
}

/** Wrap degrees into [0, 360). */
export function wrap360(deg: number): number {
  let r = deg - 360 * Math.floor(deg / 360);
  if (r < 0) r += 360; // deg/360 can underflow to −0 for subnormal negative deg
  return r >= 360 ? 0 : r;
}
/** Wrap degrees into (-180, 180]. */
export function wrap180(deg: number): number {
  const r = wrap360(deg);
  return r > 180 ? r - 360 : r;
}
