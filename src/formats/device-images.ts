/**
 * Device images: `devices/dev-<id>.bin` (words little-endian from address 0),
 * `.mem` ($readmemh, one word per line from address 0), `.hex` (Intel HEX) and
 * `devices/map.csv`.
 *
 * Writing streams with bounded memory. Each device's .bin is written first:
 *  - sequential layouts (every used channel offset c·channelStride < beamStride, the
 *    default) are appended beam block by beam block, padding filled on the way;
 *  - any other layout (e.g. channel-major) is prefilled with `fill`, then the words go
 *    in by positional writes, batched per device, sorted and coalesced into runs.
 * Per-device buffers share a fixed budget; files are opened only to flush a buffer, so
 * thousands of devices need no open descriptors. Then each .bin is read back once, in
 * chunks, to hash it and to derive its .mem and .hex (a .bin that is not an output is a
 * scratch file, removed afterwards).
 */
import { closeSync, openSync, readSync, rmSync, writeSync, mkdirSync } from "node:fs";
import { createHash } from "node:crypto";
import { crc32 } from "node:zlib";
import { join } from "node:path";
import { address, type DeviceInfo, type DeviceMap } from "../core/devices.js";
import { AsciiBuffer, putHex } from "../io/format.js";
import { HashedFile, type FileDigest } from "../io/hashed.js";

export const DEVICES_DIR = "devices";
export const DEVICE_MAP_FILE = "devices/map.csv";
export const deviceFile = (id: number, ext: "bin" | "mem" | "hex") => `${DEVICES_DIR}/dev-${id}.${ext}`;

/** Total bytes the per-device write buffers may hold at once (each device gets at least 256 words). */
const BUFFER_BUDGET = 32 << 20;
/** Up to this many devices keep their .bin open from creation to the end (opening files is slow on some file systems); more reopen per flush. */
const KEEP_OPEN = 4096;
/** Largest region a positional flush reads, patches and writes back. */
const PATCH_REGION = 1 << 20;
const READ_CHUNK = 48 * 21845; // 1 048 560 bytes: a multiple of 16 (hex records) and of 1, 2, 3 and 4 (word sizes)

export interface DeviceImageContext {
  map: DeviceMap;
  wordBits: number;
  wordBytes: number;
  beams: number;
  /** write-buffer budget in bytes (default 32 MiB; tests use small ones to reach every path) */
  bufferBytes?: number;
}

interface Sink {
  dev: DeviceInfo;
  path: string;
  fd: number | null;
  /** bytes written so far (sequential) */
  size: number;
  /** element index of each used channel */
  els: Int32Array;
  /** sequential: byte offset of each used channel inside a beam block */
  offs: Int32Array;
  /** sequential: one beam block of fill words (null when a block is larger than the device's buffer: written through fill()) */
  template: Buffer | null;
  /** sequential: bytes pending append */
  buf: Buffer;
  len: number;
  /** positional: pending words, [used channel][pending block] */
  pend: Uint32Array | null;
  capBlocks: number;
  firstBlock: number;
  n: number;
}

export class DeviceImageWriter {
  private readonly sinks: Sink[] = [];
  private readonly wb: number;
  private readonly fillChunk: Buffer;
  private readonly keepOpen: boolean;
  constructor(private readonly root: string, private readonly ctx: DeviceImageContext) {
    const map = ctx.map;
    const spec = map.spec;
    const wb = (this.wb = ctx.wordBytes);
    mkdirSync(join(root, DEVICES_DIR));
    this.fillChunk = Buffer.alloc(4096 * wb);
    for (let i = 0; i < 4096; i++) this.fillChunk.writeUIntLE(spec.fill, i * wb, wb);
    this.keepOpen = map.devices.length <= KEEP_OPEN;
    const per = Math.max(256 * wb, Math.floor((ctx.bufferBytes ?? BUFFER_BUDGET) / Math.max(1, map.devices.length)));
    try {
      for (const dev of map.devices) {
        const path = join(root, deviceFile(dev.id, "bin"));
        const fd = openSync(path, "wx+");
        if (!this.keepOpen) closeSync(fd);
        const els = Int32Array.from(dev.used, (c) => dev.elementOfChannel[c]!);
        const blockBytes = spec.beamStride * wb;
        const s: Sink = { dev, path, fd: this.keepOpen ? fd : null, size: 0, els, offs: Int32Array.from(dev.used, (c) => c * spec.channelStride * wb), template: null, buf: Buffer.allocUnsafe(0), len: 0, pend: null, capBlocks: 0, firstBlock: 0, n: 0 };
        this.sinks.push(s);
        if (dev.sequential) {
          s.buf = Buffer.allocUnsafe(per);
          if (blockBytes <= per) {
            s.template = Buffer.allocUnsafe(blockBytes);
            for (let o = 0; o < blockBytes; o += this.fillChunk.length) this.fillChunk.copy(s.template, o, 0, Math.min(this.fillChunk.length, blockBytes - o));
          }
          this.fill(s, spec.base); // sequential images start with `base` words of fill
        } else {
          s.capBlocks = Math.max(1, Math.min(Math.floor(per / (els.length * 4)), spec.beamStride === 1 ? Infinity : Math.floor(PATCH_REGION / blockBytes)));
          s.pend = new Uint32Array(s.capBlocks * els.length);
          this.prefill(s);
        }
      }
    } catch (e) {
      this.close();
      throw e;
    }
  }

