/**
 * The canonical decimal text of a numeric cell without loading decimal.js: the string
 * `new D(text).toString()` gives (src/core/exact.ts), taken straight from the text when the
 * text is already in that form, else computed by `exact` (the decimal.js path).
 *
 * decimal.js keeps every digit of a constructed value (no rounding to precision) and
 * writes it back with no sign for zero, no "+", no leading zeros, no trailing fraction
 * zeros, and in fixed notation for exponents -7 < e < 21 (toExpNeg -7, toExpPos 21).
 * "0", and a text of the form -?([1-9]d{0,19}|0)(.d*[1-9])? other than "-0" and not
 * below 1e-6 in magnitude, is therefore its own canonical text; anything else (a "+", an exponent,
 * trailing zeros, leading zeros, 21+ integer digits, tiny values) takes the exact path.
 */
const CANONICAL = /^(?:0|-?(?:[1-9]\d{0,19}(?:\.\d*[1-9])?|0\.(?!0{6})\d*[1-9]))$/;

export function canonicalDecimal(text: string, exact: (text: string) => string): string {
  return CANONICAL.test(text) ? text : exact(text);
}
