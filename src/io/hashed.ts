/** A file written in buffered chunks while its SHA-256 and CRC-32 (IEEE 802.3, zlib.crc32) are kept up to date. */
import { createHash, type Hash } from "node:crypto";
import { closeSync, openSync, writeSync } from "node:fs";
import { crc32 } from "node:zlib";

export interface FileDigest {
  bytes: number;
  sha256: string;
  crc32: number;
}

const CHUNK = 1 << 20;

export class HashedFile {
  private readonly fd: number;
  private readonly hash: Hash = createHash("sha256");
  private crc = 0;
  private size = 0;
  private pending: Buffer[] = [];
  private pendingBytes = 0;
  constructor(readonly path: string) {
    this.fd = openSync(path, "wx");
  }
  write(data: Buffer | Uint8Array | string): void {
    const buf = typeof data === "string" ? Buffer.from(data, "utf8") : Buffer.isBuffer(data) ? data : Buffer.from(data.buffer, data.byteOffset, data.byteLength);
    this.hash.update(buf);
    this.crc = crc32(buf, this.crc);
    this.size += buf.length;
    this.pending.push(buf);
    this.pendingBytes += buf.length;
    if (this.pendingBytes >= CHUNK) this.flush();
  }
  /** Write bytes the caller will reuse at once: hashed and written through now, never kept. */
  writeTransient(buf: Buffer): void {
    this.flush();
    this.hash.update(buf);
    this.crc = crc32(buf, this.crc);
    this.size += buf.length;
    let off = 0;
    while (off < buf.length) off += writeSync(this.fd, buf, off, buf.length - off);
  }
  private flush(): void {
    if (!this.pendingBytes) return;
    const all = this.pending.length === 1 ? this.pending[0]! : Buffer.concat(this.pending, this.pendingBytes);
    let off = 0;
    while (off < all.length) off += writeSync(this.fd, all, off, all.length - off);
    this.pending = [];
    this.pendingBytes = 0;
  }
  close(): FileDigest {
    this.flush();
    closeSync(this.fd);
    return { bytes: this.size, sha256: this.hash.digest("hex"), crc32: this.crc >>> 0 };
  }
}
