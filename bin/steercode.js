#!/usr/bin/env node
// CommonJS (bin/package.json): no ES module loader at start (scripts/bundle-cli.mjs).
// the command line bundled into one CommonJS file, with its V8 code cache (load-bundle.js);
// the command's V8 flags first: the cache is checked against them
const { loadBundle, setCommandFlags } = require("./load-bundle.js");
setCommandFlags();
const { join } = require("node:path");
const { exports: bundle, status } = loadBundle(join(__dirname, "..", "dist", "cli-bundle", "main.js"));
if (process.env.STEERCODE_DEBUG) process.stderr.write(`steercode: debug: code cache ${status}\n`);

// a reader that stops early (steercode diff A B | head) is not an error
process.stdout.on("error", (e) => {
  if (e.code === "EPIPE") process.exit(process.exitCode ?? 0);
  throw e;
});
bundle.main(process.argv.slice(2)).then((code) => {
  process.exitCode = code;
});
