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

/** Upper-case hex of a word (its low 32 bits), zero-padded to `digits` (1 … 8): the low `digits` hex digits. */
export function hexWord(w: number, digits: number): string {
  // (a table of all 65 536 four-digit strings used to be built for this: ~9 ms at every build with table.h)
  const s = (w >>> 0).toString(16).toUpperCase().padStart(8, "0");
  return digits <= 8 ? s.slice(8 - digits) : s.padStart(digits, "0");
}

const ZEROS = "000000000000";
/**
 * fixed(x, digits) for |x| < 1e9 with digits ≤ 9, by integer arithmetic (about twice as
 * fast as toFixed, which dominated codes.csv). Rounds half away from zero at the last
 * digit of the double's value scaled by 10^digits; "-0.000…" is written without the sign.
 */
export function fastFixed(x: number, digits: number): string {
  if (!Number.isFinite(x) || Math.abs(x) >= 1e9 || digits > 9) return fixed(x, digits);
  const scale = 10 ** digits;
  const v = Math.round(Math.abs(x) * scale);
  if (v === 0) return digits ? "0." + ZEROS.slice(0, digits) : "0";
  const ip = Math.floor(v / scale);
  const fp = v - ip * scale;
  const fs = String(fp);
  return (x < 0 ? "-" : "") + ip + (digits ? "." + ZEROS.slice(0, digits - fs.length) + fs : "");
}

/*
 * Byte-level number text. The put* functions write at dv[p…] and return the position after
 * the text; they store 4 bytes at a time (DataView stores are far cheaper than byte stores
 * into a Buffer) and so may write up to SLACK bytes of scratch past that position, which
 * the next text overwrites: the buffer needs SLACK bytes of room beyond the text.
 */
export const SLACK = 8;

/** "0000" … "9999", entry i: the four ASCII digits of i as a little-endian uint32 */
const DEC4 = new Uint32Array(10000);
/** "0" … "9999" without leading zeros, entry i: its ASCII bytes (little-endian uint32, zero-filled) and length */
const DECN = new Uint32Array(10000);
const DECN_LEN = new Uint8Array(10000);
for (let i = 0; i < 10000; i++) {
  const d0 = 48 + ((i / 1000) | 0);
  const d1 = 48 + (((i / 100) | 0) % 10);
  const d2 = 48 + (((i / 10) | 0) % 10);
  const d3 = 48 + (i % 10);
  DEC4[i] = (d0 | (d1 << 8) | (d2 << 16) | (d3 << 24)) >>> 0;
  const len = i >= 1000 ? 4 : i >= 100 ? 3 : i >= 10 ? 2 : 1;
  DECN_LEN[i] = len;
  DECN[i] = DEC4[i]! >>> (8 * (4 - len));
}
/** "0000" … "FFFF", entry i: the four upper-case hex digits of i as a little-endian uint32 (built on first use) */
let HEX4: Uint32Array | null = null;
function hex4(): Uint32Array {
  const t = new Uint32Array(65536);
  const h = new Uint8Array(16);
  for (let i = 0; i < 16; i++) h[i] = "0123456789ABCDEF".charCodeAt(i);
  for (let i = 0; i < 65536; i++) t[i] = (h[i >>> 12]! | (h[(i >>> 8) & 15]! << 8) | (h[(i >>> 4) & 15]! << 16) | (h[i & 15]! << 24)) >>> 0;
  return (HEX4 = t);
}
const POW10 = [1, 10, 100, 1000, 10000, 100000, 1000000, 10000000, 100000000, 1000000000];

/** putUint for 0 ≤ n < 10000 only (small enough to be inlined everywhere). */
export function putUint4(dv: DataView, p: number, n: number): number {
  dv.setUint32(p, DECN[n]!, true);
  return p + DECN_LEN[n]!;
}

/**
 * Decimal text of a non-negative integer n (same text as String(n)), four digits at a
 * time from a table.
 */
