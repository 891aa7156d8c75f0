/**
 * `steercode verify DIR`: end-to-end check of a build before it is flashed.
 * 1. every SHA-256 (and size) in manifest.json, and the CRC-32 of table.bin;
 * 2. table.bin, table.mem, table.json and table.h decoded back into words, each
 *    compared with codes.csv (words and, for enabled elements, the codes they unpack to);
 * 3. the codes recomputed from the scenario and inputs copied into the folder.
 * The first disagreement names the file and (frequency, beam, element).
 */
import { createHash } from "node:crypto";
import { existsSync, readFileSync, readdirSync, statSync } from "node:fs";
import { join } from "node:path";
import { crc32 } from "node:zlib";
import { runTables } from "../core/engine.js";
import { packPlan, unpackWord } from "../core/words.js";
import { hex32, type Manifest } from "./build.js";
import { loadBuildScenario, readCodesCsv, readManifest, wordsFromBin, wordsFromHeader, wordsFromJson, wordsFromMem, type Decoded } from "./readbuild.js";
import { toolVersion } from "./version.js";

export interface Check {
  check: string;
  ok: boolean;
  detail: string;
}

export interface VerifyResult {
  ok: boolean;
  checks: Check[];
  firstMismatch: { file: string; frequency_hz: string; beam: number; element: number; expected: number; found: number } | null;
}

function where(m: Manifest, i: number) {
  const E = m.counts.elements, B = m.counts.beams;
  return { frequency_hz: m.frequenciesHz[Math.floor(i / (B * E))] ?? "?", beam: Math.floor(i / E) % B, element: m.elementIds[i % E] ?? i % E };
}

export function verifyBuild(dir: string): VerifyResult {
  const m = readManifest(dir);
  const checks: Check[] = [];
  let first: VerifyResult["firstMismatch"] = null;
  const mismatch = (file: string, i: number, expected: number, found: number) => {
    if (!first) first = { file, ...where(m, i), expected, found };
  };
  // 1. hashes
  for (const [name, f] of Object.entries(m.files)) {
    const p = join(dir, name);
    if (!existsSync(p)) {
      checks.push({ check: `sha256 ${name}`, ok: false, detail: "file missing" });
      continue;
    }
    const data = readFileSync(p);
    const sha = createHash("sha256").update(data).digest("hex");
    const ok = sha === f.sha256 && data.length === f.bytes;
    checks.push({ check: `sha256 ${name}`, ok, detail: ok ? sha.slice(0, 16) + "…" : `manifest says ${f.sha256.slice(0, 16)}… (${f.bytes} bytes), file is ${sha.slice(0, 16)}… (${data.length} bytes)` });
    if (f.crc32) {
      const c = hex32(crc32(data));
      checks.push({ check: `crc32 ${name}`, ok: c === f.crc32, detail: c === f.crc32 ? c : `manifest says ${f.crc32}, file is ${c}` });
    }
  }
  // files the manifest does not list (a report, notes) are named, not judged
  const listed = new Set(Object.keys(m.files).concat(["manifest.json"]));
  const extra = (readdirSync(dir, { recursive: true }) as string[]).filter((f) => !listed.has(f.split("\\").join("/")) && !statSync(join(dir, f)).isDirectory());
  if (extra.length) checks.push({ check: "files not in the manifest", ok: true, detail: `${extra.sort().join(", ")} (not checked; not part of the table set)` });
  // 2. decode every table format and cross-check
  const decoded: Decoded[] = [];
  const bin = wordsFromBin(dir, m);
  if (bin) decoded.push(bin);
  for (const d of [wordsFromMem(dir), wordsFromJson(dir)]) if (d) decoded.push(d);
  const h = wordsFromHeader(dir);
  if (h) {
    decoded.push(h);
    if (bin) {
      const c = crc32(readFileSync(join(dir, "table.bin"))) >>> 0;
      checks.push({ check: "table.h STEERCODE_TABLE_CRC32", ok: h.crc32 === c, detail: h.crc32 === c ? hex32(c) : `header says ${h.crc32 === null ? "nothing" : hex32(h.crc32)}, table.bin is ${hex32(c)}` });
    }
  }
  const csv = readCodesCsv(dir);
  const reference: Decoded | null = csv ? { words: csv.words, file: "codes.csv" } : (decoded[0] ?? null);
  if (!reference) checks.push({ check: "tables", ok: false, detail: "the folder holds no table" });
  const pp = packPlan(m.layout);
  const disabled = new Set(m.disabledIds);
  if (csv) {
    // codes.csv against its own words
    let bad = -1;
    for (let i = 0; i < csv.words.length; i++) {
      if (disabled.has(csv.element[i]!)) {
        if (csv.words[i] !== m.layout.off) { bad = i; break; }
        continue;
      }
      const u = unpackWord(pp, m.layout, csv.words[i]!);
      const expect = pp.hasAtten ? u.attenCode === csv.atten[i] : true;
      if (u.phaseCode !== (csv.phase[i]! & pp.phaseMask) || !expect || !u.constantsOk) { bad = i; break; }
    }
    if (bad >= 0) mismatch("codes.csv", bad, csv.words[bad]!, csv.words[bad]!);
    checks.push({ check: "codes.csv words unpack to its codes", ok: bad < 0, detail: bad < 0 ? `${csv.words.length} rows` : `row ${bad + 2} disagrees with itself` });
  }
  for (const d of decoded) {
    if (!reference || d === reference) continue;
    let bad = -1;
    const n = Math.max(d.words.length, reference.words.length);
    for (let i = 0; i < n; i++) if (d.words[i] !== reference.words[i]) { bad = i; break; }
    if (bad >= 0) mismatch(d.file, bad, reference.words[bad] ?? -1, d.words[bad] ?? -1);
    const count = d.words.length === m.counts.words ? "" : ` (holds ${d.words.length} words, manifest says ${m.counts.words})`;
    checks.push({ check: `${d.file} = ${reference.file}`, ok: bad < 0, detail: bad < 0 ? `${d.words.length} words` : `first difference at frequency ${where(m, bad).frequency_hz} Hz, beam ${where(m, bad).beam}, element ${where(m, bad).element}${count}` });
  }
  // 3. recompute from the recorded scenario and inputs
  if (reference) {
    try {
      const loaded = loadBuildScenario(dir, m);
      const E = m.counts.elements;
      let bad = -1;
      let expected = -1;
      let k = 0;
      runTables(loaded.plan, (_fi, _b, words) => {
        if (bad < 0) for (let i = 0; i < E; i++) if (words[i] !== reference.words[k + i]) { bad = k + i; expected = words[i]!; break; }
        k += E;
      }, undefined, { commanded: false });
      if (k !== reference.words.length && bad < 0) bad = Math.min(k, reference.words.length);
      if (bad >= 0) mismatch(reference.file, bad, expected, reference.words[bad] ?? -1);
      const ver = m.tool.version === toolVersion() ? "" : ` (built by steercode ${m.tool.version}, checked with ${toolVersion()})`;
      checks.push({ check: `recomputed from ${m.scenario.copy} = ${reference.file}`, ok: bad < 0, detail: bad < 0 ? `${k} words${ver}` : `first difference at frequency ${where(m, bad).frequency_hz} Hz, beam ${where(m, bad).beam}, element ${where(m, bad).element}${ver}` });
    } catch (e) {
      checks.push({ check: `recompute from ${m.scenario.copy}`, ok: false, detail: e instanceof Error ? e.message : String(e) });
    }
  }
  return { ok: checks.every((c) => c.ok), checks, firstMismatch: first };
}
