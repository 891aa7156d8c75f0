import { existsSync } from "node:fs";
import { dirname, join } from "node:path";
import { InputError } from "../core/errors.js";
import { makeReport, writeReport } from "../report/page.js";
import { checkReportTarget } from "../io/outdir.js";
import { printJson, type Io } from "./shared.js";
import { parseQuantity } from "../core/units.js";
import { checkFolder, readManifest } from "../io/readbuild.js";
import { UsageError } from "./usage.js";
import { got } from "./option-values.js";

/**
 * `--frequency`: a 0-based index ("1") or a frequency with its unit ("28 GHz"), which must
 * be one of the build's table frequencies (to 1 part in 10^9).
 */
export function frequencyIndex(dir: string, raw: string | null): number | null {
  if (raw === null) return null;
  const text = raw.trim();
  if (/^\d+$/.test(text)) return Number(text);
  const q = /[a-zA-Z]/.test(text) ? parseQuantity(text, "frequency") : null;
  // a finite positive frequency: "1e999 GHz" is Infinity, within 1e-9·f of every table
  if (!q?.ok || !Number.isFinite(q.q.value) || q.q.value <= 0) throw new UsageError(`--frequency: expected a frequency index (0, 1 …) or a frequency with its unit, e.g. "28 GHz", ${got(raw)}`);
  const listed = readManifest(dir).frequenciesHz;
  const f = q.q.value;
  const i = listed.findIndex((x) => Math.abs(Number(x) - f) <= 1e-9 * f);
  if (i < 0) throw new UsageError(`--frequency "${raw}": the build's tables are for ${listed.map((x) => `${Number(x) / 1e9} GHz`).join(", ")}`);
  return i;
}

export async function reportCommand(io: Io, a: { dir: string; out: string | null; beam: number | null; frequency: string | null }): Promise<number> {
  checkFolder(a.dir);
  const out = a.out ?? join(a.dir, "report.html");
  checkReportTarget(out);
  if (!existsSync(dirname(out))) throw new InputError({ file: out, message: `the folder ${dirname(out)} does not exist` });
  const r = await makeReport(a.dir, { beam: a.beam, frequencyIndex: frequencyIndex(a.dir, a.frequency) });
  writeReport(out, r.html);
  if (io.json) printJson(io, { ok: true, report: out, beam: r.beam, bytes: Buffer.byteLength(r.html), warnings: r.warnings });
  else {
    io.stdout(`wrote ${out} (${Buffer.byteLength(r.html)} bytes${r.beam !== null ? `, beam ${r.beam}` : ""}); open it in a browser\n`);
    for (const w of r.warnings) io.stderr(`warning: ${w}\n`);
  }
  return 0;
}
