/** Number formatting for text outputs: fixed, deterministic, never "-0", never NaN. */
export function fixed(x: number, digits: number): string {
  if (!Number.isFinite(x)) throw new Error(`non-finite value ${x} in an output`);
  const s = x.toFixed(digits);
  // "-0.000000" (a tiny negative value) is written as "0.000000"
  return s.charCodeAt(0) === 45 && /^-0(\.0+)?$/.test(s) ? s.slice(1) : s;
}
/** Shortest round-trip form, "-0" folded to "0"; NaN/∞ are rejected. */
export function num(x: number): string {
  if (!Number.isFinite(x)) throw new Error(`non-finite value ${x} in an output`);
  return Object.is(x, -0) ? "0" : String(x);
}

const HEX16: string[] = [];
function hex16(): string[] {
  if (HEX16.length === 0) for (let i = 0; i < 65536; i++) HEX16.push(i.toString(16).toUpperCase().padStart(4, "0"));
  return HEX16;
}
/** Upper-case hex of a word, zero-padded to `digits` (1 … 8). */
export function hexWord(w: number, digits: number): string {
  const t = hex16();
  const s = w > 0xffff ? t[w >>> 16]! + t[w & 0xffff]! : t[w]!;
  return s.length > digits ? s.slice(s.length - digits) : s.padStart(digits, "0");
}
