import { execFileSync } from "node:child_process";
import { itWith, TOOLS } from "../tools.js";
import { readFileSync, readdirSync, writeFileSync, existsSync, mkdirSync } from "node:fs";
import { join } from "node:path";
import { parse } from "csv-parse/sync";
import { crc32 } from "node:zlib";
import { createHash } from "node:crypto";
import { describe, expect, it, beforeAll } from "vitest";
import { cli, tempDir } from "../helpers.js";

const DEMO = join(import.meta.dirname, "..", "..", "fixtures", "demo", "scenario.json");

function files(dir: string): Record<string, Buffer> {
  const out: Record<string, Buffer> = {};
  for (const f of readdirSync(dir, { recursive: true }) as string[]) {
    const p = join(dir, f);
    try { out[f] = readFileSync(p); } catch { /* folder */ }
  }
  return out;
}

describe("build on the demo", () => {
  let dir: string;
  let dir2: string;
  beforeAll(() => {
    const t = tempDir();
    dir = join(t, "a");
    dir2 = join(t, "b");
    expect(cli(["build", DEMO, "-o", dir, "--no-analysis"]).code).toBe(0);
    expect(cli(["build", DEMO, "-o", dir2, "--no-analysis"]).code).toBe(0);
  });

  it("two builds of the same inputs are byte-identical", () => {
    const a = files(dir);
    const b = files(dir2);
    expect(Object.keys(a).sort()).toEqual(Object.keys(b).sort());
    for (const k of Object.keys(a)) expect(a[k]!.equals(b[k]!), k).toBe(true);
  });

  it("manifest hashes and the table.bin CRC-32 match the files", () => {
    const m = JSON.parse(readFileSync(join(dir, "manifest.json"), "utf8"));
    for (const [name, f] of Object.entries(m.files as Record<string, { sha256: string; bytes: number; crc32?: string }>)) {
      const data = readFileSync(join(dir, name));
      expect(createHash("sha256").update(data).digest("hex"), name).toBe(f.sha256);
      expect(data.length).toBe(f.bytes);
    }
    const bin = readFileSync(join(dir, "table.bin"));
    expect(m.files["table.bin"].crc32).toBe("0x" + (crc32(bin) >>> 0).toString(16).toUpperCase().padStart(8, "0"));
    expect(m.calibration.comments[0]).toMatch(/INVENTED/);
  });

  it("table.bin, table.mem, table.json and codes.csv hold the same words; words unpack to the codes", () => {
    const m = JSON.parse(readFileSync(join(dir, "manifest.json"), "utf8"));
    const bin = readFileSync(join(dir, "table.bin"));
    const words: number[] = [];
    for (let i = 0; i < bin.length; i += 2) words.push(bin.readUInt16LE(i));
    expect(words.length).toBe(m.counts.words);
    // $readmemh: whitespace-separated hex words with // comments (IEEE 1364-2005 §17.2.9)
    const memText = readFileSync(join(dir, "table.mem"), "utf8");
    const mem = memText.split("\n").filter((l) => l && !l.startsWith("//")).map((l) => parseInt(l, 16));
    // issue 8 item 8 (common practice: English plural): the demo has one frequency
    expect(m.counts.frequencies).toBe(1);
    expect(memText.split("\n")[0]).toBe(`// steercode beam table for $readmemh: 1 frequency x ${m.counts.beams} beams x ${m.counts.elements} elements, ${m.layout.bits}-bit words`);
    expect(mem).toEqual(words);
    const json = JSON.parse(readFileSync(join(dir, "table.json"), "utf8"));
    expect(json.format).toBe("steercode-table/1");
    expect(json.words.flat(2)).toEqual(words);
    const rows = parse(readFileSync(join(dir, "codes.csv")), { columns: true }) as Record<string, string>[];
    expect(rows.length).toBe(words.length);
    rows.forEach((r, i) => {
      expect(Number(r.word)).toBe(words[i]);
      const w = words[i]!;
      if (r.element === "37") expect(w).toBe(0); // disabled → off word
      else {
        expect(w & 0x3f).toBe(Number(r.phase_code));
        expect((w >> 8) & 0x3f).toBe(Number(r.atten_code));
        expect(w >> 15).toBe(1); // constant enable field
      }
    });
  });

  itWith([TOOLS.gcc], "table.h compiles clean with gcc -std=c99 -Wall -Wextra -pedantic -Werror and its words and CRC match table.bin", () => {
    const t = tempDir();
    const c = `#define STEERCODE_TABLE_IMPLEMENTATION
#include "table.h"
#include <stdio.h>
int main(void) {
  const unsigned char *p = (const unsigned char *)steercode_table;
  unsigned long n = sizeof steercode_table, i; unsigned long crc = 0xFFFFFFFFul; int k;
  for (i = 0; i < n; i++) { crc ^= p[i]; for (k = 0; k < 8; k++) crc = (crc >> 1) ^ (0xEDB88320ul & (0ul - (crc & 1ul))); }
  crc ^= 0xFFFFFFFFul;
  printf("%lu %lu %u\\n", crc, (unsigned long)STEERCODE_TABLE_CRC32, (unsigned)steercode_table[0][1][2]);
  return crc == STEERCODE_TABLE_CRC32 ? 0 : 1;
}
`;
    writeFileSync(join(t, "main.c"), c);
    writeFileSync(join(t, "other.c"), '#include "table.h"\nunsigned long steercode_count(void) { return STEERCODE_BEAMS; }\n');
    execFileSync("gcc", ["-std=c99", "-Wall", "-Wextra", "-pedantic", "-Werror", "-I", dir, "-o", join(t, "a.out"), join(t, "main.c"), join(t, "other.c")]);
    const out = execFileSync(join(t, "a.out"), { encoding: "utf8" }).trim().split(" ").map(Number);
    expect(out[0]).toBe(out[1]);
    const bin = readFileSync(join(dir, "table.bin"));
    expect(out[2]).toBe(bin.readUInt16LE((1 * 256 + 2) * 2));
  });

  it("the inputs are copied into the folder", () => {
    expect(readFileSync(join(dir, "inputs", "scenario.json")).equals(readFileSync(DEMO))).toBe(true);
    expect(existsSync(join(dir, "inputs", "calibration.csv"))).toBe(true);
  });

  it("refuses to overwrite a folder steercode did not write, and writes nothing", () => {
    const t = tempDir();
    const target = join(t, "precious");
    mkdirSync(target);
    writeFileSync(join(target, "notes.txt"), "mine");
    const r = cli(["build", DEMO, "-o", target]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/not written by steercode/);
    expect(readdirSync(target)).toEqual(["notes.txt"]);
    expect(readdirSync(t)).toEqual(["precious"]);
  });

  it("replaces an earlier steercode build in place", () => {
    const t = tempDir();
    const target = join(t, "out");
    expect(cli(["build", DEMO, "-o", target, "--no-analysis"]).code).toBe(0);
    expect(cli(["build", DEMO, "-o", target, "--no-analysis"]).code).toBe(0);
    expect(readdirSync(t)).toEqual(["out"]);
  });
});

describe("analysis in workers", () => {
  it("gives exactly the metrics of the in-process analysis", async () => {
    const { loadScenario } = await import("../../src/io/scenario.js");
    const { runBuild } = await import("../../src/io/build.js");
    const t = tempDir();
    const L = loadScenario(DEMO);
    const a = await runBuild(L, join(t, "a"), { analysis: true, jobs: 1 });
    // the workers started at once, and after three chunks of the main thread (the measured decision's switch)
    for (const [k, after] of [[0, 0], [1, 3]] as const) {
      const threads = { spawnAfterChunks: after, stats: { workers: 0, workerBeams: 0 } };
      const b = await runBuild(L, join(t, `b${k}`), { analysis: true, jobs: 3, threadsForTest: threads });
      expect(threads.stats.workers).toBe(2);
      expect(Array.from(b.metrics!)).toEqual(Array.from(a.metrics!));
      for (const f of ["beams.csv", "table.bin", "codes.csv", "table.json"]) expect(readFileSync(join(t, `b${k}`, f)).equals(readFileSync(join(t, "a", f))), f).toBe(true);
    }
  });
});
