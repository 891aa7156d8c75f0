// Build step (npm run build / prepare), after tsc, compile-schema and bundle-report: the
// command line as a few files, dist/cli-bundle/, which bin/steercode.js runs.
//
// Why: an ordinary build loaded ~65 of our ES modules and ~25 files of small packages one
// by one; Node's ES module loader resolves, reads and links each, and that cost ~30 ms of
// every run (measured: `build --no-analysis` of 16×16 × 441 beams, 15 interleaved runs,
// 263 → 234 ms median; DEVELOPERS.md, "Start-up"). esbuild (already a devDependency for
// the report page) bundles the compiled dist/ JavaScript, so what runs is what tsc
// emitted; code splitting keeps every dynamic import() a separate file, so a command
// still loads only what it needs.
//
// Layout: dist/cli-bundle/ sits at the same depth as dist/io/ and dist/report/, so the
// modules' `new URL("../../…", import.meta.url)` paths (schemas, package.json, demo)
// resolve as before, and so do those that name their own folder on the way (schema.ts:
// "../io/scenario-validate.cjs", page.ts: "../report/explorer.js"); the analysis worker,
// opened as "./analysis-worker.js" beside the pool, is a second entry point here. The
// library (dist/index.js) is not bundled.
//
// External (loaded from node_modules as they are): the packages loaded on demand through
// import() or createRequire (yargs, ajv, csv-parse, cli-progress, safe-stable-stringify)
// and yargs-parser, so that test/cli/startup.test.ts still sees which packages a command
// loads.
import { mkdirSync, rmSync } from "node:fs";
import { fileURLToPath } from "node:url";

const dist = (p) => fileURLToPath(new URL(`../dist/${p}`, import.meta.url));

export async function bundleCli() {
  const { build } = await import("esbuild");
  const out = dist("cli-bundle");
  rmSync(out, { recursive: true, force: true });
  mkdirSync(out, { recursive: true });
  await build({
    entryPoints: { main: dist("cli/main.js"), "analysis-worker": dist("io/analysis-worker.js") },
    bundle: true,
    splitting: true,
    format: "esm",
    platform: "node",
    target: "node20",
    outdir: out,
    chunkNames: "chunk-[hash]",
    external: ["yargs", "yargs/*", "yargs-parser", "ajv", "ajv/*", "csv-parse", "csv-parse/*", "cli-progress", "safe-stable-stringify", "*.cjs"],
    legalComments: "inline",
    logLevel: "warning",
  });
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) await bundleCli();
