/**
 * Reading device images back (verify): each decoder follows the format's own rules, not
 * the writer's code. Images are streamed: a reader hands out the words from address 0 in
 * chunks, so memory stays bounded by the chunk however large the image (images reach
 * 4 GiB; whole-file reads stop at 2 GiB and strings at ~512 MiB). Problems in a file are
 * thrown as ImageFormatError with the line, so verify can report them as a failed check.
 */
import { closeSync, fstatSync, openSync, readSync } from "node:fs";
import { StringDecoder } from "node:string_decoder";
import type { DeviceFormat } from "../core/devices.js";

export class ImageFormatError extends Error {}

/** The words of one image from address 0, chunk by chunk. */
export interface ImageReader {
  /** The next words, at most `max`; fewer only at the end of the image, none after it. */
  read(max: number): Uint32Array;
  close(): void;
}

/** A reader for dev-<id>.<fmt> with `wb`-byte words (little-endian in .bin and .hex). */
export function openImageReader(fmt: DeviceFormat, path: string, wb: number, chunkBytes = 1 << 20): ImageReader {
  if (fmt === "bin") return new BinReader(path, wb, chunkBytes);
  if (fmt === "mem") return new MemReader(new LineReader(path, "utf8", chunkBytes));
  return new HexReader(new LineReader(path, "latin1", chunkBytes), wb);
}

/** dev-<id>.bin: little-endian words of `wb` bytes from address 0. */
class BinReader implements ImageReader {
  private readonly fd: number;
  private pos = 0;
  private readonly size: number;
  private buf: Buffer;
  constructor(path: string, private readonly wb: number, chunkBytes: number) {
    this.fd = openSync(path, "r");
    this.size = fstatSync(this.fd).size;
    if (this.size % wb) {
      closeSync(this.fd);
      throw new ImageFormatError(`${this.size} bytes is not a whole number of ${wb}-byte words`);
    }
    this.buf = Buffer.alloc(Math.max(wb, chunkBytes - (chunkBytes % wb)));
  }
  read(max: number): Uint32Array {
    const out = new Uint32Array(Math.max(0, Math.min(max, (this.size - this.pos) / this.wb)));
    let k = 0;
    while (k < out.length) {
      const want = Math.min(this.buf.length, (out.length - k) * this.wb);
      const n = readSync(this.fd, this.buf, 0, want, this.pos);
      if (n < want) throw new ImageFormatError(`the file ended at byte ${this.pos + n} while being read (changed meanwhile?)`);
      this.pos += n;
      for (let i = 0; i < n; i += this.wb) out[k++] = this.buf.readUIntLE(i, this.wb);
    }
    return out;
  }
  close(): void {
    closeSync(this.fd);
  }
}

/** Lines of a text file, read in chunks; a line longer than any steercode writes is a format error. */
class LineReader {
  static readonly MAX_LINE = 4096;
  private readonly fd: number;
  private readonly buf: Buffer;
  private readonly dec: StringDecoder;
  private carry = "";
  private lines: string[] = [];
  private at = 0;
  private eof = false;
  /** 1-based number of the line last returned */
  lineNo = 0;
  constructor(path: string, encoding: "utf8" | "latin1", chunkBytes: number) {
    this.fd = openSync(path, "r");
    this.buf = Buffer.alloc(chunkBytes);
    this.dec = new StringDecoder(encoding);
  }
  /** The next line without its "\n", or null at the end of the file. */
  next(): string | null {
    while (this.at >= this.lines.length) {
      if (this.eof) return null;
      const n = readSync(this.fd, this.buf, 0, this.buf.length, null);
      let text: string;
      if (n === 0) {
        this.eof = true;
        text = this.carry + this.dec.end();
        this.lines = text ? [text] : [];
        this.carry = "";
      } else {
        text = this.carry + this.dec.write(this.buf.subarray(0, n));
        this.lines = text.split("\n");
        this.carry = this.lines.pop()!;
        if (this.carry.length > LineReader.MAX_LINE) throw new ImageFormatError(`line ${this.lineNo + this.lines.length + 1}: longer than ${LineReader.MAX_LINE} characters`);
      }
      this.at = 0;
    }
    this.lineNo++;
    return this.lines[this.at++]!;
  }
  close(): void {
    closeSync(this.fd);
  }
}

/**
 * dev-<id>.mem: $readmemh text (IEEE 1364-2005 §17.2.9), `//` comments, any number of
 * words per line. steercode writes every address from 0 in order, so an `@addr` is
 * accepted only where it names the next address.
 */
