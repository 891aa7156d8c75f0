/** Reading input files: bytes, SHA-256, strict UTF-8, and problems that name the file. */
import { createHash } from "node:crypto";
import { readFileSync, statSync } from "node:fs";
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

const MAX_INPUT_BYTES = 512 * 1024 * 1024;

export function readInput(path: string, name: string, problems: Problem[], pointer?: string): InputFile | null {
  const at = pointer === undefined ? {} : { pointer };
  let bytes: Buffer;
  try {
    const st = statSync(path);
    if (st.isDirectory()) {
      problems.push({ file: name, ...at, message: `expected a file, found a folder (${path})` });
      return null;
    }
    if (st.size > MAX_INPUT_BYTES) {
      problems.push({ file: name, ...at, message: `file is ${st.size} bytes; expected at most ${MAX_INPUT_BYTES}` });
      return null;
    }
    bytes = readFileSync(path);
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    problems.push({
      file: name,
      ...at,
      message: code === "ENOENT" ? `file not found (${path})` : `cannot read file (${code ?? String(e)})`,
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
