/**
 * Quantities with units, parsed exactly (decimal.js) and converted to SI.
 * Plain numbers are already SI (Hz, m); dB quantities are numbers in dB.
 */
import { D, type Dec } from "./exact.js";

export const SPEED_OF_LIGHT = 299_792_458; // m/s, exact by definition (SI)
export const C_EXACT = new D(SPEED_OF_LIGHT);

export type QuantityKind = "frequency" | "length" | "level";

const NUMBER = String.raw`[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?`;
/** A plain decimal number as a quantity's number is written ("0.5", ".5", "-2", "1e-3"): no hex, no Infinity or NaN. */
export const DECIMAL_RE = new RegExp(`^${NUMBER}$`);
// the unit: letters, the micro sign (U+00B5), Greek mu (U+03BC) and lambda (U+03BB)
const QUANTITY_RE = new RegExp(String.raw`^\s*(${NUMBER})\s*([A-Za-z\u00b5\u03bc\u03bb]*)\s*$`);

/**
 * Units as SI writes them. Case is significant (mHz is millihertz, MHz megahertz; mm
 * millimetres, Mm megametres), so only these spellings are read; another case of one
 * of them is refused with the right spelling named, never guessed.
 */
const FREQUENCY_UNITS: Record<string, string> = { Hz: "1", kHz: "1e3", MHz: "1e6", GHz: "1e9", THz: "1e12" };
const LENGTH_UNITS: Record<string, string> = {
  m: "1", cm: "0.01", mm: "0.001", um: "1e-6", "\u00b5m": "1e-6", "\u03bcm": "1e-6", in: "0.0254", mil: "0.0000254",
};
const LAMBDA_UNITS = ["lambda", "\u03bb", "wavelength", "wavelengths"];
const LEVEL_UNITS = ["dB"];

export interface ParsedQuantity {
  /** Exact value in SI (Hz, m) or dB. For lambda lengths, the multiple of λ. */
  exact: Dec;
  value: number;
  /** True when the quantity was given in wavelengths. */
  inLambda: boolean;
}

export type ParseResult = { ok: true; q: ParsedQuantity } | { ok: false; expected: string };

const EXPECTED: Record<QuantityKind, string> = {
  frequency: 'a frequency: a number in Hz or a string with a unit like "28 GHz" (Hz, kHz, MHz, GHz, THz)',
  length: 'a length: a number in metres or a string with a unit like "5.2 mm" or "0.5 lambda" (m, cm, mm, um, µm, in, mil, lambda, λ)',
  level: 'a level in dB: a number or a string with its unit like "-30 dB"',
};

const KNOWN: Record<QuantityKind, string[]> = {
  frequency: Object.keys(FREQUENCY_UNITS),
  length: [...Object.keys(LENGTH_UNITS), ...LAMBDA_UNITS],
  level: LEVEL_UNITS,
};

/** Why a string's unit is refused: missing, or the wrong case of a known unit, or unknown. */
function unitProblem(kind: QuantityKind, numText: string, unit: string): string {
  if (unit === "") {
    const example = kind === "frequency" ? `"${numText} GHz"` : kind === "length" ? `"${numText} mm"` : `"${numText} dB"`;
    const plain = kind === "frequency" ? "Hz" : kind === "length" ? "metres" : "dB";
    return `${EXPECTED[kind]}; a string needs its unit (e.g. ${example}): only a plain JSON number is read in ${plain}`;
  }
  const sameLetters = KNOWN[kind].filter((k) => k.toLowerCase() === unit.toLowerCase());
  if (sameLetters.length)
    return `${EXPECTED[kind]}; units are case-sensitive (mHz is millihertz, MHz megahertz; mm millimetres, Mm megametres): write "${sameLetters.join('" or "')}", not "${unit}"`;
  return `${EXPECTED[kind]}; unknown unit "${unit}"`;
}

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
    unit = m[2] ?? "";
    const known = kind === "frequency" ? unit in FREQUENCY_UNITS : kind === "length" ? unit in LENGTH_UNITS || LAMBDA_UNITS.includes(unit) : LEVEL_UNITS.includes(unit);
    if (!known) return { ok: false, expected: unitProblem(kind, numText, unit) };
  } else return fail;
  let exact: Dec;
  try {
    exact = new D(numText);
  } catch {
    return fail;
  }
  let inLambda = false;
  if (kind === "frequency") exact = exact.times(unit === "" ? "1" : FREQUENCY_UNITS[unit]!);
  else if (kind === "length") {
    if (LAMBDA_UNITS.includes(unit)) inLambda = true;
    else exact = exact.times(unit === "" ? "1" : LENGTH_UNITS[unit]!);
  }
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