export function putUint(dv: DataView, p: number, n: number): number {
  if (n < 10000) {
    dv.setUint32(p, DECN[n]!, true);
    return p + DECN_LEN[n]!;
  }
  if (n < 100000000) {
    const hi = (n / 10000) | 0;
    dv.setUint32(p, DECN[hi]!, true);
    p += DECN_LEN[hi]!;
    dv.setUint32(p, DEC4[n - hi * 10000]!, true);
    return p + 4;
  }
  return putBigUint(dv, p, n);
}
function putBigUint(dv: DataView, p: number, n: number): number {
  if (n < 1e16) {
    let hi = Math.floor(n / 1e8);
    let lo = n - hi * 1e8;
    if (lo < 0) (hi -= 1), (lo += 1e8);
    else if (lo >= 1e8) (hi += 1), (lo -= 1e8);
    p = putUint(dv, p, hi);
    const m = (lo / 10000) | 0;
    dv.setUint32(p, DEC4[m]!, true);
    dv.setUint32(p + 4, DEC4[lo - m * 10000]!, true);
    return p + 8;
  }
  return putAscii(dv, p, String(n));
}

/** The low 4·digits bits of w as `digits` (1 … 8) upper-case hex digits, zero-padded (same text as hexWord). */
export function putHex(dv: DataView, p: number, w: number, digits: number): number {
  const t = HEX4 ?? hex4();
  if (digits === 4) dv.setUint32(p, t[w & 0xffff]!, true);
  else if (digits < 4) dv.setUint32(p, t[w & 0xffff]! >>> (8 * (4 - digits)), true);
  else {
    // the top digits first: each store spills zeros into the place of the next
    dv.setUint32(p, t[(w >>> 16) & 0xffff]! >>> (8 * (8 - digits)), true);
    dv.setUint32(p + digits - 4, t[w & 0xffff]!, true);
  }
  return p + digits;
}

/**
 * fastFixed(x, digits): the same arithmetic, v = round(|x|·10^digits), then the integer
 * and fraction parts of v, so the text is the same byte for byte (tested).
 */
export function putFixed(dv: DataView, p: number, x: number, digits: number): number {
  if (!(Math.abs(x) < 1e9) || digits > 9) return putAscii(dv, p, fixed(x, digits));
  const scale = POW10[digits]!;
  const v = Math.round(Math.abs(x) * scale);
  if (v !== 0 && x < 0) dv.setUint8(p++, 45);
  const ip = Math.floor(v / scale);
  let f = v - ip * scale;
  p = putUint(dv, p, ip);
  if (!digits) return p;
  dv.setUint8(p++, 46);
  // beyond 2^53 (or if the division rounded across an integer) the old digit-by-digit loop gives the text
  if (v >= 9007199254740992 || f < 0 || f >= scale) {
    let q = p + digits;
    for (let d = 0; d < digits; d++) {
      const t = (f / 10) | 0;
      dv.setUint8(--q, 48 + f - t * 10);
      f = t;
    }
    return p + digits;
  }
  // f: an integer, 0 ≤ f < 10^digits ≤ 10^9, written from the left: the first 1 … 4 digits, then groups of four
  let d = digits;
  const lead = d % 4 || 4;
  let g = POW10[d - lead]!;
  let hi = (f / g) | 0;
  dv.setUint32(p, DEC4[hi]! >>> (8 * (4 - lead)), true);
  p += lead;
  f -= hi * g;
  d -= lead;
  while (d > 0) {
    g = POW10[d - 4]!;
    hi = (f / g) | 0;
    dv.setUint32(p, DEC4[hi]!, true);
    p += 4;
    f -= hi * g;
    d -= 4;
  }
  return p;
}

/**
 * putFixed(dv, p, x, 6), specialised: for |x| < 2147 every step is int32 arithmetic with
 * constant divisors (which the compiler turns into multiplications). The same text: v =
 * round(|x|·10^6) < 2^31, and floor(v / 10^6) of a double is the integer quotient there.
 * Hot loops inline the first lines themselves and call putMicros with the integer (an
 * integer argument needs no heap number when the call is not inlined).
 */
