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
import { appendFileSync, closeSync, openSync, readSync, rmSync, writeFileSync, writeSync, mkdirSync } from "node:fs";
import { createHash } from "node:crypto";
import { crc32 } from "node:zlib";
import { join } from "node:path";
import { address, type DeviceInfo, type DeviceMap } from "../core/devices.js";
import { AsciiBuffer } from "../io/format.js";
import { HashedFile, type FileDigest } from "../io/hashed.js";

export const DEVICES_DIR = "devices";
export const DEVICE_MAP_FILE = "devices/map.csv";
export const deviceFile = (id: number, ext: "bin" | "mem" | "hex") => `${DEVICES_DIR}/dev-${id}.${ext}`;

/** Total bytes the per-device write buffers may hold at once. */
const BUFFER_BUDGET = 8 << 20;
const READ_CHUNK = 48 * 21845; // 1 048 560 bytes: a multiple of 16 (hex records) and of 1, 2, 3 and 4 (word sizes)

export interface DeviceImageContext {
  map: DeviceMap;
  wordBits: number;
  wordBytes: number;
  beams: number;
}

interface Sink {
  dev: DeviceInfo;
  path: string;
  /** sequential: bytes pending append; positional: pending (address, word) pairs */
  buf: Buffer;
  len: number;
  addr: Float64Array | null;
  word: Uint32Array | null;
  n: number;
}

export class DeviceImageWriter {
  private readonly sinks: Sink[] = [];
  private readonly wb: number;
  private readonly fillChunk: Buffer;
  constructor(private readonly root: string, private readonly ctx: DeviceImageContext) {
    const map = ctx.map;
    this.wb = ctx.wordBytes;
    mkdirSync(join(root, DEVICES_DIR));
    this.fillChunk = Buffer.alloc(4096 * this.wb);
    for (let i = 0; i < 4096; i++) this.fillChunk.writeUIntLE(map.spec.fill, i * this.wb, this.wb);
    const per = Math.max(64 * this.wb, Math.floor(BUFFER_BUDGET / Math.max(1, map.devices.length)));
    for (const dev of map.devices) {
      const path = join(root, deviceFile(dev.id, "bin"));
      writeFileSync(path, "", { flag: "wx" });
      if (dev.sequential) {
        this.sinks.push({ dev, path, buf: Buffer.allocUnsafe(per), len: 0, addr: null, word: null, n: 0 });
      } else {
        const pairs = Math.max(dev.used.length, Math.floor(per / 12));
        const s: Sink = { dev, path, buf: Buffer.allocUnsafe(0), len: 0, addr: new Float64Array(pairs), word: new Uint32Array(pairs), n: 0 };
        this.sinks.push(s);
        this.prefill(s);
      }
    }
    // sequential images start with `base` words of fill
    for (const s of this.sinks) if (s.dev.sequential) this.fill(s, map.spec.base);
  }

