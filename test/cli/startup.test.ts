/**
 * What a run loads: an ordinary command line must not load yargs' help machinery, ajv,
 * csv-parse or cli-progress (they are loaded on demand); help still goes through yargs.
 * Checked by the modules the built command loads (a hook on CommonJS resolution, the
 * command being CommonJS, and an ES module loader hook for anything imported), not by time.
 */
import { spawnSync } from "node:child_process";
import { readFileSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { pathToFileURL } from "node:url";
import { describe, expect, it } from "vitest";
import { tempDir } from "../helpers.js";

const ROOT = join(import.meta.dirname, "..", "..");
const BIN = join(ROOT, "bin", "steercode.js");
const DEMO = join(ROOT, "fixtures", "demo", "scenario.json");

/** The packages (node_modules/<name>) the command loads for `args`, its exit code. */
function packagesLoaded(args: string[]): { code: number; packages: Set<string> } {
  const d = tempDir("steercode-startup-");
  const trace = join(d, "loaded.txt");
  writeFileSync(trace, "");
  writeFileSync(join(d, "hooks.mjs"), `import { appendFileSync } from "node:fs";\nexport async function load(url, context, next) { appendFileSync(${JSON.stringify(trace)}, url + "\\n"); return next(url, context); }\n`);
  writeFileSync(join(d, "register.mjs"), `import { register } from "node:module";\nregister(${JSON.stringify(pathToFileURL(join(d, "hooks.mjs")).href)});\n`);
  writeFileSync(
    join(d, "require.cjs"),
    `const Module = require("node:module"), { appendFileSync } = require("node:fs");\nconst resolve = Module._resolveFilename;\nModule._resolveFilename = function (...a) { const f = resolve.apply(this, a); appendFileSync(${JSON.stringify(trace)}, f + "\\n"); return f; };\n`,
  );
  const r = spawnSync(process.execPath, ["--require", join(d, "require.cjs"), "--import", pathToFileURL(join(d, "register.mjs")).href, BIN, ...args], { cwd: d, encoding: "utf8", env: { ...process.env, NO_COLOR: "1" } });
  // CommonJS requires show as the files they resolve to, ES module imports as their URLs
  const urls = readFileSync(trace, "utf8").split("\n").filter(Boolean);
  // the standalone validator's two runtime helpers (node_modules/ajv/dist/runtime/) are not ajv's compiler
  const packages = new Set(urls.map((u) => (/node_modules\/ajv\/dist\/runtime\//.test(u) ? "ajv/dist/runtime" : /node_modules\/((?:@[^/]+\/)?[^/]+)\//.exec(u)?.[1])).filter((p): p is string => !!p));
  return { code: r.status ?? -1, packages };
}

describe("start-up: a command loads what it needs", () => {
  // derived: the lazy loading DEVELOPERS.md describes ("Start-up: load only what the command line needs")
  it("--version and check load neither yargs, ajv, csv-parse nor cli-progress", () => {
    const v = packagesLoaded(["--version"]);
    expect(v.code).toBe(0);
    expect([...v.packages]).toEqual([]);
    const c = packagesLoaded(["check", DEMO]);
    expect(c.code).toBe(0);
    for (const p of ["yargs", "cliui", "y18n", "ajv", "csv-parse", "cli-progress", "safe-stable-stringify"]) expect(c.packages.has(p), p).toBe(false);
  });

  it("help and a usage error still go through yargs", () => {
    const h = packagesLoaded(["help", "build"]);
    expect(h.code).toBe(0);
    expect(h.packages.has("yargs")).toBe(true);
    const u = packagesLoaded(["buidl", DEMO]);
    expect(u.code).toBe(2);
    expect(u.packages.has("yargs")).toBe(true);
  });
});
