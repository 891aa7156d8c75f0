// One timed verify in a fresh process: prints {ms, ok, maxRssKb} as JSON.
// usage: node bench/child-verify.js buildDir jobs
const [dir, jobs] = process.argv.slice(2);
const { verifyBuild } = await import("../dist/io/verify.js");
const t0 = performance.now();
const r = await verifyBuild(dir, { jobs: Number(jobs) });
const ms = performance.now() - t0;
process.stdout.write(JSON.stringify({ ms, ok: r.ok, maxRssKb: process.resourceUsage().maxRSS }) + "\n");