  /** Close every descriptor still open (after end(), or when the build is abandoned). */
  close(): void {
    for (const s of this.sinks) {
      if (s.fd !== null) closeSync(s.fd);
      s.fd = null;
    }
  }

  private withFd<T>(s: Sink, fn: (fd: number) => T): T {
    if (s.fd !== null) return fn(s.fd);
    const fd = openSync(s.path, "r+");
    try {
      return fn(fd);
    } finally {
      closeSync(fd);
    }
  }
  private writeAt(fd: number, buf: Buffer, len: number, pos: number): void {
    let off = 0;
    while (off < len) off += writeSync(fd, buf, off, len - off, pos + off);
  }
  private flushSeq(s: Sink): void {
    if (!s.len) return;
    this.withFd(s, (fd) => this.writeAt(fd, s.buf, s.len, s.size));
    s.size += s.len;
    s.len = 0;
  }
  private fill(s: Sink, words: number): void {
    let left = words * this.wb;
    while (left > 0) {
      if (s.len === s.buf.length) this.flushSeq(s);
      const m = Math.min(left, s.buf.length - s.len, this.fillChunk.length);
      this.fillChunk.copy(s.buf, s.len, 0, m);
      s.len += m;
      left -= m;
    }
  }
  private prefill(s: Sink): void {
    this.withFd(s, (fd) => {
      let at = 0;
      const total = s.dev.words * this.wb;
      while (at < total) {
        const m = Math.min(total - at, this.fillChunk.length);
        this.writeAt(fd, this.fillChunk, m, at);
        at += m;
      }
    });
  }
  /** Positional: per used channel, the pending blocks' words sit at address(first + j, c): one run (beamStride 1) or a patched region. */
  private flushPos(s: Sink): void {
    if (!s.n) return;
    const spec = this.ctx.map.spec;
    const wb = this.wb;
    const S = spec.beamStride;
    const n = s.n;
    const region = Buffer.allocUnsafe(((n - 1) * S + 1) * wb);
    this.withFd(s, (fd) => {
      s.dev.used.forEach((c, k) => {
        const start = address(spec, s.firstBlock, c) * wb;
        const len = ((n - 1) * S + 1) * wb;
        if (S > 1) {
          let got = 0;
          while (got < len) {
            const r = readSync(fd, region, got, len - got, start + got);
            if (!r) throw new Error(`device ${s.dev.id}: image shorter than its prefill`);
            got += r;
          }
        }
        for (let j = 0; j < n; j++) region.writeUIntLE(s.pend![k * s.capBlocks + j]!, j * S * wb, wb);
        this.writeAt(fd, region, len, start);
      });
    });
    s.n = 0;
  }

