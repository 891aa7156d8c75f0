// Build step (run by scripts/bundle-cli.mjs after bundling): the V8 code cache of the
// command's bundle, dist/cli-bundle/main.js.cache, which bin/load-bundle.js hands to V8.
// V8 caches the functions compiled when the cache is taken, so this process loads the
// bundle exactly as bin/steercode.js does (same V8 flags: the cache is checked against
// them), runs the commands of an ordinary session on the demo (check, build with every
// format and the analysis, diff, verify, report) and then writes the cache. sweep and
// calibrate are left out: V8 reads the whole cache at every start, and their code (~100 KB
// more cache) would slow every build to spare a sweep a few ms.
"use strict";
const { mkdtempSync, renameSync, rmSync, writeFileSync } = require("node:fs");
const { tmpdir } = require("node:os");
const { join } = require("node:path");

const root = join(__dirname, "..");
const file = join(root, "dist", "cli-bundle", "main.js");
const { loadBundle, setCommandFlags } = require(join(root, "bin", "load-bundle.js"));
setCommandFlags(); // as bin/steercode.js
const { exports: bundle, script, cacheHeader } = loadBundle(file);

async function train() {
  const demo = join(root, "fixtures", "demo", "scenario.json");
  const tmp = mkdtempSync(join(tmpdir(), "steercode-code-cache-"));
  try {
    const out = join(tmp, "build");
    const sessions = [["check", demo], ["build", demo, "-o", out, "--jobs", "1"], ["diff", out, out], ["verify", out, "--jobs", "1"], ["report", out, "-o", join(tmp, "report.html")]];
    for (const argv of sessions) {
      const code = await bundle.main(argv);
      if (code !== 0) throw new Error(`code cache: steercode ${argv[0]} exited ${code}`);
    }
  } finally {
    rmSync(tmp, { recursive: true, force: true });
  }
  // written whole or not at all (a cut file would only be refused by V8, but needs no test)
  writeFileSync(file + ".cache.tmp", Buffer.concat([cacheHeader(), script.createCachedData()]));
  renameSync(file + ".cache.tmp", file + ".cache");
}

rmSync(file + ".cache", { force: true }); // no stale cache if this fails
train().catch((e) => {
  process.stderr.write(String(e?.stack ?? e) + "\n");
  process.exit(1);
});
