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

/**
 * Appends ASCII numbers straight into a byte buffer: codes.csv is hundreds of thousands
 * of purely numeric rows, where building JavaScript strings and encoding them cost more
 * than the quantisation itself. Output is identical to fastFixed / String(n).
 */
export class AsciiBuffer {
  buf: Buffer;
  pos = 0;
  constructor(capacity: number) {
    this.buf = Buffer.allocUnsafe(capacity);
  }
  ensure(extra: number): void {
    if (this.pos + extra <= this.buf.length) return;
    const next = Buffer.allocUnsafe(Math.max(this.buf.length * 2, this.pos + extra));
    this.buf.copy(next, 0, 0, this.pos);
    this.buf = next;
  }
  byte(c: number): void {
    this.buf[this.pos++] = c;
  }
  bytes(b: Buffer): void {
    b.copy(this.buf, this.pos);
    this.pos += b.length;
  }
  /** a non-negative integer below 2^53 */
  uint(n: number): void {
    if (n < 10) {
      this.buf[this.pos++] = 48 + n;
      return;
    }
    if (n < 2147483648) {
      // int32 arithmetic (much faster than float division)
      let len = 1;
      for (let t = n; t >= 10; t = (t / 10) | 0) len++;
      let p = this.pos + len;
      this.pos = p;
      for (let t = n | 0; t > 0; t = (t / 10) | 0) this.buf[--p] = 48 + (t % 10);
      return;
    }
    let len = 0;
    for (let t = n; t >= 1; t = Math.floor(t / 10)) len++;
    let p = this.pos + len;
    this.pos = p;
    for (let t = n; t >= 1; t = Math.floor(t / 10)) this.buf[--p] = 48 + (t % 10);
  }
  /** same text as fastFixed(x, digits) */
  fixed(x: number, digits: number): void {
    if (!Number.isFinite(x) || Math.abs(x) >= 1e9 || digits > 9) {
      this.pos += this.buf.write(fixed(x, digits), this.pos, "latin1");
      return;
    }
    const scale = 10 ** digits;
    const v = Math.round(Math.abs(x) * scale);
    if (v !== 0 && x < 0) this.byte(45);
    const ip = Math.floor(v / scale);
    this.uint(ip);
    if (!digits) return;
    this.byte(46);
    let fp = v - ip * scale; // < 10^digits ≤ 10^9: fits int32
    let p = this.pos + digits;
    this.pos = p;
    for (let d = 0; d < digits; d++) {
      const q = (fp / 10) | 0;
      this.buf[--p] = 48 + fp - q * 10;
      fp = q;
    }
  }
  /** upper-case hex, zero-padded to `digits` (1 … 8), same text as hexWord */
  hex(w: number, digits: number): void {
    let p = this.pos + digits;
    this.pos = p;
    let t = w >>> 0;
    for (let d = 0; d < digits; d++) {
      const h = t & 15;
      this.buf[--p] = h < 10 ? 48 + h : 55 + h;
      t >>>= 4;
    }
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
