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
  /** Bytes not yet written: one reused buffer (many small pieces would each be a heap object). */
  private readonly buf = Buffer.allocUnsafe(CHUNK);
  private used = 0;
  constructor(readonly path: string) {
    this.fd = openSync(path, "wx");
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
    if (buf.length <= CHUNK - this.used) {
      buf.copy(this.buf, this.used);
      this.used += buf.length;
      return;
    }
    this.flush();
    if (buf.length < CHUNK) {
      buf.copy(this.buf, 0);
      this.used = buf.length;
    } else this.out(buf);
  }
  /** Write bytes the caller will reuse at once: copied or written through now, never kept. */
  writeTransient(buf: Buffer): void {
    this.write(buf);
  }
  private out(buf: Buffer): void {
    this.hash.update(buf);
    this.crc = crc32(buf, this.crc);
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
    return { bytes: this.size, sha256: this.hash.digest("hex"), crc32: this.crc >>> 0 };
  }
}
