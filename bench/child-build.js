// One timed build in a fresh process: prints {loadMs, buildMs, maxRssKb} as JSON.
// usage: node bench/child-build.js scenario.json outDir analysis(0|1) jobs
import { rmSync } from "node:fs";
const [scenario, out, analysis, jobs] = process.argv.slice(2);
const { loadScenario } = await import("../dist/io/scenario.js");
const { runBuild } = await import("../dist/io/build.js");
rmSync(out, { recursive: true, force: true });
const t0 = performance.now();
const L = loadScenario(scenario);
const t1 = performance.now();
const r = await runBuild(L, out, { analysis: analysis === "1", jobs: Number(jobs) });
const t2 = performance.now();
const cpu = process.cpuUsage(); // the whole process, worker threads included
process.stdout.write(JSON.stringify({ loadMs: t1 - t0, buildMs: t2 - t1, cpuMs: (cpu.user + cpu.system) / 1000, words: r.manifest.counts.words, maxRssKb: process.resourceUsage().maxRSS }) + "\n");
