import { deriveFacts } from "../core/facts.js";
import { runBuild } from "../io/build.js";
import { loadScenario } from "../io/scenario.js";
import { checkTarget } from "../io/outdir.js";
import { fmt, printJson, progress, SAFETY, warn, type Io } from "./shared.js";

export interface BuildArgs {
  scenario: string;
  out: string;
  jobs: number;
  analysis: boolean;
}

export async function buildCommand(io: Io, args: BuildArgs): Promise<number> {
  checkTarget(args.out);
  const loaded = loadScenario(args.scenario);
  const facts = deriveFacts(loaded.plan);
  const bar = progress(io, "build");
  let result;
  try {
    result = await runBuild(loaded, args.out, { analysis: args.analysis, onProgress: bar.update });
  } finally {
    bar.stop();
  }
  const m = result.manifest;
  if (io.json) {
    printJson(io, { ok: true, dir: args.out, manifest: m, warnings: facts.warnings });
    return 0;
  }
  const lines = [
    `wrote ${args.out}: ${m.counts.words} words (${m.counts.frequencies} frequenc${m.counts.frequencies === 1 ? "y" : "ies"} × ${m.counts.beams} beams × ${m.counts.elements} elements), ${m.layout.bits}-bit words`,
    ...Object.entries(m.files)
      .filter(([k]) => !k.startsWith("inputs/"))
      .map(([k, f]) => `  ${k.padEnd(12)} ${String(f.bytes).padStart(10)} bytes  sha256 ${f.sha256.slice(0, 16)}…${f.crc32 ? `  crc32 ${f.crc32}` : ""}`),
    ...m.perFrequency.map((p) => `  ${(Number(p.frequencyHz) / 1e9).toPrecision(6)} GHz: G_ref ${fmt(p.gRefDb, 3)} dB (element ${p.gRefElement}), ${p.clipped} clipped`),
  ];
  for (const w of facts.warnings) lines.push(warn(io, `warning: ${w}`));
  lines.push("", SAFETY);
  io.stdout(lines.join("\n") + "\n");
  return 0;
}
