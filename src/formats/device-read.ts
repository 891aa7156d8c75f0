/**
 * Reading device images back (verify, diff): each decoder follows the format's own
 * rules, not the writer's code. Problems in a file are thrown as ImageFormatError with
 * the line, so verify can report them as a failed check.
 */
import { readFileSync } from "node:fs";

export class ImageFormatError extends Error {}

/** dev-<id>.bin: little-endian words of `wb` bytes from address 0. */
export function wordsFromBinImage(path: string, wb: number): Uint32Array {
  const b = readFileSync(path);
  if (b.length % wb) throw new ImageFormatError(`${b.length} bytes is not a whole number of ${wb}-byte words`);
  const n = b.length / wb;
  const out = new Uint32Array(n);
  for (let i = 0; i < n; i++) out[i] = b.readUIntLE(i * wb, wb);
  return out;
}

/** dev-<id>.mem: $readmemh text (IEEE 1364-2005 §17.2.9), `//` comments; `@addr` jumps are honoured. */
export function wordsFromMemImage(path: string): Uint32Array {
  const lines = readFileSync(path, "utf8").split("\n");
  let words = new Uint32Array(1024);
  let n = 0;
  let at = 0;
  lines.forEach((line, i) => {
    const t = line.replace(/\/\/.*$/, "").trim();
    if (!t) return;
    for (const tok of t.split(/\s+/)) {
      if (tok.startsWith("@")) {
        if (!/^@[0-9A-Fa-f]+$/.test(tok)) throw new ImageFormatError(`line ${i + 1}: "${tok}" is not an address`);
        at = parseInt(tok.slice(1), 16);
        continue;
      }
      if (!/^[0-9A-Fa-f]{1,8}$/.test(tok)) throw new ImageFormatError(`line ${i + 1}: "${tok}" is not a hex word`);
      while (at >= words.length) {
        const next = new Uint32Array(words.length * 2);
        next.set(words);
        words = next;
      }
      words[at++] = parseInt(tok, 16);
      n = Math.max(n, at);
    }
  });
  return words.slice(0, n);
}

/**
 * dev-<id>.hex: Intel HEX (record types 00 data, 01 end of file, 04 extended linear
 * address). Every record's length and checksum are checked; the data must cover
 * byte addresses 0 … end without gaps or overlaps; the end record must come last.
 */
export function bytesFromHexImage(path: string): Buffer {
  const lines = readFileSync(path, "latin1").split(/\r?\n/);
  let image = Buffer.alloc(4096);
  let size = 0;
  let upper = 0;
  let ended = false;
  for (let i = 0; i < lines.length; i++) {
    const line = lines[i]!.trim();
    if (!line) continue;
    const where = `line ${i + 1}`;
    if (ended) throw new ImageFormatError(`${where}: a record after the end-of-file record`);
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
      const a = upper * 65536 + addr16;
      if (a !== size) throw new ImageFormatError(`${where}: data at byte address 0x${a.toString(16).toUpperCase()}, expected the next byte 0x${size.toString(16).toUpperCase()} (steercode images are contiguous from 0)`);
      if (addr16 + len > 65536) throw new ImageFormatError(`${where}: the record runs past a 64 KiB boundary`);
      while (size + len > image.length) {
        const next = Buffer.alloc(image.length * 2);
        image.copy(next);
        image = next;
      }
      data.copy(image, size);
      size += len;
    } else if (type === 4) {
      if (len !== 2 || addr16 !== 0) throw new ImageFormatError(`${where}: an extended linear address record has 2 data bytes and address 0000`);
      upper = data.readUInt16BE(0);
    } else if (type === 1) {
      if (line.toUpperCase() !== ":00000001FF") throw new ImageFormatError(`${where}: expected the end-of-file record ":00000001FF"`);
      ended = true;
    } else throw new ImageFormatError(`${where}: record type ${type.toString(16).padStart(2, "0")} is not one steercode writes (00, 01, 04)`);
  }
  if (!ended) throw new ImageFormatError(`no end-of-file record ":00000001FF"`);
  return image.subarray(0, size);
}

export function wordsFromHexImage(path: string, wb: number): Uint32Array {
  const b = bytesFromHexImage(path);
  if (b.length % wb) throw new ImageFormatError(`${b.length} bytes is not a whole number of ${wb}-byte words`);
  const out = new Uint32Array(b.length / wb);
  for (let i = 0; i < out.length; i++) out[i] = b.readUIntLE(i * wb, wb);
  return out;
}
