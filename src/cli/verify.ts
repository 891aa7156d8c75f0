import { verifyBuild } from "../io/verify.js";
import { printJson, SAFETY, type Io } from "./shared.js";

export async function verifyCommand(io: Io, dir: string, jobs = 1): Promise<number> {
  // the analysis (rerun only when the build had one) starts its workers itself, when they pay
  const r = await verifyBuild(dir, { jobs });
  if (io.json) printJson(io, r);
  else {
    const lines = r.checks.map((c) => `${c.ok ? "ok  " : "FAIL"}  ${c.check}: ${c.detail}`);
    if (r.firstMismatch) {
      const f = r.firstMismatch;
      const dev = f.device !== undefined ? [`device ${f.device}`, `address ${f.address}`, f.channel !== null && f.channel !== undefined ? `frequency ${f.frequency_hz} Hz, beam ${f.beam}, channel ${f.channel}, element ${f.element}` : f.expected.startsWith("(") ? "past the image's end" : "an unused address (fill word)"].join(", ") : null;
      const at = dev ?? [f.line !== null ? `line ${f.line}` : `byte ${f.byte}`, f.pointer, f.frequency_hz !== null ? `frequency ${f.frequency_hz} Hz` : null, f.beam !== null ? `beam ${f.beam}` : null, f.element !== null ? `element ${f.element}` : null].filter(Boolean).join(", ");
      lines.push("", `first mismatch: ${f.file}, ${at}`, `  expected: ${f.expected}`, `  found:    ${f.found}`);
    }
    lines.push("", r.ok ? `verified: ${dir} is consistent end to end` : `NOT verified: do not flash ${dir}`, "", SAFETY);
    io.stdout(lines.join("\n") + "\n");
  }
  return r.ok ? 0 : 1;
}
