import { verifyBuild } from "../io/verify.js";
import { printJson, SAFETY, type Io } from "./shared.js";

export function verifyCommand(io: Io, dir: string): number {
  const r = verifyBuild(dir);
  if (io.json) printJson(io, r);
  else {
    const lines = r.checks.map((c) => `${c.ok ? "ok  " : "FAIL"}  ${c.check}: ${c.detail}`);
    if (r.firstMismatch) {
      const f = r.firstMismatch;
      lines.push("", `first mismatch: ${f.file}, frequency ${f.frequency_hz} Hz, beam ${f.beam}, element ${f.element} (expected word ${f.expected}, found ${f.found})`);
    }
    lines.push("", r.ok ? `verified: ${dir} is consistent end to end` : `NOT verified: do not flash ${dir}`, "", SAFETY);
    io.stdout(lines.join("\n") + "\n");
  }
  return r.ok ? 0 : 1;
}
