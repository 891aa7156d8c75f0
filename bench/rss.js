// Runs the steercode command line with the given arguments and reports the process's
// peak RSS on stderr at exit ("MAXRSS <KiB>"), for bench/inputs.js.
import { writeSync } from "node:fs";
process.on("exit", () => writeSync(2, `\nMAXRSS ${process.resourceUsage().maxRSS}\n`));
await import("../bin/steercode.js");
