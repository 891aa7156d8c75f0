/**
 * A file written in buffered chunks while its SHA-256 (and, when asked for, CRC-32:
 * IEEE 802.3, zlib.crc32) is kept up to date.
 */
import { createHash, type Hash } from "node:crypto";
import { closeSync, openSync, writeSync } from "node:fs";
import { crc32 } from "node:zlib";

export interface FileDigest {
  bytes: number;
  sha256: string;
  /** 0 unless the file was opened with `crc32: true` (only table.bin and device .bin files record one) */
  crc32: number;
}

export interface HashOptions {
  /** keep the CRC-32 too (costs a second pass over every byte: only for files whose CRC is recorded) */
  crc32?: boolean;
}

const CHUNK = 1 << 20;
/** Pieces at least this long go to the hash and the file as they are, not through the buffer. */
const DIRECT = CHUNK >> 2;

/**
 * Write buffers of closed files, reused by the next file: a build of 1024 device images
 * opens thousands of files one after another, and a fresh 1 MiB buffer each was most of
 * its garbage collection.
 */
const spare: Buffer[] = [];

export class HashedFile {
  private readonly fd: number;
  private readonly hash: Hash = createHash("sha256");
  private readonly withCrc: boolean;
  private crc = 0;
  private size = 0;
  /** Bytes not yet written: one reused buffer (many small pieces would each be a heap object). */
  private buf: Buffer;
  private used = 0;
  constructor(readonly path: string, opts: HashOptions = {}) {
    this.fd = openSync(path, "wx");
    this.withCrc = !!opts.crc32;
    this.buf = spare.pop() ?? Buffer.allocUnsafe(CHUNK);
  }
  write(data: Buffer | Uint8Array | string): void {
    if (typeof data === "string") {
      const n = Buffer.byteLength(data, "utf8");
      if (n <= CHUNK - this.used) {
        this.buf.write(data, this.used, "utf8");
        this.used += n;
        return;
      }
      data = Buffer.from(data, "utf8");
    }
    const buf = Buffer.isBuffer(data) ? data : Buffer.from(data.buffer, data.byteOffset, data.byteLength);
    if (buf.length >= DIRECT) {
      this.flush();
      this.out(buf);
      return;
    }
    if (buf.length > CHUNK - this.used) this.flush();
    buf.copy(this.buf, this.used);
    this.used += buf.length;
  }
  /** Write bytes the caller will reuse at once: copied or written through now, never kept. */
  writeTransient(buf: Buffer): void {
    this.write(buf);
  }
  private out(buf: Buffer): void {
    this.hash.update(buf);
    if (this.withCrc) this.crc = crc32(buf, this.crc);
    this.size += buf.length;
    let off = 0;
    while (off < buf.length) off += writeSync(this.fd, buf, off, buf.length - off);
  }
  private flush(): void {
    if (!this.used) return;
    this.out(this.buf.subarray(0, this.used));
    this.used = 0;
  }
  close(): FileDigest {
    this.flush();
    closeSync(this.fd);
    if (spare.length < 4) spare.push(this.buf);
    this.buf = Buffer.alloc(0);
    return { bytes: this.size, sha256: this.hash.digest("hex"), crc32: this.crc >>> 0 };
  }
}