  /** One beam's words in table order (frequency fi, beam b). */
  beam(fi: number, b: number, words: Uint32Array): void {
    const map = this.ctx.map;
    const spec = map.spec;
    const blk = fi * this.ctx.beams + b;
    const last = blk === map.blocks - 1;
    const wb = this.wb;
    for (const s of this.sinks) {
      const els = s.els;
      const nu = els.length;
      if (s.pend) {
        if (s.n === s.capBlocks) this.flushPos(s);
        if (s.n === 0) s.firstBlock = blk;
        const pend = s.pend;
        for (let k = 0; k < nu; k++) pend[k * s.capBlocks + s.n] = words[els[k]!]!;
        s.n++;
      } else if (s.template) {
        // a whole block: fill words, then the channels' words over them (the last block ends at its last used word)
        const bytes = last ? s.offs[nu - 1]! + wb : s.template.length;
        if (s.len + bytes > s.buf.length) this.flushSeq(s);
        const buf = s.buf;
        const at = s.len;
        if (bytes > nu * wb) s.template.copy(buf, at, 0, bytes);
        const offs = s.offs;
        for (let k = 0; k < nu; k++) {
          const w = words[els[k]!]!;
          const o = at + offs[k]!;
          buf[o] = w & 255;
          if (wb > 1) buf[o + 1] = (w >>> 8) & 255;
          if (wb > 2) buf[o + 2] = (w >>> 16) & 255;
          if (wb > 3) buf[o + 3] = w >>> 24;
        }
        s.len += bytes;
      } else {
        // blocks larger than the buffer: word by word with fill() in between
        let pos = 0;
        for (let k = 0; k < nu; k++) {
          const off = s.offs[k]! / wb;
          if (off > pos) this.fill(s, off - pos);
          if (s.len + wb > s.buf.length) this.flushSeq(s);
          s.buf.writeUIntLE(words[els[k]!]!, s.len, wb);
          s.len += wb;
          pos = off + 1;
        }
        if (!last) this.fill(s, spec.beamStride - pos);
      }
    }
  }

  /** Flush, derive .mem/.hex from each .bin, write map.csv; returns the files for the manifest (relative names). */
  end(elementIds: Int32Array): Record<string, FileDigest & { withCrc: boolean }> {
    const out: Record<string, FileDigest & { withCrc: boolean }> = {};
    const formats = this.ctx.map.spec.formats;
    for (const s of this.sinks) {
      if (s.pend) this.flushPos(s);
      else this.flushSeq(s);
    }
    const chunk = Buffer.allocUnsafe(READ_CHUNK);
    const withBin = formats.includes("bin");
    for (const s of this.sinks) {
      const id = s.dev.id;
      const mem = formats.includes("mem") ? new MemText(join(this.root, deviceFile(id, "mem")), this.ctx, s.dev) : null;
      const hex = formats.includes("hex") ? new HexText(join(this.root, deviceFile(id, "hex"))) : null;
      const sha = createHash("sha256");
      let crc = 0;
      let bytes = 0;
      const fd = s.fd ?? openSync(s.path, "r");
      s.fd = null;
      try {
        for (;;) {
          const got = readFully(fd, chunk, bytes);
          if (!got) break;
          const view = chunk.subarray(0, got);
          sha.update(view);
          if (withBin) crc = crc32(view, crc);
          mem?.bytes(view, this.wb);
          hex?.bytes(view, bytes);
          bytes += got;
        }
      } finally {
        closeSync(fd);
      }
      if (bytes !== s.dev.words * this.wb) throw new Error(`device ${id}: wrote ${bytes} bytes, expected ${s.dev.words * this.wb}`);
      if (withBin) out[deviceFile(id, "bin")] = { bytes, sha256: sha.digest("hex"), crc32: crc >>> 0, withCrc: true };
      else rmSync(s.path);
      if (mem) out[deviceFile(id, "mem")] = { ...mem.end(), withCrc: false };
      if (hex) out[deviceFile(id, "hex")] = { ...hex.end(), withCrc: false };
    }
    out[DEVICE_MAP_FILE] = { ...writeMapCsv(join(this.root, DEVICE_MAP_FILE), this.ctx.map, elementIds), withCrc: false };
    return out;
  }
}

function readFully(fd: number, buf: Buffer, at: number): number {
  let got = 0;
  while (got < buf.length) {
    const n = readSync(fd, buf, got, buf.length - got, at + got);
    if (!n) break;
    got += n;
  }
  return got;
}

/** map.csv: device,channel,element, ascending by device then channel. */
export function writeMapCsv(path: string, map: DeviceMap, elementIds: Int32Array): FileDigest {
  const f = new HashedFile(path);
  const lines = ["device,channel,element"];
  for (const d of map.devices) for (const c of d.used) lines.push(`${d.id},${c},${elementIds[d.elementOfChannel[c]!]}`);
  f.write(lines.join("\n") + "\n");
  return f.close();
}

