#!/usr/bin/env node
import { main } from "../dist/cli/main.js";

// a reader that stops early (steercode diff A B | head) is not an error
process.stdout.on("error", (e) => {
  if (e.code === "EPIPE") process.exit(process.exitCode ?? 0);
  throw e;
});
main(process.argv.slice(2)).then((code) => {
  process.exitCode = code;
});