class MemReader implements ImageReader {
  private tokens: string[] = [];
  private t = 0;
  private addr = 0;
  constructor(private readonly lines: LineReader) {}
  read(max: number): Uint32Array {
    const out = new Uint32Array(max);
    let k = 0;
    while (k < max) {
      if (this.t >= this.tokens.length) {
        const line = this.lines.next();
        if (line === null) break;
        const s = line.replace(/\/\/.*$/, "").trim();
        this.tokens = s ? s.split(/\s+/) : [];
        this.t = 0;
        continue;
      }
      const tok = this.tokens[this.t++]!;
      const where = `line ${this.lines.lineNo}`;
      if (tok.startsWith("@")) {
        if (!/^@[0-9A-Fa-f]+$/.test(tok)) throw new ImageFormatError(`${where}: "${tok}" is not an address`);
        const a = parseInt(tok.slice(1), 16);
        if (a !== this.addr) throw new ImageFormatError(`${where}: "${tok}" jumps to address ${a} where address ${this.addr} comes next (steercode's images hold every word from address 0 in order)`);
        continue;
      }
      if (!/^[0-9A-Fa-f]{1,8}$/.test(tok)) throw new ImageFormatError(`${where}: "${tok}" is not a hex word`);
      out[k++] = parseInt(tok, 16);
      this.addr++;
    }
    return k === max ? out : out.slice(0, k);
  }
  close(): void {
    this.lines.close();
  }
}

/**
 * dev-<id>.hex: Intel HEX (record types 00 data, 01 end of file, 04 extended linear
 * address). Every record's length and checksum are checked; the data must cover byte
 * addresses 0 … end without gaps or overlaps; the end record must come last.
 */
class HexReader implements ImageReader {
  private upper = 0;
  /** bytes decoded so far */
  private size = 0;
  private ended = false;
  private done = false;
  /** decoded bytes not yet handed out as words */
  private pending: Buffer = Buffer.alloc(0);
  constructor(private readonly lines: LineReader, private readonly wb: number) {}
  read(max: number): Uint32Array {
    const parts: Buffer[] = [this.pending];
    let have = this.pending.length;
    const need = max * this.wb;
    while (have < need && !this.done) {
      const data = this.record();
      if (data) {
        parts.push(data);
        have += data.length;
      }
    }
    const all = parts.length === 1 ? parts[0]! : Buffer.concat(parts, have);
    if (this.done && have < need && have % this.wb) throw new ImageFormatError(`${this.size} bytes is not a whole number of ${this.wb}-byte words`);
    const n = Math.min(max, Math.floor(have / this.wb));
    const out = new Uint32Array(n);
    for (let i = 0; i < n; i++) out[i] = all.readUIntLE(i * this.wb, this.wb);
    this.pending = Buffer.from(all.subarray(n * this.wb));
    return out;
  }
  /** One record's data bytes (null for other records); sets `done` at the end of the file. */
  private record(): Buffer | null {
    const raw = this.lines.next();
    if (raw === null) {
      if (!this.ended) throw new ImageFormatError(`no end-of-file record ":00000001FF"`);
      this.done = true;
      return null;
    }
    const line = raw.trim();
    if (!line) return null;
    const where = `line ${this.lines.lineNo}`;
    if (this.ended) throw new ImageFormatError(`${where}: a record after the end-of-file record`);
    if (!/^:([0-9A-Fa-f]{2})+$/.test(line)) throw new ImageFormatError(`${where}: expected a record ":LLAAAATT…CC" of hex digit pairs`);
    const rec = Buffer.from(line.slice(1), "hex");
    const len = rec[0]!;
    if (rec.length !== len + 5) throw new ImageFormatError(`${where}: the record says ${len} data bytes but holds ${rec.length - 5}`);
    let sum = 0;
    for (const b of rec) sum += b;
    if (sum & 255) throw new ImageFormatError(`${where}: checksum ${rec[rec.length - 1]!.toString(16).toUpperCase().padStart(2, "0")} is wrong (the record's bytes sum to ${(sum & 255).toString(16).toUpperCase()} mod 256, expected 00)`);
    const addr16 = rec.readUInt16BE(1);
    const type = rec[3]!;
    const data = rec.subarray(4, 4 + len);
    if (type === 0) {
      const a = this.upper * 65536 + addr16;
      if (a !== this.size) throw new ImageFormatError(`${where}: data at byte address 0x${a.toString(16).toUpperCase()}, expected the next byte 0x${this.size.toString(16).toUpperCase()} (steercode images are contiguous from 0)`);
      if (addr16 + len > 65536) throw new ImageFormatError(`${where}: the record runs past a 64 KiB boundary`);
      this.size += len;
      return data;
    }
    if (type === 4) {
      if (len !== 2 || addr16 !== 0) throw new ImageFormatError(`${where}: an extended linear address record has 2 data bytes and address 0000`);
      this.upper = data.readUInt16BE(0);
    } else if (type === 1) {
      if (line.toUpperCase() !== ":00000001FF") throw new ImageFormatError(`${where}: expected the end-of-file record ":00000001FF"`);
      this.ended = true;
    } else throw new ImageFormatError(`${where}: record type ${type.toString(16).padStart(2, "0")} is not one steercode writes (00, 01, 04)`);
    return null;
  }
  close(): void {
    this.lines.close();
  }
}
