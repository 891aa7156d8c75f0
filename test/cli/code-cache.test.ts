/**
 * The command's V8 code cache (bin/load-bundle.js, scripts/code-cache.cjs): used when it
 * was made for these bytes by this V8, ignored otherwise, and the command's results never
 * depend on it. Derived checks of our own loader (no outside reference applies). Each load
 * is a fresh process: V8 keeps what an isolate compiled and would not read the file twice.
 */
import { spawnSync } from "node:child_process";
import { readFileSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { tempDir } from "../helpers.js";

const ROOT = join(import.meta.dirname, "..", "..");
const BIN = join(ROOT, "bin", "steercode.js");
const LOADER = join(ROOT, "bin", "load-bundle.js");
const DEMO = join(ROOT, "fixtures", "demo", "scenario.json");

/** A tiny CommonJS "bundle" whose exports show which source ran. */
const bundleSource = (v: number) => `module.exports = { v: ${v}, f() { return ${v} * 10 + 2; }, name: require("node:path").basename(__filename) };\n`;

/** Loads `file` in a fresh Node process (writing its cache if `write`); what ran and the cache status. */
function load(file: string, write = false): { status: string; v: number; f: number; name: string } {
  const script = `const r = require(${JSON.stringify(LOADER)}).loadBundle(${JSON.stringify(file)});
${write ? `require("node:fs").writeFileSync(${JSON.stringify(file + ".cache")}, Buffer.concat([r.cacheHeader(), r.script.createCachedData()]));` : ""}
process.stdout.write(JSON.stringify({ status: r.status, v: r.exports.v, f: r.exports.f(), name: r.exports.name }));`;
  const p = spawnSync(process.execPath, ["-e", script], { encoding: "utf8" });
  expect(p.status, p.stderr).toBe(0);
  return JSON.parse(p.stdout) as { status: string; v: number; f: number; name: string };
}

function withCache(v: number): string {
  const file = join(tempDir("steercode-cc-"), "main.js");
  writeFileSync(file, bundleSource(v));
  expect(load(file, true)).toEqual({ status: "none", v, f: v * 10 + 2, name: "main.js" });
  return file;
}

describe("code cache of the command's bundle", () => {
  it("is used for the bytes it was made for; the module runs as under require (exports, require, __filename)", () => {
    const file = withCache(1);
    expect(load(file)).toEqual({ status: "used", v: 1, f: 12, name: "main.js" });
  });

  it("is not used for other bytes of the same length (V8 alone identifies a source by its length)", () => {
    const file = withCache(1);
    const edited = bundleSource(7);
    expect(edited.length).toBe(bundleSource(1).length);
    writeFileSync(file, edited);
    expect(load(file)).toEqual({ status: "stale", v: 7, f: 72, name: "main.js" });
  });

  it("that V8 refuses (here: damaged data under a matching header) is ignored", () => {
    const file = withCache(3);
    const c = readFileSync(file + ".cache");
    c.fill(0x5a, 12);
    writeFileSync(file + ".cache", c);
    expect(load(file)).toEqual({ status: "rejected", v: 3, f: 32, name: "main.js" });
  });

  it("the build made one that the command uses, and a command's output is the same without it", () => {
    const a = spawnSync(process.execPath, [BIN, "check", DEMO], { encoding: "utf8", env: { ...process.env, STEERCODE_DEBUG: "1", NO_COLOR: "1" } });
    expect(a.status).toBe(0);
    expect(a.stderr).toContain("code cache used");
    const bundle = join(ROOT, "dist", "cli-bundle", "main.js");
    const script = `const r = require(${JSON.stringify(LOADER)}).loadBundle(${JSON.stringify(bundle)}, false); process.stderr.write("status " + r.status + "\\n"); r.exports.main(["check", ${JSON.stringify(DEMO)}]).then((c) => { process.exitCode = c; });`;
    const b = spawnSync(process.execPath, ["-e", script], { encoding: "utf8", env: { ...process.env, NO_COLOR: "1" } });
    expect(b.stderr).toContain("status none");
    expect(b.status).toBe(0);
    expect(b.stdout).toBe(a.stdout);
  });
});
