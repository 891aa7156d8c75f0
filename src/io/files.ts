/**
 * Reading input files: bytes, SHA-256, strict UTF-8, and problems that name the file.
 *
 * Every input is read exactly once; the bytes read are the bytes hashed and the bytes
 * copied into a build's `inputs/` (so a scenario given as `/dev/stdin` or `<(…)` is
 * copied as read, not re-read empty). Only regular files are read, plus a pipe the
 * shell already opened (`/dev/stdin`, `/dev/fd/N`, `/proc/self/fd/N`: that descriptor is
 * read, not opened again); devices
 * (`/dev/zero`), sockets and named FIFOs (whose open would wait for a writer) are
 * refused. Reading stops at a byte limit, which holds for pipes and for files that
 * grow while read, too.
 */
import { createHash } from "node:crypto";
import { closeSync, constants, fstatSync, openSync, readSync, statSync } from "node:fs";
import type { Problem } from "../core/errors.js";

export interface InputFile {
  /** How the file was named (as in the scenario, or on the command line). */
  name: string;
  path: string;
  bytes: Buffer;
  sha256: string;
  text: string;
}

export function sha256(data: Buffer | string): string {
  return createHash("sha256").update(data).digest("hex");
}

/** Largest scenario file, and largest CSV input, in bytes. */
export const MAX_SCENARIO_BYTES = 1024 * 1024;
export const MAX_CSV_BYTES = 64 * 1024 * 1024;
/** A build folder's manifest.json (readbuild.ts; scenario.ts for a scenario read from a build's inputs/). */
export const MAX_MANIFEST_BYTES = 64 * 1024 * 1024;

/** Paths that name a descriptor the shell opened for us (a pipe here is not a named FIFO). */
const OPEN_DESCRIPTOR_RE = /^\/(?:dev\/(?:stdin|fd\/(\d+))|proc\/self\/fd\/(\d+))$/;

function kind(st: { isDirectory(): boolean; isCharacterDevice(): boolean; isBlockDevice(): boolean; isFIFO(): boolean; isSocket(): boolean }): string {
  if (st.isDirectory()) return "a folder";
  if (st.isCharacterDevice()) return "a character device";
  if (st.isBlockDevice()) return "a block device";
  if (st.isFIFO()) return "a named pipe (FIFO)";
  if (st.isSocket()) return "a socket";
  return "not a regular file";
}

/** Read at most `limit` bytes from fd; null when there is more. */
function readBounded(fd: number, limit: number): Buffer | null {
  const chunks: Buffer[] = [];
  let total = 0;
  for (;;) {
    const buf = Buffer.allocUnsafe(Math.min(1 << 20, limit + 1 - total));
    let n: number;
    for (;;) {
      try {
        n = readSync(fd, buf, 0, buf.length, null);
        break;
      } catch (e) {
        // a pipe opened non-blocking by someone else: wait for data rather than fail
        if ((e as NodeJS.ErrnoException).code !== "EAGAIN") throw e;
        Atomics.wait(new Int32Array(new SharedArrayBuffer(4)), 0, 0, 5);
      }
    }
    if (n === 0) break;
    total += n;
    if (total > limit) return null;
    chunks.push(buf.subarray(0, n));
  }
  return Buffer.concat(chunks, total);
}

export function readInput(path: string, name: string, problems: Problem[], pointer?: string, limit = MAX_CSV_BYTES): InputFile | null {
  const at = pointer === undefined ? {} : { pointer };
  let bytes: Buffer | null;
  try {
    const st = statSync(path);
    const desc = OPEN_DESCRIPTOR_RE.exec(path);
    // a pipe or socket the shell (or a parent process) opened for us: read that descriptor, do not open it again
    const pipe = desc !== null && (st.isFIFO() || st.isSocket());
    if (!st.isFile() && !pipe) {
      problems.push({ file: name, ...at, message: `expected a regular file, found ${kind(st)} (${path})` });
      return null;
    }
    if (st.size > limit) {
      problems.push({ file: name, ...at, message: `file is ${st.size} bytes; expected at most ${limit} bytes` });
      return null;
    }
    if (pipe) bytes = readBounded(Number(desc[1] ?? desc[2] ?? 0), limit);
    else {
      // O_NONBLOCK: should the path have become a FIFO since the stat, the open does not wait for a writer
      const fd = openSync(path, constants.O_RDONLY | constants.O_NONBLOCK);
      try {
        const again = fstatSync(fd);
        if (!again.isFile()) {
          problems.push({ file: name, ...at, message: `expected a regular file, found ${kind(again)} (${path})` });
          return null;
        }
        bytes = readBounded(fd, limit);
      } finally {
        closeSync(fd);
      }
    }
    if (bytes === null) {
      problems.push({ file: name, ...at, message: `more than ${limit} bytes; expected at most ${limit} bytes` });
      return null;
    }
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    problems.push({
      file: name,
      ...at,
      message: code === "ENOENT" ? `file not found (${path})` : code === "ELOOP" ? `too many levels of symbolic links (${path})` : code === "EACCES" ? `permission denied (${path})` : `cannot read file (${code ?? String(e)})`,
    });
    return null;
  }
  let text: string;
  try {
    text = new TextDecoder("utf-8", { fatal: true }).decode(bytes);
  } catch {
    problems.push({ file: name, ...at, message: "expected UTF-8 text; the file holds bytes that are not UTF-8" });
    return null;
  }
  if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
  return { name, path, bytes, sha256: sha256(bytes), text };
}