  private flushSeq(s: Sink): void {
    if (s.len) appendFileSync(s.path, s.buf.subarray(0, s.len));
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
    const fd = openSync(s.path, "r+");
    try {
      let left = s.dev.words * this.wb;
      while (left > 0) {
        const m = Math.min(left, this.fillChunk.length);
        writeSync(fd, this.fillChunk, 0, m);
        left -= m;
      }
    } finally {
      closeSync(fd);
    }
  }
  private flushPos(s: Sink): void {
    if (!s.n) return;
    const n = s.n;
    const order = new Uint32Array(n);
    for (let i = 0; i < n; i++) order[i] = i;
    const addr = s.addr!;
    order.sort((a, b) => addr[a]! - addr[b]!);
    const run = Buffer.allocUnsafe(n * this.wb);
    const fd = openSync(s.path, "r+");
    try {
      let i = 0;
      while (i < n) {
        let j = i;
        let len = 0;
        for (; j < n && (j === i || addr[order[j]!] === addr[order[j - 1]!]! + 1); j++) {
          run.writeUIntLE(s.word![order[j]!]!, len, this.wb);
          len += this.wb;
        }
        writeSync(fd, run, 0, len, addr[order[i]!]! * this.wb);
        i = j;
      }
    } finally {
      closeSync(fd);
    }
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
      const d = s.dev;
      const eoc = d.elementOfChannel;
      if (d.sequential) {
        let pos = 0;
        for (const c of d.used) {
          const off = c * spec.channelStride;
          if (off > pos) this.fill(s, off - pos);
          if (s.len + wb > s.buf.length) this.flushSeq(s);
          const w = words[eoc[c]!]!;
          const buf = s.buf;
          for (let k = 0; k < wb; k++) buf[s.len + k] = (w >>> (8 * k)) & 255;
          s.len += wb;
          pos = off + 1;
        }
        if (!last) this.fill(s, spec.beamStride - pos);
      } else {
        for (const c of d.used) {
          if (s.n === s.addr!.length) this.flushPos(s);
          s.addr![s.n] = address(spec, blk, c);
          s.word![s.n] = words[eoc[c]!]!;
          s.n++;
        }
      }
    }
  }

  /** Flush, derive .mem/.hex from each .bin, write map.csv; returns the files for the manifest (relative names). */
  end(elementIds: Int32Array): Record<string, FileDigest & { withCrc: boolean }> {
    const out: Record<string, FileDigest & { withCrc: boolean }> = {};
    const formats = this.ctx.map.spec.formats;
    for (const s of this.sinks) {
      if (s.dev.sequential) this.flushSeq(s);
      else this.flushPos(s);
    }
    const chunk = Buffer.allocUnsafe(READ_CHUNK);
    for (const s of this.sinks) {
      const id = s.dev.id;
      const mem = formats.includes("mem") ? new MemText(join(this.root, deviceFile(id, "mem")), this.ctx, s.dev) : null;
      const hex = formats.includes("hex") ? new HexText(join(this.root, deviceFile(id, "hex"))) : null;
      const sha = createHash("sha256");
      let crc = 0;
      let bytes = 0;
      const fd = openSync(s.path, "r");
      try {
        for (;;) {
          const got = readFully(fd, chunk);
          if (!got) break;
          const view = chunk.subarray(0, got);
          sha.update(view);
          crc = crc32(view, crc);
          mem?.bytes(view, this.wb);
          hex?.bytes(view, bytes);
          bytes += got;
        }
      } finally {
        closeSync(fd);
      }
      if (bytes !== s.dev.words * this.wb) throw new Error(`device ${id}: wrote ${bytes} bytes, expected ${s.dev.words * this.wb}`);
      if (formats.includes("bin")) out[deviceFile(id, "bin")] = { bytes, sha256: sha.digest("hex"), crc32: crc >>> 0, withCrc: true };
      else rmSync(s.path);
      if (mem) out[deviceFile(id, "mem")] = { ...mem.end(), withCrc: false };
      if (hex) out[deviceFile(id, "hex")] = { ...hex.end(), withCrc: false };
    }
    out[DEVICE_MAP_FILE] = { ...writeMapCsv(join(this.root, DEVICE_MAP_FILE), this.ctx.map, elementIds), withCrc: false };
    return out;
  }
}

function readFully(fd: number, buf: Buffer): number {
  let got = 0;
  while (got < buf.length) {
    const n = readSync(fd, buf, got, buf.length - got, null);
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
      for (let k = 0; k < m; k++) {
        o.hex(view.readUIntLE((i + k) * wb, wb), this.digits);
        o.byte(10);
      }
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
    o.byte(58); // ':'
    let sum = len + (addr16 >> 8) + (addr16 & 255) + type;
    o.hex(len, 2);
    o.hex(addr16, 4);
    o.hex(type, 2);
    for (let i = 0; i < len; i++) {
      const b = data[from + i]!;
      o.hex(b, 2);
      sum += b;
    }
    o.hex((256 - (sum & 255)) & 255, 2);
    o.byte(10);
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