export function putFixed6(dv: DataView, p: number, x: number): number {
  const a = Math.abs(x);
  if (!(a < 2147)) return putFixed(dv, p, x, 6);
  const v = Math.round(a * 1000000) | 0;
  if (v !== 0 && x < 0) dv.setUint8(p++, 45);
  return putMicros(dv, p, v);
}
/** v / 10^6 (0 ≤ v < 2^31) as "<integer part>.dddddd". */
export function putMicros(dv: DataView, p: number, v: number): number {
  const ip = (v / 1000000) | 0;
  const f = v - ip * 1000000;
  dv.setUint32(p, DECN[ip]!, true);
  p += DECN_LEN[ip]!;
  const q = (f / 10000) | 0;
  // ".dd" (the last two digits of q's four), then four more
  dv.setUint32(p, (46 | ((DEC4[q]! >>> 8) & 0xffff00)) >>> 0, true);
  dv.setUint32(p + 3, DEC4[f - q * 10000]!, true);
  return p + 7;
}

/** latin1 bytes of s. */
export function putAscii(dv: DataView, p: number, s: string): number {
  for (let i = 0; i < s.length; i++) dv.setUint8(p + i, s.charCodeAt(i));
  return p + s.length;
}

/** A short byte string prepared for putWords: its bytes as little-endian uint32s (zero-filled) and its length. */
export interface Piece {
  words: Uint32Array;
  length: number;
}
export function piece(text: string): Piece {
  const b = Buffer.alloc(Math.ceil(text.length / 4) * 4 + 4);
  b.write(text, "latin1");
  const words = new Uint32Array(Math.ceil(text.length / 4));
  for (let i = 0; i < words.length; i++) words[i] = b.readUInt32LE(4 * i);
  return { words, length: text.length };
}
/** A Piece's bytes, four at a time. */
export function putPiece(dv: DataView, p: number, x: Piece): number {
  const w = x.words;
  for (let k = 0; k < w.length; k++) dv.setUint32(p + 4 * k, w[k]!, true);
  return p + x.length;
}

/**
 * Appends ASCII numbers straight into a byte buffer: codes.csv is hundreds of thousands
 * of purely numeric rows, where building JavaScript strings and encoding them cost more
 * than the quantisation itself. Output is identical to fastFixed / String(n) / hexWord.
 * Hot loops call the put* functions on `dv` with a local position and store it back in
 * `pos` (after ensure(): room for the text and SLACK); the methods are for the rest.
 */
export class AsciiBuffer {
  buf: Buffer;
  dv: DataView;
  pos = 0;
  constructor(capacity: number) {
    this.buf = Buffer.allocUnsafe(capacity + SLACK);
    this.dv = new DataView(this.buf.buffer, this.buf.byteOffset, this.buf.byteLength);
  }
  /** room for `extra` more bytes of text (and the put* functions' scratch beyond them) */
  ensure(extra: number): void {
    if (this.pos + extra + SLACK <= this.buf.length) return;
    const next = Buffer.allocUnsafe(Math.max(this.buf.length * 2, this.pos + extra + SLACK));
    this.buf.copy(next, 0, 0, this.pos);
    this.buf = next;
    this.dv = new DataView(next.buffer, next.byteOffset, next.byteLength);
  }
  byte(c: number): void {
    this.buf[this.pos++] = c;
  }
  bytes(b: Uint8Array): void {
    this.buf.set(b, this.pos);
    this.pos += b.length;
  }
  /** a non-negative integer */
  uint(n: number): void {
    this.pos = putUint(this.dv, this.pos, n);
  }
  /** same text as fastFixed(x, digits) */
  fixed(x: number, digits: number): void {
    this.pos = putFixed(this.dv, this.pos, x, digits);
  }
  /** upper-case hex, zero-padded to `digits` (1 … 8), same text as hexWord */
  hex(w: number, digits: number): void {
    this.pos = putHex(this.dv, this.pos, w, digits);
  }
  ascii(s: string): void {
    this.pos += this.buf.write(s, this.pos, "latin1");
  }

  /** the bytes written so far, as a view valid until the next write; the writer starts over */
  view(): Buffer {
    const v = this.buf.subarray(0, this.pos);
    this.pos = 0;
    return v;
  }
  /** the bytes written so far, as a fresh Buffer; the writer starts over */
  take(): Buffer {
    const out = Buffer.from(this.buf.subarray(0, this.pos));
    this.pos = 0;
    return out;
  }
}
