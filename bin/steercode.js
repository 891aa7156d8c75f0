#!/usr/bin/env node
// CommonJS (bin/package.json): no ES module loader at start (scripts/bundle-cli.mjs).
const { setFlagsFromString } = require("node:v8");
// Memory flat in beams: V8 doubles its young generation as a long run's survivors add up
// (+23 MB peak at 16 384 beams); the command keeps it at its start size, at no measured
// cost in time (DEVELOPERS.md, "Memory"). The library leaves its caller's heap alone.
// (Set before the bundle is compiled: V8's code cache is checked against the flags.)
setFlagsFromString("--semi-space-growth-factor=1");
// the command line bundled into one CommonJS file, with its V8 code cache (load-bundle.js)
const { join } = require("node:path");
const { exports: bundle, status } = require("./load-bundle.js").loadBundle(join(__dirname, "..", "dist", "cli-bundle", "main.js"));
if (process.env.STEERCODE_DEBUG) process.stderr.write(`steercode: debug: code cache ${status}\n`);

// a reader that stops early (steercode diff A B | head) is not an error
process.stdout.on("error", (e) => {
  if (e.code === "EPIPE") process.exit(process.exitCode ?? 0);
  throw e;
});
bundle.main(process.argv.slice(2)).then((code) => {
  process.exitCode = code;
});
