// Loads the command's CommonJS bundle (dist/cli-bundle/main.js) with the V8 code cache
// that the build made beside it (main.js.cache, scripts/code-cache.cjs): the functions a
// command runs are then deserialised instead of parsed and compiled at every start
// (DEVELOPERS.md, "Start-up"). Without a cache, or with one made for other bytes or by
// another V8 (a different Node version, other V8 flags), the bundle is compiled as usual.
//
// The cache file is a 12-byte header (magic "SCC1", the source file's length in bytes and
// their CRC-32, both uint32 little-endian) and V8's cached data. V8 itself checks
// its version and flags but identifies the source by its length only, so the CRC-32 of the
// bytes is checked here before V8 is given the cache.
"use strict";
const { readFileSync } = require("node:fs");
const { dirname } = require("node:path");
const { Script } = require("node:vm");

const MAGIC = 0x31434353; // "SCC1"

/**
 * The command's V8 flags, set before the bundle is compiled, by bin/steercode.js and by
 * scripts/code-cache.cjs alike (V8 refuses a code cache made under other flags).
 * Memory flat in beams: V8 doubles its young generation as a long run's survivors add up
 * (+23 MB peak at 16 384 beams); the command keeps it at its start size, at no measured
 * cost in time (DEVELOPERS.md, "Memory"). The library leaves its caller's heap alone.
 */
function setCommandFlags() {
  require("node:v8").setFlagsFromString("--semi-space-growth-factor=1");
}

/** The header for a cache of the source `bytes`: magic, byte length, CRC-32 (zlib's, loaded lazily). */
function cacheHeader(bytes) {
  const h = Buffer.alloc(12);
  h.writeUInt32LE(MAGIC, 0);
  h.writeUInt32LE(bytes.length >>> 0, 4);
  h.writeUInt32LE(require("node:zlib").crc32(bytes) >>> 0, 8);
  return h;
}

/**
 * Runs `file` (CommonJS) as Node's require would, using `file + ".cache"` when it
 * matches (unless useCache is false). Returns { exports, status, script, cacheHeader }:
 * status is "used", "rejected" (V8 refused it), "stale" (made for other bytes) or "none".
 * (A source this process compiled before comes from V8's own in-memory cache; the file's
 * is then not consulted and counts as used.)
 */
function loadBundle(file, useCache = true) {
  const bytes = readFileSync(file);
  const source = bytes.toString("utf8");
  let cache = null;
  let status = "none";
  try {
    if (!useCache) throw new Error("no cache asked for");
    const c = readFileSync(file + ".cache");
    if (c.length > 12 && c.subarray(0, 12).equals(cacheHeader(bytes))) cache = c.subarray(12);
    else status = "stale";
  } catch {
    // no cache: compile as usual
  }
  const Module = module.constructor;
  const script = new Script(Module.wrap(source), { filename: file, cachedData: cache ?? undefined });
  if (cache) status = script.cachedDataRejected ? "rejected" : "used";
  const m = new Module(file, module);
  m.filename = file;
  m.paths = Module._nodeModulePaths(dirname(file));
  const req = (id) => m.require(id);
  script.runInThisContext().call(m.exports, m.exports, req, m, file, dirname(file));
  m.loaded = true;
  return { exports: m.exports, status, script, cacheHeader: () => cacheHeader(bytes) };
}

module.exports = { loadBundle, setCommandFlags };
