/**
 * Reading a build folder back: manifest, words from each table format, codes.csv.
 * Used by diff and verify. Every decoder is independent of the writers' code paths
 * except for the word layout itself.
 */
import { existsSync, readFileSync } from "node:fs";
import { join } from "node:path";
import { parse } from "csv-parse/sync";
import { InputError } from "../core/errors.js";
import type { Manifest } from "./build.js";
import { loadScenario, type LoadedScenario } from "./scenario.js";

export function readManifest(dir: string): Manifest {
  const p = join(dir, "manifest.json");
  if (!existsSync(dir)) throw new InputError({ file: dir, message: "folder not found" });
  if (!existsSync(p)) throw new InputError({ file: p, message: "not found: expected a steercode build folder (with manifest.json)" });
  let m: Manifest;
  try {
    m = JSON.parse(readFileSync(p, "utf8")) as Manifest;
  } catch (e) {
    throw new InputError({ file: p, message: `not valid JSON (${(e as Error).message})` });
  }
  if (m.format !== "steercode-manifest/1") throw new InputError({ file: p, pointer: "/format", message: `expected "steercode-manifest/1", got ${JSON.stringify(m.format)}` });
  return m;
}

export interface Decoded {
  words: Uint32Array;
  file: string;
}

export function wordsFromBin(dir: string, m: Manifest): Decoded | null {
  const p = join(dir, "table.bin");
  if (!existsSync(p)) return null;
  const b = readFileSync(p);
  const bytes = m.layout.bytes;
  const n = Math.floor(b.length / bytes);
  const words = new Uint32Array(n);
  for (let i = 0; i < n; i++) words[i] = b.readUIntLE(i * bytes, bytes);
  return { words, file: "table.bin" };
}

export function wordsFromMem(dir: string): Decoded | null {
  const p = join(dir, "table.mem");
  if (!existsSync(p)) return null;
  const out: number[] = [];
  for (const line of readFileSync(p, "utf8").split("\n")) {
    const t = line.replace(/\/\/.*$/, "").trim();
    if (!t) continue;
    for (const tok of t.split(/\s+/)) {
      if (tok.startsWith("@")) throw new InputError({ file: p, message: "address jumps (@addr) are not written by steercode; the file was edited" });
      out.push(parseInt(tok, 16));
    }
  }
  return { words: Uint32Array.from(out), file: "table.mem" };
}

export function wordsFromJson(dir: string): Decoded | null {
  const p = join(dir, "table.json");
  if (!existsSync(p)) return null;
  const doc = JSON.parse(readFileSync(p, "utf8")) as { words: number[][][] };
  return { words: Uint32Array.from(doc.words.flat(2)), file: "table.json" };
}

/** The array initialiser of table.h (between "= {" and the closing "};"), and its CRC define. */
export function wordsFromHeader(dir: string): (Decoded & { crc32: number | null }) | null {
  const p = join(dir, "table.h");
  if (!existsSync(p)) return null;
  const text = readFileSync(p, "utf8");
  const start = text.indexOf("= {");
  const end = text.indexOf("};", start);
  const body = start >= 0 && end > start ? text.slice(start + 3, end).replace(/\/\*[\s\S]*?\*\//g, "") : "";
  const words = Uint32Array.from(body.match(/0x[0-9A-Fa-f]+/g) ?? [], (h) => parseInt(h, 16));
  const crc = /#define STEERCODE_TABLE_CRC32 0x([0-9A-Fa-f]{8})u/.exec(text);
  return { words, file: "table.h", crc32: crc ? parseInt(crc[1]!, 16) : null };
}

export interface CodesCsv {
  words: Uint32Array;
  phase: Int32Array;
  atten: Int32Array;
  element: Int32Array;
}

export function readCodesCsv(dir: string): CodesCsv | null {
  const p = join(dir, "codes.csv");
  if (!existsSync(p)) return null;
  const rows = parse(readFileSync(p), { from_line: 2 }) as string[][];
  const n = rows.length;
  const c: CodesCsv = { words: new Uint32Array(n), phase: new Int32Array(n), atten: new Int32Array(n), element: new Int32Array(n) };
  rows.forEach((r, i) => {
    c.element[i] = Number(r[2]);
    c.phase[i] = Number(r[3]);
    c.atten[i] = Number(r[4]);
    c.words[i] = Number(r[5]);
  });
  return c;
}

/** The words of a build from the first format present (table.bin, table.json, table.mem, table.h). */
export function buildWords(dir: string, m: Manifest): Decoded {
  const d = wordsFromBin(dir, m) ?? wordsFromJson(dir) ?? wordsFromMem(dir) ?? wordsFromHeader(dir);
  if (d) return d;
  const c = readCodesCsv(dir);
  if (c) return { words: c.words, file: "codes.csv" };
  throw new InputError({ file: dir, message: "holds no table (table.bin, table.json, table.mem, table.h or codes.csv)" });
}

/**
 * The scenario recorded in a build folder, read from its `inputs/` copies (so it works on
 * a folder moved to another machine). A reference the manifest does not map resolves to
 * a path inside `inputs/` that does not exist, and is reported as a missing file.
 */
export function loadBuildScenario(dir: string, m: Manifest): LoadedScenario {
  const copies = new Map(m.inputs.map((i) => [i.ref, join(dir, i.copy)]));
  return loadScenario(join(dir, m.scenario.copy), { resolveRef: (ref) => copies.get(ref) ?? join(dir, "inputs", "missing-" + ref), displayName: join(dir, m.scenario.copy) });
}
