/**
 * The package as a user gets it: `npm pack`, install the tarball into an empty project,
 * type-check README's "Use from code" example against the shipped .d.ts with tsc, run it.
 * (The global set-up has already compiled dist/.)
 */
import { execFileSync } from "node:child_process";
import { existsSync, mkdirSync, readFileSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { baseScenario, tempDir, writeScenario } from "../helpers.js";

const ROOT = join(import.meta.dirname, "..", "..");

function readmeExample(): string {
  const readme = readFileSync(join(ROOT, "README.md"), "utf8");
  const section = readme.split("\n## Use from code\n")[1]?.split("\n## ")[0];
  const m = section ? /```ts\n([\s\S]*?)```/.exec(section) : null;
  if (!m) throw new Error("README.md has no ```ts block under ## Use from code");
  return m[1]!;
}

describe("steercode as a package", () => {
  const t = tempDir("steercode-pack-");
  let tarball = "";

  it("npm pack holds README, schemas, dist with types and the demo, and no tests", () => {
    const out = execFileSync("npm", ["pack", "--ignore-scripts", "--json", "--pack-destination", t], { cwd: ROOT, encoding: "utf8" });
    const [info] = JSON.parse(out) as { filename: string; size: number; files: { path: string }[] }[];
    const files = info!.files.map((f) => f.path);
    for (const f of ["README.md", "package.json", "bin/steercode.js", "bin/package.json", "dist/index.js", "dist/index.d.ts", "dist/cli-bundle/main.js", "dist/cli-bundle/analysis-worker.js", "dist/cli-bundle/package.json", "dist/io/scenario-validate.cjs", "dist/report/explorer.js", "schemas/scenario.schema.json", "fixtures/demo/scenario.json"]) expect(files, f).toContain(f);
    expect(files.filter((f) => /^(test|bench|src)\//.test(f) || /\.test\./.test(f))).toEqual([]);
    // the library (dist/) and the command's bundle of the same code (dist/cli-bundle/, readable,
    // not minified, the worker with its own copy of the analysis: scripts/bundle-cli.mjs) were
    // ~600 KB packed on 2026-12-02, 652 KB that evening (the strict option readers, the
    // horizon and flood fixes, README), 701 KB on 2026-12-03 evening (the non-uniform FFT,
    // the horizon's Bessel series, README); the bound catches tests, fixtures or build
    // leftovers shipped by mistake (the largest: test fixtures ~1 MB, bench results)
    expect(info!.size).toBeLessThan(760_000);
    tarball = join(t, info!.filename);
  });

  it("installs into an empty project; the README example type-checks with tsc and runs", () => {
    expect(tarball).not.toBe("");
    const proj = join(t, "user");
    mkdirSync(proj);
    writeFileSync(join(proj, "package.json"), JSON.stringify({ name: "user", private: true, type: "module" }));
    execFileSync("npm", ["install", "--no-audit", "--no-fund", "--prefer-offline", "--loglevel=error", tarball], { cwd: proj, stdio: "pipe" });
    // the root export and its types; internals are not importable
    const pkg = JSON.parse(readFileSync(join(proj, "node_modules", "steercode", "package.json"), "utf8")) as { exports: Record<string, unknown> };
    expect(Object.keys(pkg.exports).sort()).toEqual([".", "./package.json"]);
    writeFileSync(join(proj, "example.ts"), readmeExample());
    writeFileSync(
      join(proj, "tsconfig.json"),
      JSON.stringify({
        compilerOptions: { target: "ES2022", module: "nodenext", moduleResolution: "nodenext", strict: true, noUncheckedIndexedAccess: true, exactOptionalPropertyTypes: true, skipLibCheck: false, typeRoots: [join(ROOT, "node_modules", "@types")], types: ["node"], outDir: "out" },
        files: ["example.ts"],
      }),
    );
    execFileSync(process.execPath, [join(ROOT, "node_modules", "typescript", "bin", "tsc"), "-p", "."], { cwd: proj, stdio: "pipe" });
    const run = execFileSync(process.execPath, [join("out", "example.js")], { cwd: proj, encoding: "utf8" });
    expect(run).toMatch(/^beam 40: 256 words, first [0-9a-f]+, phase codes \d+ \d+ \d+ \d+$/m);
    expect(run).toMatch(/pointing error \d+\.\d{4} deg, PSL -\d+\.\d\d dB/);
    expect(run).toMatch(/^34048 words in the whole table$/m); // 133 beams × 256 elements
    expect(run).toMatch(/table\.bin CRC-32 0x[0-9A-F]{8}, verify ok: true/);
    // a deep import into internals is refused by the exports map
    writeFileSync(join(proj, "deep.mjs"), 'import("steercode/dist/core/engine.js").then(() => console.log("imported"), (e) => console.log(e.code));\n');
    expect(execFileSync(process.execPath, ["deep.mjs"], { cwd: proj, encoding: "utf8" }).trim()).toBe("ERR_PACKAGE_PATH_NOT_EXPORTED");
  }, 180_000);
});

describe("library API", () => {
  it("validateScenario returns every problem as a value; loadScenario throws them as one InputError", async () => {
    const lib = await import("../../src/index.js");
    const dir = tempDir();
    const p = join(dir, "s.json");
    writeFileSync(p, JSON.stringify({ format: "steercode-scenario/1", name: "x", frequency: "10 GHz" }));
    const r = lib.validateScenario(p);
    expect(r.ok).toBe(false);
    expect(r.problems.length).toBeGreaterThan(1);
    expect(r.problems.every((q) => q.file === p)).toBe(true);
    expect(() => lib.loadScenario(p)).toThrow(lib.InputError);
  });

  it("beamTable and tables agree with a build's table.bin word for word; analyzeBeam matches beams.csv", async () => {
    const lib = await import("../../src/index.js");
    const s = lib.loadScenario(join(ROOT, "fixtures", "demo", "scenario.json"));
    const out = join(tempDir(), "b");
    const { manifest } = await lib.build(s, out, { analysis: true });
    const bin = readFileSync(join(out, "table.bin"));
    const E = s.elementIds.length, wb = manifest.layout.bytes;
    let i = 0;
    for (const b of lib.tables(s)) {
      for (let e = 0; e < E; e++, i++) expect(b.word[e]).toBe(bin.readUIntLE(i * wb, wb));
    }
    expect(i * wb).toBe(bin.length);
    const one = lib.beamTable(s, { frequency: 0, beam: 77 });
    expect(Array.from(one.word)).toEqual(Array.from({ length: E }, (_, e) => bin.readUIntLE((77 * E + e) * wb, wb)));
    expect(lib.unpack(s, one.word[3]!)).toEqual({ phaseCode: one.phaseCode[3], attenCode: one.attenCode[3] });
    const row = readFileSync(join(out, "beams.csv"), "utf8").trim().split("\n")[1 + 77]!.split(",");
    const m = lib.analyzeBeam(s, { frequency: 0, beam: 77 });
    expect(m.pointingErrorDeg).toBeCloseTo(Number(row[8]), 5);
    expect(m.pslDb!).toBeCloseTo(Number(row[10]), 3);
    expect(m.gainLossDb).toBeCloseTo(Number(row[12]), 3);
    expect(() => lib.beamTable(s, { frequency: 1, beam: 0 })).toThrow(/frequency index 1: expected a whole number from 0 to 0/);
    expect((await lib.verifyBuild(out)).ok).toBe(true);
  });

  // these came back as garbage or as a TypeError/Error instead of an InputError or { ok: false }:
  // unpack(−1) gave codes 63/63, unpack(2^40) and unpack(NaN) 0/0; calibrationAt(NaN or −1 Hz) served the calibration;
  // calibrate with an unknown method was a TypeError, with a NaN probe "non-finite value NaN in an output", az 200° was taken
  it("refuses what the command line would: words the layout cannot hold, frequencies out of range, bad methods and probes", async () => {
    const lib = await import("../../src/index.js");
    const demo = join(ROOT, "fixtures", "demo");
    const s = lib.loadScenario(join(demo, "scenario.json"));
    for (const w of [-1, 2 ** 16, 2 ** 40, NaN, 1.5]) expect(() => lib.unpack(s, w)).toThrow(lib.InputError);
    // the demo's 16-bit layout: phase bits 0…5, atten bits 8…13 (fixtures/demo/scenario.json)
    expect(lib.unpack(s, 0xffff)).toEqual({ phaseCode: 63, attenCode: 63 });
    for (const f of [NaN, -1, 0, 1e30, Infinity, "abc"]) expect(lib.calibrationAt(s, f).ok).toBe(false);
    expect(lib.calibrationAt(s, "28e9").ok).toBe(true);
    expect(() => lib.beamTable(s, undefined as never)).toThrow(lib.InputError);
    const base = { scenario: join(demo, "scenario.json"), data: join(ROOT, "fixtures", "demo", "range-rev-1.csv") };
    expect(() => lib.calibrate({ ...base, method: "zzz" as never, probe: { kind: "far", azDeg: 0, elDeg: 0 } })).toThrow(/method zzz: expected "rev" or "field"/);
    expect(() => lib.calibrate({ ...base, method: "rev", probe: { kind: "near", x: NaN, y: 0, z: 1 } })).toThrow(lib.InputError);
    expect(() => lib.calibrate({ ...base, method: "rev", probe: { kind: "far", azDeg: 200, elDeg: 0 } })).toThrow(/expected \|az\| and \|el\| ≤ 90 degrees/);
  });

  // build() and verifyBuild() took jobs 0, −3, NaN and 1e9 (one thread, or up to 1e9 − 1 workers allowed) and
  // failed on 1.5 with a RangeError from deep inside the analysis pool; --jobs takes a whole number from 1 to 256
  it("build and verifyBuild refuse jobs that --jobs would refuse, before writing anything", async () => {
    const lib = await import("../../src/index.js");
    const s = lib.loadScenario(writeScenario(baseScenario()));
    const t = tempDir();
    for (const jobs of [0, -3, NaN, Infinity, 1.5, 257, 1e9, "2" as never]) {
      const out = join(t, `out-${String(jobs)}`);
      await expect(lib.build(s, out, { jobs })).rejects.toThrow(lib.InputError);
      await expect(lib.build(s, out, { jobs })).rejects.toThrow(/jobs .*: expected a whole number from 1 to 256/);
      expect(existsSync(out)).toBe(false);
    }
    const ok = join(t, "ok");
    await lib.build(s, ok, { jobs: 256 }); // more than the cores: cut to the cores, as --jobs is
    expect((await lib.verifyBuild(ok, { jobs: 1 })).ok).toBe(true);
    for (const jobs of [0, NaN, 2.5]) await expect(lib.verifyBuild(ok, { jobs })).rejects.toThrow(/jobs .*: expected a whole number from 1 to 256/);
  });
});
