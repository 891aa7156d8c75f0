import { existsSync, statSync } from "node:fs";
import { dirname, join } from "node:path";
import { InputError } from "../core/errors.js";
import { makeReport, writeReport } from "../report/page.js";
import { printJson, type Io } from "./shared.js";

export async function reportCommand(io: Io, a: { dir: string; out: string | null; beam: number | null; frequency: number | null }): Promise<number> {
  const out = a.out ?? join(a.dir, "report.html");
  if (existsSync(out) && statSync(out).isDirectory()) throw new InputError({ file: out, message: "is a folder; expected a file name for the report (e.g. report.html)" });
  if (!existsSync(dirname(out))) throw new InputError({ file: out, message: `the folder ${dirname(out)} does not exist` });
  const r = await makeReport(a.dir, { beam: a.beam, frequencyIndex: a.frequency });
  writeReport(out, r.html);
  if (io.json) printJson(io, { ok: true, report: out, beam: r.beam, bytes: Buffer.byteLength(r.html) });
  else io.stdout(`wrote ${out} (${Buffer.byteLength(r.html)} bytes${r.beam !== null ? `, beam ${r.beam}` : ""}); open it in a browser\n`);
  return 0;
}
