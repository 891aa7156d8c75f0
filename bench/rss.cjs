// Runs the steercode command line with the given arguments and reports the process's
// peak RSS on stderr at exit ("MAXRSS <KiB>"), for the ladder, bench/run.js and
// bench/inputs.js. CommonJS, as bin/steercode.js is, so that the wrapper adds no ES
// module loader to the process it times.
const { writeSync } = require("node:fs");
process.on("exit", () => writeSync(2, `\nMAXRSS ${process.resourceUsage().maxRSS}\n`));
require("../bin/steercode.js");
