// Build step (npm run build / prepare), after tsc, compile-schema and bundle-report: the
// command line as two CommonJS files, dist/cli-bundle/main.js and analysis-worker.js,
// which bin/steercode.js runs.
//
// Why a bundle: an ordinary build loaded ~65 of our ES modules and ~25 files of small
// packages one by one; Node's ES module loader resolves, reads and links each, and that
// cost ~30 ms of every run (measured: `build --no-analysis` of 16×16 × 441 beams, 15
// interleaved runs, 263 → 234 ms median; DEVELOPERS.md, "Start-up"). esbuild (already a
// devDependency for the report page) bundles the compiled dist/ JavaScript, so what runs
// is what tsc emitted.
//
// Why CommonJS: Node's ES module loader itself (its resolver, translators and the
// fs/promises, readline and stream modules it loads), and the import of a built-in module
// as an ES module (it evaluates every lazy export: `node:crypto` loads webcrypto,
// `node:module` the source-map support) cost ~20–30 ms of CPU a run beyond `require`
// (DEVELOPERS.md, "Start-up"). A `package.json` of `{"type":"commonjs"}` beside the two
// files (and in bin/) makes Node read them as CommonJS under their .js names. Each
// `import()` of the sources becomes a lazily run module inside the file (esbuild's
// wrappers), so a command still runs only what it needs; the file is parsed whole.
//
// Layout: dist/cli-bundle/ sits at the same depth as dist/io/ and dist/report/, so the
// modules' `new URL("../../…", import.meta.url)` paths (schemas, package.json, demo)
// resolve as before (import.meta.url is defined as the bundle file's URL), and so do
// those that name their own folder on the way (schema.ts: "../io/scenario-validate.cjs",
// page.ts: "../report/explorer.js"); the analysis worker, opened as
// "./analysis-worker.js" beside the pool, is the second entry point here (it carries its
// own copy of the analysis code). The library (dist/index.js) is not bundled.
//
// Whitespace and comments are left out (minifyWhitespace; names are kept): 894 → 632 KB for
// main.js, and no character outside ASCII is left (esbuild escapes them in strings; some
// comments kept them), so Node reads the source as a one-byte string. `--version`, `check`
// and `build --no-analysis` start 8–12 ms sooner (fastest of 11–21 interleaved runs; the
// machine's times jumped by ~35 ms between runs, so medians did not show it).
//
// The standalone validator (dist/io/scenario-validate.cjs) is bundled too (the
// validatorInBundle plugin), so that its compiled code is in the code cache.
//
// `node:module` is replaced by scripts/cjs-shims/module.js: createRequire is the bundle's
// own require, and Node's "module" built-in, which loads the ES module loader when
// required, is never loaded.
//
// External (loaded from node_modules as they are, through their CommonJS entries): the
// packages loaded on demand (yargs, ajv, csv-parse, cli-progress, safe-stable-stringify),
// so that test/cli/startup.test.ts still sees which packages a command loads. yargs-parser,
// which every run's fast path uses, is bundled: requiring a package that declares
// "exports" makes Node load its ES module resolver (~25 internal modules).
import { spawnSync } from "node:child_process";
import { mkdirSync, rmSync, writeFileSync } from "node:fs";
import { fileURLToPath } from "node:url";

const dist = (p) => fileURLToPath(new URL(`../dist/${p}`, import.meta.url));

/**
 * schema.ts opens the standalone validator with createRequire (it is absent when running
 * from source); esbuild sees no require there, so this plugin turns that one call into a
 * plain require, which bundles dist/io/scenario-validate.cjs and its ajv runtime helpers
 * into main.js (and so into its code cache). It fails the build if the call is not found.
 */
const validatorInBundle = {
  name: "validator-in-bundle",
  setup(b) {
    b.onLoad({ filter: /[\\/]dist[\\/]io[\\/]schema\.js$/ }, async (args) => {
      const { readFile } = await import("node:fs/promises");
      const call = 'createRequire(import.meta.url)("../io/scenario-validate.cjs")';
      const text = await readFile(args.path, "utf8");
      if (!text.includes(call)) throw new Error(`bundle-cli: ${args.path} no longer contains ${call}`);
      return { contents: text.replace(call, 'require("../io/scenario-validate.cjs")'), loader: "js" };
    });
  },
};

export async function bundleCli() {
  const { build } = await import("esbuild");
  const out = dist("cli-bundle");
  rmSync(out, { recursive: true, force: true });
  mkdirSync(out, { recursive: true });
  await build({
    entryPoints: { main: dist("cli/main.js"), "analysis-worker": dist("io/analysis-worker.js") },
    bundle: true,
    format: "cjs",
    platform: "node",
    target: "node20",
    outdir: out,
    define: { "import.meta.url": "__bundle_url" },
    alias: { "node:module": fileURLToPath(new URL("./cjs-shims/module.js", import.meta.url)) },
    plugins: [validatorInBundle],
    banner: { js: 'const __bundle_url = require("node:url").pathToFileURL(__filename).href;' },
    external: ["yargs", "yargs/*", "ajv/dist/2020.js", "csv-parse", "csv-parse/*", "cli-progress", "safe-stable-stringify"],
    legalComments: "inline",
    minifyWhitespace: true,
    logLevel: "warning",
  });
  writeFileSync(`${out}/package.json`, JSON.stringify({ type: "commonjs" }) + "\n");
  // the code cache fits only the Node version that made it: made where steercode is built
  // (npm ci, npm run build), left out of the npm package
  writeFileSync(`${out}/.npmignore`, "*.cache\n");
}

/**
 * The bundle's V8 code cache (scripts/code-cache.cjs), made in a child process with its
 * output discarded. Not fatal: the command runs without it (a little slower to start), so
 * a machine where the demo session cannot run (no temporary folder, say) still installs;
 * test/cli/code-cache.test.ts fails when the cache is missing.
 */
export function codeCache() {
  const r = spawnSync(process.execPath, [fileURLToPath(new URL("./code-cache.cjs", import.meta.url))], { stdio: ["ignore", "ignore", "pipe"], encoding: "utf8" });
  if (r.status !== 0) process.stderr.write(`bundle-cli: warning: no code cache (scripts/code-cache.cjs exited ${r.status}): ${r.stderr}\n`);
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  await bundleCli();
  codeCache();
}
