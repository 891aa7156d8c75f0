/**
 * The canonical decimal text of a numeric cell without decimal.js: the string
 * `new D(text).toString()` gives (src/core/exact.ts), written from the text itself when
 * it is a plain decimal, else computed by `exact` (the decimal.js path).
 *
 * decimal.js keeps every digit of a constructed value (no rounding to precision) and
 * writes it back with no sign for zero, no "+", no leading zeros, no trailing fraction
 * zeros, and in fixed notation for exponents -7 < e < 21 (toExpNeg -7, toExpPos 21).
 * For a text -?d{1,20}(.d*)? those rules are a few string edits; a magnitude below 1e-6
 * (exponential notation), a "+", an exponent, a leading "." or 21+ integer digits take the
 * exact path.
 */
const PLAIN = /^(-?)(\d{1,20})(?:\.(\d*))?$/;

export function canonicalDecimal(text: string, exact: (text: string) => string): string {
  const m = PLAIN.exec(text);
  if (!m) return exact(text);
  let int = m[2]!;
  if (int.length > 1 && int.charCodeAt(0) === 48) int = int.replace(/^0+(?=\d)/, "");
  let frac = m[3] ?? "";
  if (frac.length && frac.charCodeAt(frac.length - 1) === 48) frac = frac.replace(/0+$/, "");
  if (int === "0") {
    if (frac === "") return "0"; // -0 is written "0"
    if (frac.startsWith("000000")) return exact(text); // below 1e-6: exponential notation
  }
  return m[1]! + int + (frac ? "." + frac : "");
}