/** m words of a .bin image (wb bytes each, little-endian, from byte `at` of view) as $readmemh lines. */
function memFromBin(dv: DataView, p: number, view: Buffer, at: number, m: number, wb: number, digits: number): number {
  for (let k = 0, a = at; k < m; k++, a += wb) {
    let w = view[a]!;
    if (wb > 1) w |= view[a + 1]! << 8;
    if (wb > 2) w |= view[a + 2]! << 16;
    if (wb > 3) w = (w | (view[a + 3]! << 24)) >>> 0;
    p = putHex(dv, p, w, digits);
    dv.setUint8(p++, 10);
  }
  return p;
}

/** One Intel HEX record: ':', length, address, type, data, checksum (two's complement of the byte sum), newline. */
function hexRecord(dv: DataView, p: number, type: number, addr16: number, data: Buffer, from: number, len: number): number {
  dv.setUint8(p, 58); // ':'
  p = putHex(dv, p + 1, len, 2);
  p = putHex(dv, p, addr16, 4);
  p = putHex(dv, p, type, 2);
  let sum = len + (addr16 >> 8) + (addr16 & 255) + type;
  let i = 0;
  for (; i + 1 < len; i += 2) {
    // two data bytes, four hex digits, one table lookup
    const a = data[from + i]!;
    const b = data[from + i + 1]!;
    p = putHex(dv, p, (a << 8) | b, 4);
    sum += a + b;
  }
  if (i < len) {
    const b = data[from + i]!;
    p = putHex(dv, p, b, 2);
    sum += b;
  }
  p = putHex(dv, p, (256 - (sum & 255)) & 255, 2);
  dv.setUint8(p, 10);
  return p + 1;
}

class MemText {
  private readonly f: HashedFile;
  private readonly out = new AsciiBuffer(1 << 16);
  private readonly digits: number;
  constructor(path: string, ctx: DeviceImageContext, dev: DeviceInfo) {
    this.f = new HashedFile(path);
    this.digits = Math.ceil(ctx.wordBits / 4);
    const s = ctx.map.spec;
    this.f.write(
      `// steercode beam memory of device ${dev.id} for $readmemh: ${dev.words} words of ${ctx.wordBits} bits, one a line from address 0\n` +
        `// address = ${s.base} + (frequency * ${ctx.beams} + beam) * ${s.beamStride} + channel * ${s.channelStride}; unused addresses hold ${s.fill}\n`,
    );
  }
  bytes(view: Buffer, wb: number): void {
    const n = view.length / wb;
    const o = this.out;
    for (let i = 0; i < n; i += 8192) {
      const m = Math.min(n - i, 8192);
      o.ensure(m * (this.digits + 1));
      o.pos = memFromBin(o.dv, o.pos, view, i * wb, m, wb, this.digits);
      this.f.writeTransient(o.view());
    }
  }
  end(): FileDigest {
    return this.f.close();
  }
}

/**
 * Intel HEX: data records (type 00) of 16 bytes, an extended linear address record
 * (type 04) whenever the upper 16 bits of the byte address change (never at 0), and the
 * end-of-file record :00000001FF. Records never cross a 64 KiB boundary (16 divides it).
 */
class HexText {
  private readonly f: HashedFile;
  private readonly out = new AsciiBuffer(1 << 16);
  private upper = 0;
  constructor(path: string) {
    this.f = new HashedFile(path);
  }
  private record(type: number, addr16: number, data: Buffer, from: number, len: number): void {
    const o = this.out;
    o.pos = hexRecord(o.dv, o.pos, type, addr16, data, from, len);
  }
  /** `view` holds the image bytes starting at byte address `at` (a multiple of 16). */
  bytes(view: Buffer, at: number): void {
    const o = this.out;
    for (let i = 0; i < view.length; i += 16) {
      o.ensure(64);
      const a = at + i;
      const up = Math.floor(a / 65536);
      if (up !== this.upper) {
        const ela = Buffer.from([up >> 8, up & 255]);
        this.record(4, 0, ela, 0, 2);
        this.upper = up;
      }
      this.record(0, a % 65536, view, i, Math.min(16, view.length - i));
      if (o.pos > 60000) this.f.writeTransient(o.view());
    }
    if (o.pos) this.f.writeTransient(o.view());
  }
  end(): FileDigest {
    this.f.write(":00000001FF\n");
    return this.f.close();
  }
}

export { address };
