import { join } from "node:path";
import { once } from "node:events";
import { scanDiff, writeChangesCsv, type CalibrationRef, type Change, type DiffScan } from "../io/diff.js";
import { idList } from "../core/facts.js";
import { checkTarget, StagedDir } from "../io/outdir.js";
import { stableJson } from "../io/build.js";
import { writeFileSync } from "node:fs";
import { sha256 } from "../io/files.js";
import { fmt, printable, type Io } from "./shared.js";
import { servedText } from "./check.js";
import { deviceDiffLines } from "../workflows/devices.js";

/** Write changes.csv and diff.json into `dir` (used by `diff -o` and `build --compare`). Returns file digests. */
export function writeDiffFiles(dir: string, r: DiffScan, a: string, b: string) {
  const csv = writeChangesCsv(join(dir, "changes.csv"), r);
  const doc = { format: "steercode-diff/1", old: a, new: b, identical: r.identical, summary: r.summary, files: { "changes.csv": { bytes: csv.bytes, sha256: csv.sha256 } } };
  const text = stableJson(doc, null, 2) + "\n";
  writeFileSync(join(dir, "diff.json"), text);
  return { "changes.csv": csv, "diff.json": { bytes: Buffer.byteLength(text), sha256: sha256(text), crc32: 0 } };
}

function calLines(label: string, c: CalibrationRef | null): string[] {
  if (!c) return [`${label}: no calibration file`];
  return [printable(`${label}: ${c.ref} (sha256 ${c.sha256})`), ...c.comments.map((t) => printable(`    # ${t}`))];
}

export function diffLines(r: Pick<DiffScan, "identical" | "summary">): string[] {
  const s = r.summary;
  const lines = [
    r.identical
      ? `identical: all ${s.wordsCompared} words agree`
      : s.wordsChanged === 0
        ? `all ${s.wordsCompared} words agree, but the device images differ (${s.devicesRemoved ? "the new build writes no device images" : "another device layout: reload every image"})`
        : `${s.wordsChanged} of ${s.wordsCompared} words changed, in ${s.beamsTouched} beam(s) and ${s.elementsTouched} element(s)`,
  ];
  if (s.wordsChanged > 0) {
    lines.push(`changed ${idList(s.elementsChanged, 40)}`);
    lines.push(`largest phase change ${s.largestPhaseChangeLsb} LSB, largest attenuation change ${s.largestAttenChangeSteps} step(s)`);
  }
  for (const g of s.gRefChangeDb) lines.push(`G_ref at ${g.frequencyHz} Hz: ${fmt(g.old, 3)} → ${fmt(g.new, 3)} dB`);
  if (s.oldCalibration || s.newCalibration) {
    if (s.calibrationChanged) lines.push("calibration changed:", ...calLines("  old", s.oldCalibration), ...calLines("  new", s.newCalibration));
    else lines.push(...calLines("calibration (unchanged)", s.oldCalibration));
  }
  for (const c of s.calibrationServed ?? [])
    lines.push(`calibration at ${c.frequencyHz} Hz: ${c.old ? servedText(c.old) : "one set for every frequency"}${c.changed ? ` → ${c.new ? servedText(c.new) : "one set for every frequency"}` : " (same rows)"}`);
  if (s.devices) lines.push(...deviceDiffLines(s.devices));
  if (s.devicesRemoved) lines.push("devices: the old build wrote device images; the new build writes none");
  return lines;
}

/** A word in hex, as wide as the word (0x003F for a 16-bit word). */
export function hexWord(w: number, bits: number): string {
  return "0x" + (w >>> 0).toString(16).toUpperCase().padStart(Math.ceil(bits / 4), "0");
}

/**
 * `diff --json`: { changes, identical, summary } exactly as stableJson(doc, null, 2) prints
 * it (keys sorted), produced in chunks of changes so that millions of changes never sit in
 * one string.
 */
export function* diffJsonChunks(r: DiffScan, perChunk = 4096): Generator<string> {
  const MARK = "\u0000changes\u0000";
  const text = stableJson({ identical: r.identical, summary: r.summary, changes: r.summary.wordsChanged ? [MARK] : [] }, null, 2) + "\n";
  if (!r.summary.wordsChanged) return yield text;
  const quoted = JSON.stringify(MARK);
  const at = text.indexOf(quoted);
  const lineStart = text.lastIndexOf("\n", at) + 1;
  const indent = " ".repeat(at - lineStart);
  yield text.slice(0, lineStart);
  let from = 0;
  let first = true;
  while (from < r.summary.wordsCompared) {
    const chunk: string[] = [];
    from = r.eachChange((c: Change) => {
      // stableJson's layout of one change (keys sorted), written out: the test compares the two byte for byte
      const i2 = indent + "  ";
      chunk.push(
        `${first ? "" : ",\n"}${indent}{\n${i2}"beam": ${c.beam},\n${i2}"element": ${c.element},\n${i2}"frequency_hz": ${JSON.stringify(c.frequency_hz)},\n${i2}"new_atten_code": ${c.new_atten_code},\n${i2}"new_phase_code": ${c.new_phase_code},\n${i2}"new_word": ${c.new_word},\n${i2}"old_atten_code": ${c.old_atten_code},\n${i2}"old_phase_code": ${c.old_phase_code},\n${i2}"old_word": ${c.old_word}\n${indent}}`,
      );
      first = false;
    }, perChunk, from);
    if (chunk.length) yield chunk.join("");
  }
  yield text.slice(at + quoted.length);
}

export async function diffCommand(io: Io, a: string, b: string, out: string | undefined): Promise<number> {
  // -o "" (or -o with no value) is refused by checkTarget, not taken as no -o
  if (out !== undefined) checkTarget(out, "diff");
  const r = scanDiff(a, b);
  if (out !== undefined) {
    const stage = new StagedDir(out, "diff");
    try {
      writeDiffFiles(stage.tmp, r, a, b);
      stage.commit();
    } catch (e) {
      stage.abort();
      throw e;
    }
  }
  if (io.json) {
    // a pipe takes the text at its reader's pace: wait for it to drain rather than queue gigabytes
    for (const chunk of diffJsonChunks(r)) if (io.stdout(chunk) === false) await once(process.stdout, "drain");
  }
  else {
    const lines = diffLines(r);
    const show: Change[] = [];
    r.eachChange((c) => show.push(c), 20);
    if (show.length) {
      const bits = r.wordBits;
      const hw = Math.max(10, Math.ceil(bits / 4) + 2); // "0x" + digits; the header needs 23 = 10 + 13
      lines.push("", `frequency_hz  beam  element  ${"old word (hex, decimal)".padEnd(hw + 13)} → new word (hex, decimal)  phase  atten`);
      for (const c of show)
        lines.push(`${c.frequency_hz}  ${String(c.beam).padStart(4)}  ${String(c.element).padStart(7)}  ${`${hexWord(c.old_word, bits)} (${c.old_word})`.padEnd(hw + 13)} → ${`${hexWord(c.new_word, bits)} (${c.new_word})`.padEnd(hw + 13)}  ${c.old_phase_code}→${c.new_phase_code}  ${c.old_atten_code}→${c.new_atten_code}`);
      const more = r.summary.wordsChanged - show.length;
      if (more > 0) lines.push(`… ${more} more${out ? ` in ${join(out, "changes.csv")}` : " (-o DIR writes them all to changes.csv)"}`);
    }
    io.stdout(lines.join("\n") + "\n");
  }
  return r.identical ? 0 : 1;
}
