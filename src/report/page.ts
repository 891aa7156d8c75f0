/**
 * `steercode report DIR`: one self-contained HTML page (inline CSS, inline script, no
 * network, nothing beside it) for a build folder, a sweep folder or both.
 *
 * The build part is an explorer: the page carries the recorded Plan, beams.csv and the
 * CRC-32 of every beam's words, and its script (src/report/explorer.ts, bundled with
 * steercode's own engine by scripts/bundle-report.mjs) draws any (frequency, beam) the
 * reader picks. Everything from the folder is parsed into numbers or escaped text; no
 * markup from the folder is embedded.
 */
import { refuseOversizedAnalysis } from "../io/analysis-pool.js";
import { closeSync, existsSync, readFileSync, readSync, renameSync, rmSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { crc32 } from "node:zlib";
import { parse } from "csv-parse/sync";
import { InputError } from "../core/errors.js";
import { sha256 } from "../io/files.js";
import type { Plan } from "../core/plan.js";
import { hex32, type BandReport, type Manifest } from "../io/build.js";
import { checkFolder, folderEntry, loadBuildScenario, manifestInputsDisagreement, openFolderFile, readFolderFile, readManifest } from "../io/readbuild.js";
import { enabledCount } from "../core/plan.js";

/** Largest files the report reads from a folder (a 1 M-beam beams.csv is ~150 MB). */
const MAX_CSV = 512 * 1024 * 1024;
const MAX_JSON = 64 * 1024 * 1024;
/** A folder file that must be read whole: bounded, regular, inside the folder (links refused). */
const folderText = (dir: string, rel: string, max: number): Buffer | null => readFolderFile(dir, rel, max);
import { chartSvg, MARKERS, PALETTE, type Panel, type Series } from "../io/svg.js";
import { SAFETY } from "../cli/shared.js";
import { encodeTyped, type PageData } from "./model.js";
import { REPORT_GENERATOR } from "../io/outdir.js";
import { negativeGainLossNote, theoryFor, theoryRows } from "../core/theory.js";
import { elementSidelobeNote, pulledAtPeaks, pullWarning } from "../core/pattern/pull.js";

export interface ReportOptions {
  beam: number | null;
  frequencyIndex: number | null;
}

function esc(s: string): string {
  return s.replace(/&/g, "&amp;").replace(/</g, "&lt;").replace(/>/g, "&gt;").replace(/"/g, "&quot;").replace(/'/g, "&#39;");
}

/** JSON for a <script type="application/json"> block: nothing in it can close the element. */
function scriptJson(v: unknown): string {
  return JSON.stringify(v).replace(/</g, "\\u003c").replace(/>/g, "\\u003e").replace(/&/g, "\\u0026").replace(/\u2028/g, "\\u2028").replace(/\u2029/g, "\\u2029");
}

let bundleCache: string | null = null;
/** The page script: dist/report/explorer.js, bundled at build time (from source: bundled now). */
async function explorerBundle(): Promise<string> {
  if (bundleCache) return bundleCache;
  // dist/report/explorer.js, from dist/report/ or from the command's bundle in dist/cli-bundle/
  const built = new URL("../report/explorer.js", import.meta.url);
  const here = new URL(import.meta.url).pathname;
  if (here.endsWith(".js") && existsSync(built)) {
    const text = readFileSync(built, "utf8");
    if (text.startsWith("/*steercode-report-bundle*/")) return (bundleCache = text);
  }
  const { bundleExplorer } = (await import(new URL("../../scripts/bundle-report.mjs", import.meta.url).href)) as { bundleExplorer: () => Promise<string> };
  return (bundleCache = await bundleExplorer());
}

function taperWords(t: Plan["taper"]): string {
  const o = t as unknown as Record<string, unknown>;
  switch (o.kind) {
    case "uniform":
      return "uniform (every element at full amplitude)";
    case "taylor":
      return `Taylor, ${String(o.sidelobeDb ?? o.sidelobe)} dB design sidelobes, n̄ = ${String(o.nbar)}`;
    case "chebyshev":
      return `Dolph–Chebyshev, ${String(o.sidelobeDb ?? o.sidelobe)} dB equal sidelobes`;
    default:
      return String(o.kind);
  }
}

/** Beams (frequencies × beams) one report page carries: 1 048 576 (~170 MB of page with beams.csv's metrics). */
export const MAX_REPORT_BEAMS = 1_048_576;

/**
 * CRC-32 of every beam's words in table.bin, read a beam at a time. A table.bin the
 * manifest lists but that is missing or of another length gives no CRCs and a problem:
 * the page said "no table.bin CRC in this folder to check them against" for a truncated
 * table.bin, as if the build had none.
 */
function beamCrcs(dir: string, m: Manifest): { crc: Uint32Array | null; problem: string | null; fileCrc?: number } {
  const f = m.files["table.bin"];
  if (!f) return { crc: null, problem: null };
  const entry = folderEntry(dir, "table.bin");
  const per = m.counts.elements * m.layout.bytes;
  const n = m.counts.frequencies * m.counts.beams;
  const verifyIt = "the codes cannot be checked against it: run steercode verify on this folder";
  if (entry.kind === "missing") return { crc: null, problem: `table.bin is listed in manifest.json but missing; ${verifyIt}` };
  if (per * n !== entry.size) return { crc: null, problem: `table.bin holds ${entry.size} bytes, the manifest's counts give ${per * n} (${n} beams × ${per} bytes); ${verifyIt}` };
  const out = new Uint32Array(n);
  const buf = Buffer.alloc(per);
  const fd = openFolderFile(entry.path);
  let fileCrc = 0;
  try {
    for (let k = 0; k < n; k++) {
      if (readSync(fd, buf, 0, per, k * per) !== per) return { crc: null, problem: `table.bin ended early (beam ${k} of ${n}); ${verifyIt}` };
      out[k] = crc32(buf);
      fileCrc = crc32(buf, fileCrc);
    }
  } finally {
    closeSync(fd);
  }
  return { crc: out, problem: null, fileCrc };
}

const b64 = (bytes: Uint8Array) => Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength).toString("base64");

interface BuildPart {
  html: string;
  data: PageData;
  beam: number;
  /** said on stderr (and in --json) beside the page's ✗ */
  warnings: string[];
}

function buildPart(dir: string, m: Manifest, o: ReportOptions): BuildPart {
  const loaded = loadBuildScenario(dir, m);
  // the page comes from the recorded inputs: a manifest that says otherwise is a folder changed after the build
  const disagreement = manifestInputsDisagreement(dir, m, loaded);
  if (disagreement) throw new InputError(disagreement);
  const plan = loaded.plan;
  // the page runs the analysis engine: refuse a scenario whose analysis grid is past its limit
  refuseOversizedAnalysis(plan, dir, { band: false });
  // the page carries every beam's direction, CRC and metrics: 64 frequencies × 1 M beams made a 396 MB page (151 s, 2 GB),
  // its text grows toward V8's longest string (512 MiB), and no browser opens such a page
  const pageBeams = plan.frequenciesHz.length * plan.beams.count;
  if (pageBeams > MAX_REPORT_BEAMS)
    throw new InputError({ file: join(dir, "inputs", "scenario.json"), pointer: "/beams", message: `the report would carry ${plan.frequenciesHz.length} frequenc${plan.frequenciesHz.length === 1 ? "y" : "ies"} × ${plan.beams.count} beams = ${pageBeams} beams; expected at most ${MAX_REPORT_BEAMS} (a page a browser can open): report a build of fewer beams or frequencies` });
  const F = plan.frequenciesHz.length, B = plan.beams.count;
  let metricColumns: string[] = [];
  let metrics: Float64Array | null = null;
  const beamsPath = join(dir, "beams.csv");
  const beamsBytes = m.files["beams.csv"] ? folderText(dir, "beams.csv", MAX_CSV) : null;
  if (beamsBytes) {
    // the page's every metric comes from this file: one changed after the build (a PSL of
    // −29.25 dB edited to −9.25) was drawn as the build's (verify caught it, report did not)
    const listed = m.files["beams.csv"]!;
    if (beamsBytes.length !== listed.bytes || sha256(beamsBytes) !== listed.sha256)
      throw new InputError({ file: beamsPath, message: `differs from what manifest.json records for it (${listed.bytes} bytes, SHA-256 ${listed.sha256.slice(0, 16)}…; the file has ${beamsBytes.length} bytes, SHA-256 ${sha256(beamsBytes).slice(0, 16)}…): changed after the build; run steercode verify on this folder` });
    let rows: string[][];
    try {
      rows = parse(beamsBytes, { columns: false, skip_empty_lines: true }) as string[][];
    } catch (e) {
      throw new InputError({ file: beamsPath, message: `not a valid CSV file (${(e as Error).message}); run steercode verify on this folder` });
    }
    const header = rows[0] ?? [];
    metricColumns = header.slice(6);
    if (rows.length - 1 !== F * B) throw new InputError({ file: beamsPath, message: `expected ${F * B} rows (frequencies × beams), found ${rows.length - 1}` });
    metrics = new Float64Array(F * B * metricColumns.length);
    for (let r = 1; r < rows.length; r++) {
      const row = rows[r]!;
      for (let c = 0; c < metricColumns.length; c++) {
        const cell = row[6 + c] ?? "";
        metrics[(r - 1) * metricColumns.length + c] = cell === "" ? NaN : Number(cell);
      }
    }
  }
  // the beam to open at: --beam/--frequency, else the largest sidelobe rise
  let fi = o.frequencyIndex ?? 0;
  let beam = o.beam ?? 0;
  const rise = metricColumns.indexOf("sll_rise_db");
  if (o.beam === null && metrics && rise >= 0) {
    let worst = -Infinity;
    for (let k = 0; k < F * B; k++) {
      const kf = Math.floor(k / B);
      if (o.frequencyIndex !== null && kf !== o.frequencyIndex) continue;
      const v = metrics[k * metricColumns.length + rise]!;
      if (v > worst) [worst, fi, beam] = [v, kf, k % B];
    }
  }
  if (beam < 0 || beam >= B) throw new InputError({ file: dir, message: `--beam ${beam}: expected a beam from 0 to ${B - 1}` });
  if (fi < 0 || fi >= F) throw new InputError({ file: dir, message: `--frequency ${fi}: expected a frequency index from 0 to ${F - 1} (the build's tables are for ${m.frequenciesHz.map((x) => `${Number(x) / 1e9} GHz`).join(", ")})` });
  const { crc, problem: crcProblem, fileCrc } = beamCrcs(dir, m);
  const data: PageData = {
    title: plan.name || "build",
    plan: encodeTyped(plan, b64),
    metricColumns,
    metrics: metrics ? b64(new Uint8Array(metrics.buffer)) : null,
    crc: crc ? b64(new Uint8Array(crc.buffer)) : null,
    ...(crcProblem ? { crcProblem } : {}),
    start: { f: fi, beam },
  };
  // facts from the recorded inputs (the plan), so a crafted manifest cannot break the page;
  // the few manifest values shown are printed only when they have the right type
  const calIn = loaded.inputs.find((i) => i.role === "calibration");
  const cal = calIn ? { ref: calIn.ref, sha256: calIn.file.sha256, comments: calIn.comments } : null;
  const fin = (x: unknown, d: number) => (typeof x === "number" && Number.isFinite(x) ? x.toFixed(d) : "n/a");
  const lsbDeg = 360 / 2 ** plan.phaseBits;
  // the CRC printed is table.bin's own; a manifest that records another was printed as if it were the table's
  const listedCrc = m.files["table.bin"]?.crc32;
  const binCrc = fileCrc !== undefined ? hex32(fileCrc) : listedCrc;
  const fileCrcProblem = fileCrc !== undefined && listedCrc !== binCrc ? `manifest.json records table.bin's CRC-32 as ${typeof listedCrc === "string" ? listedCrc : "(none)"}, its bytes give ${binCrc}; run steercode verify on this folder` : null;
  const summary: [string, string][] = [
    ["scenario", `${m.scenario.source} (SHA-256 ${loaded.scenario.sha256})`],
    ["array", `${plan.elements.count} elements (${enabledCount(plan)} enabled)${plan.lattice ? `, ${plan.lattice.kind} lattice of ${plan.lattice.columns} columns × ${plan.lattice.rows} rows` : ", element list"}`],
    ["tables", `${B} beams × ${F} frequenc${F === 1 ? "y" : "ies"} (${plan.frequenciesHz.map((f) => `${Number((f / 1e9).toPrecision(9))} GHz`).join(", ")}), ${plan.word.bits}-bit words`],
    ["phase shifter", `${plan.phaseBits} bits, LSB ${lsbDeg.toFixed(4)}°${plan.phaseStates ? ", measured states" : ", ideal states"}`],
    ["attenuator", plan.attenBits === 0 ? "none (0 bits): no taper can be applied" : `${plan.attenBits} bits × ${plan.attenStepDb} dB steps (range ${((2 ** plan.attenBits - 1) * plan.attenStepDb).toFixed(2)} dB)${plan.attenStates ? ", measured states" : ""}`],
    ["taper", taperWords(plan.taper)],
    ["quantizer", `${plan.quantizer.method}${plan.quantizer.method === "randomized" ? ` (seed ${plan.quantizer.seed})` : ""}`],
    ["calibration", cal ? `${cal.ref} (SHA-256 ${cal.sha256})${cal.comments.length ? ` — ${cal.comments.join(" | ")}` : ""}` : "none"],
    ["G_ref, clipped elements", m.perFrequency.map((p, i) => `${Number(((plan.frequenciesHz[i] ?? NaN) / 1e9).toPrecision(9))} GHz: ${fin(p?.gRefDb, 3)} dB, ${fin(p?.clipped, 0)} clipped`).join("; ")],
    ["table.bin CRC-32", `${typeof binCrc === "string" ? binCrc : "no table.bin in this build"}${crcProblem ? ` — ✗ ${crcProblem}` : ""}${fileCrcProblem ? ` — ✗ ${fileCrcProblem}` : ""}`],
  ];
  // estimates that fit this quantizer and part, and why a gain loss is negative (issue 8 items 3, 4)
  const t = theoryFor(plan);
  const gl = metricColumns.indexOf("gain_loss_db");
  let negatives = 0;
  if (metrics && gl >= 0) for (let k = gl; k < metrics.length; k += metricColumns.length) if (metrics[k]! < 0) negatives++;
  const gainNote = negativeGainLossNote(t, negatives, F * B);
  // with an element pattern: beams whose realized peak lies outside the array's own half-power main lobe
  const iu = metricColumns.indexOf("peak_u"), iv = metricColumns.indexOf("peak_v"), ip = metricColumns.indexOf("psl_db");
  const mt = metrics;
  const pulls = mt && iu >= 0 && iv >= 0 ? pulledAtPeaks(plan, mt, metricColumns.length, iu, iv) : [];
  const pullNote = pullWarning(plan, pulls, mt && ip >= 0 ? (fi, b) => mt[(fi * B + b) * metricColumns.length + ip]! : undefined);
  const sidelobeNote = mt && ip >= 0 ? elementSidelobeNote(plan, pulls, mt, metricColumns.length, ip, metricColumns.indexOf("psl_ideal_db")) : null;
  const estimates = `<section id="estimates"><h2>Estimates beside the measurements</h2><table><thead><tr><th>estimate for this quantizer (${esc(t.quantizer)}) and part</th><th>value</th><th>formula</th><th>source, or why n/a</th></tr></thead><tbody>${theoryRows(t)
    .map((r) => `<tr><th scope="row">${esc(r.label)}</th><td>${r.v.value === null ? "n/a" : `${r.v.value.toFixed(r.digits)} ${esc(r.v.unit)}`}</td><td class="src">${r.v.value === null ? "" : esc(r.v.formula)}</td><td class="src">${esc(r.v.value === null ? (r.v.note ?? "") : `${r.v.source}${r.v.note ? ` (${r.v.note})` : ""}`)}</td></tr>`)
    .join("")}</tbody></table>${gainNote ? `<p class="note" id="gain-note">Note: ${esc(gainNote)}.</p>` : ""}</section>`;
  const html = `<section id="summary"><h2>What was built</h2><table class="kv">${summary.map(([k, v]) => `<tr><th scope="row">${esc(k)}</th><td>${esc(v)}</td></tr>`).join("")}</table>${pullNote ? `<p class="note" id="pull-note">Warning: ${esc(pullNote)}.</p>` : ""}${sidelobeNote ? `<p class="note" id="element-sidelobe-note">Note: ${esc(sidelobeNote)}.</p>` : ""}</section>${estimates}
<section id="explorer"><h2>Beam explorer</h2>
<div class="controls"><label>frequency <select id="freq-select" aria-label="frequency"></select></label>
<label>beam <select id="beam-select" aria-label="beam"></select></label>
<button id="prev-beam" type="button" aria-label="previous beam">◀</button><button id="next-beam" type="button" aria-label="next beam">▶</button>
<span class="hint">or click a beam on the maps below, or a beam in the worst-beam table; the address (#f=K&amp;beam=N) links to the beam shown</span></div>
<h2 id="beam-heading" class="beam-heading">beam ${beam}</h2>
<p id="crc-badge" class="badge"></p>
<div class="grid2">
<figure id="pattern"><figcaption><strong>Realized pattern in u-v space.</strong> |AF|² relative to the realized peak, floor −50 dB; dashed circle: the horizon (u² + v² = 1); white ring: commanded direction; red cross: realized peak; grey: outside visible space.</figcaption>
<div class="stack"><canvas id="uv-heat" width="420" height="410"></canvas><canvas id="uv-overlay" width="420" height="410"></canvas></div><div id="uv-bar" class="cbar"></div></figure>
<figure id="metrics-fig"><figcaption><strong>Metrics of this beam</strong> (definitions: README, "What the analysis measures").</figcaption><div id="beam-metrics"></div></figure>
</div>
<figure id="cuts-fig"><figcaption><strong>Cuts through the commanded direction.</strong> Exact array factor; grey dashed: ideal (tapered, unquantised) weights; dark: realized (codes through the channel model); one dB scale for both.</figcaption><div id="cuts" class="cuts"></div></figure>
<figure id="aperture"><figcaption><strong>Aperture for this beam</strong>, elements at their real positions (x right, y up).</figcaption>
<div class="aps"><div><div class="cap">phase code</div><canvas id="ap-phase"></canvas><div id="ap-phase-bar" class="cbar"></div></div>
<div><div class="cap">attenuation code</div><canvas id="ap-atten"></canvas><div id="ap-atten-bar" class="cbar"></div></div>
<div><div class="cap">phase error vs ideal</div><canvas id="ap-error"></canvas><div id="ap-error-bar" class="cbar"></div></div></div>
<p id="ap-status" class="note"></p></figure>
<figure id="histogram-fig"><figcaption><strong>Phase error of this beam's elements.</strong></figcaption><div id="phase-histogram"></div></figure>
</section>
<section id="grid"><h2>Over the whole beam grid</h2><p class="note">From beams.csv; the red box marks the beam shown. Click a cell to show that beam.</p><div id="grid-maps" class="maps"></div>
<h3>Worst beams</h3><div id="worst"></div></section>`;
  return { html, data, beam, warnings: fileCrcProblem ? [fileCrcProblem] : [] };
}

/** A comparison recorded in the folder (build --compare, diff -o): numbers from diff.json and changes.csv. */
function comparisonPart(dir: string, m: Manifest | null): string {
  const path = join(dir, "diff.json");
  const bytes = folderText(dir, "diff.json", MAX_JSON);
  if (!bytes) return "";
  let doc: Record<string, unknown>;
  try {
    doc = JSON.parse(bytes.toString("utf8")) as Record<string, unknown>;
  } catch {
    throw new InputError({ file: path, message: "is not valid JSON" });
  }
  // the summary's counts are printed: a document without them printed "NaN of NaN words changed" (null: an internal error)
  const isObj = (x: unknown): x is Record<string, unknown> => typeof x === "object" && x !== null && !Array.isArray(x);
  if (!isObj(doc)) throw new InputError({ file: path, pointer: "", message: "expected a JSON object (a steercode diff document); write it again (steercode diff, or build --compare)" });
  const s = doc.summary;
  if (!isObj(s)) throw new InputError({ file: path, pointer: "/summary", message: "expected the comparison's summary (an object); write it again (steercode diff, or build --compare)" });
  for (const k of ["wordsCompared", "wordsChanged", "beamsTouched", "elementsTouched", "largestPhaseChangeLsb", "largestAttenChangeSteps"])
    if (typeof s[k] !== "number" || !Number.isFinite(s[k]) || (s[k] as number) < 0) throw new InputError({ file: path, pointer: `/summary/${k}`, message: "expected a number ≥ 0; write it again (steercode diff, or build --compare)" });
  const num = (x: unknown) => x as number;
  const str = (x: unknown) => (typeof x === "string" ? x : "");
  const lines: string[] = [];
  lines.push(doc.identical === true ? `identical: all ${num(s.wordsCompared)} words agree` : s.wordsChanged === 0 ? `all ${num(s.wordsCompared)} words agree, but the device images differ` : `${num(s.wordsChanged)} of ${num(s.wordsCompared)} words changed, in ${num(s.beamsTouched)} beam(s) and ${num(s.elementsTouched)} element(s); largest phase change ${num(s.largestPhaseChangeLsb)} LSB, largest attenuation change ${num(s.largestAttenChangeSteps)} step(s)`);
  const cal = (x: unknown) => {
    if (typeof x === "string") return x;
    const c = x as { ref?: unknown; sha256?: unknown; comments?: unknown } | null;
    if (!c || typeof c !== "object") return "none";
    const comments = Array.isArray(c.comments) ? c.comments.filter((t): t is string => typeof t === "string") : [];
    return `${str(c.ref)} (SHA-256 ${str(c.sha256)})${comments.length ? ` — ${comments.join(" | ")}` : ""}`;
  };
  if (Array.isArray(s.elementsChanged) && s.elementsChanged.length) lines.push(`changed element ids: ${s.elementsChanged.slice(0, 40).join(", ")}${s.elementsChanged.length > 40 ? ` … and ${s.elementsChanged.length - 40} more` : ""}`);
  if (s.calibrationChanged === true) lines.push(`calibration: ${cal(s.oldCalibration)} → ${cal(s.newCalibration)}`);
  // beams × elements map of changed words, from changes.csv (first frequency with changes)
  let map = "";
  const cpath = join(dir, "changes.csv");
  const changes = m ? folderText(dir, "changes.csv", MAX_CSV) : null;
  if (m && changes) {
    let rows: Record<string, string>[];
    try {
      rows = parse(changes, { columns: true, skip_empty_lines: true }) as Record<string, string>[];
    } catch (e) {
      throw new InputError({ file: cpath, message: `not a valid CSV file (${(e as Error).message})` });
    }
    const E = m.counts.elements, B = m.counts.beams;
    const col = new Map(m.elementIds.map((id, i) => [id, i]));
    const W = Math.min(E, 256), H = Math.min(B, 256);
    const cells = new Uint32Array(W * H);
    for (const r of rows) {
      const e = col.get(Number(r.element));
      const b = Number(r.beam);
      if (e === undefined || !Number.isInteger(b) || b < 0 || b >= B) continue;
      cells[Math.floor((b * H) / B) * W + Math.floor((e * W) / E)]!++;
    }
    let max = 0;
    for (const c of cells) max = Math.max(max, c);
    const cw = 600 / W, ch = Math.max(1, Math.min(6, 300 / H));
    const rects: string[] = [];
    for (let y = 0; y < H; y++)
      for (let x = 0; x < W; x++) {
        const c = cells[y * W + x]!;
        if (c) rects.push(`<rect x="${(50 + x * cw).toFixed(2)}" y="${(10 + y * ch).toFixed(2)}" width="${cw.toFixed(2)}" height="${ch.toFixed(2)}" fill-opacity="${(0.25 + (0.75 * c) / max).toFixed(2)}"/>`);
      }
    const h = 10 + H * ch;
    map = `<svg viewBox="0 0 660 ${(h + 40).toFixed(0)}" class="changes" role="img" aria-label="changed words by beam and element"><rect x="50" y="10" width="600" height="${(H * ch).toFixed(2)}" class="plot"/><g class="changed">${rects.join("")}</g>
<text x="350" y="${(h + 18).toFixed(0)}" text-anchor="middle">element (table order, ${E} in all) →</text><text transform="translate(20 ${(10 + h / 2).toFixed(0)}) rotate(-90)" text-anchor="middle">beam ↓ (${B})</text></svg>`;
  }
  // per beamformer device (builds with `devices`): words changed and the address ranges to reload
  let perDevice = "";
  const dv = s.devices as { layoutChanged?: unknown; devices?: unknown; devicesChanged?: unknown; changed?: unknown } | undefined;
  if (dv && typeof dv === "object") {
    const changed = Array.isArray(dv.changed) ? (dv.changed as { device?: unknown; wordsChanged?: unknown; ranges?: unknown }[]) : [];
    const range = (r: unknown) => (Array.isArray(r) && r.length === 2 ? `${num(r[0])}–${num(r[1])}` : "?");
    const rows = changed
      .slice(0, 200)
      .map((c) => {
        const ranges = Array.isArray(c.ranges) ? c.ranges : [];
        return `<tr><td>${num(c.device)}</td><td>${num(c.wordsChanged)}</td><td style="text-align:left">${esc(ranges.slice(0, 12).map(range).join(", "))}${ranges.length > 12 ? ` … and ${ranges.length - 12} more` : ""}</td></tr>`;
      })
      .join("");
    perDevice = `<h3>Per beamformer device</h3><p>${dv.layoutChanged === true ? "The device layout changed: reload every image. " : ""}${num(dv.devicesChanged)} of ${num(dv.devices)} device(s) changed${changed.length > 200 ? " (the first 200 listed)" : ""}; word addresses in each device's own memory.</p>${rows ? `<table id="device-changes"><thead><tr><th>device</th><th>words changed</th><th>address ranges to reload</th></tr></thead><tbody>${rows}</tbody></table>` : ""}`;
  }
  return `<section id="comparison"><h2>What changed against the earlier build</h2><p>Compared with <code>${esc(str(doc.old))}</code>: ${lines.map(esc).join("; ")}.</p>${map}<p class="note">Dark cells: words that changed (every frequency, darker = more).</p>${perDevice}</section>`;
}

/** The sweep, drawn from the numbers in sweep.json (no markup taken from the folder). */
function sweepPart(dir: string): string {
  const path = join(dir, "sweep.json");
  let doc: { name?: unknown; rows?: unknown };
  try {
    doc = JSON.parse(folderText(dir, "sweep.json", MAX_JSON)!.toString("utf8")) as typeof doc;
  } catch {
    throw new InputError({ file: path, message: "is not valid JSON" });
  }
  if (!Array.isArray(doc.rows)) throw new InputError({ file: path, pointer: "/rows", message: "expected an array of sweep rows" });
  const rows = (doc.rows as Record<string, unknown>[]).map((r) => {
    const o: Record<string, number | string> = {};
    for (const [k, v] of Object.entries(r ?? {})) o[k] = typeof v === "number" ? v : typeof v === "string" ? v : NaN;
    return o;
  });
  const n = (x: unknown) => (typeof x === "number" ? x : Number(x));
  const keys = [...new Set(rows.map((r) => `${n(r.atten_step_db)}|${String(r.quantizer ?? "nearest")}`))];
  const bits = [...new Set(rows.map((r) => n(r.phase_bits)).filter(Number.isFinite))].sort((a, b) => a - b);
  const seriesFor = (col: string, tag: string, dash?: string): Series[] =>
    keys.map((k, i) => {
      const [step, q] = k.split("|");
      const rs = rows.filter((r) => `${n(r.atten_step_db)}|${String(r.quantizer ?? "nearest")}` === k).sort((a, b) => n(a.phase_bits) - n(b.phase_bits));
      return { label: `${tag}, step ${step} dB, ${q}`, points: rs.map((r) => [n(r.phase_bits), n(r[col])] as [number, number]).filter((p) => Number.isFinite(p[1])), colour: PALETTE[i % PALETTE.length]!, marker: MARKERS[i % MARKERS.length]!, ...(dash ? { dash } : {}) };
    });
  // one theory curve per quantizer (nearest and randomized rounding have different estimates; n/a points are left out)
  const quantizers = [...new Set(rows.map((r) => String(r.quantizer ?? "nearest")))];
  const theory = (col: string, label: string, dash: string): Series[] =>
    quantizers
      .map((q) => ({ q, pts: bits.map((b) => [b, n(rows.find((r) => n(r.phase_bits) === b && String(r.quantizer ?? "nearest") === q)?.[col])] as [number, number]).filter((p) => Number.isFinite(p[1])) }))
      .filter((x) => x.pts.length)
      .map((x) => ({ label: `${label}, ${x.q}`, points: x.pts, colour: "#555555", dash, marker: "none", width: 1.4 }));
  const panels: Panel[] = [
    { title: "Worst sidelobe level over the grid", xLabel: "phase-shifter bits", yLabel: "PSL, dB (worst beam)", series: [...seriesFor("psl_db_max", "worst"), ...theory("theory_quantization_lobe_db", "quantisation lobe 2^(−2B) (theory)", "2 3")] },
    { title: "Sidelobe rise from quantisation", xLabel: "phase-shifter bits", yLabel: "PSL rise, dB", series: [...seriesFor("sll_rise_db_max", "worst"), ...seriesFor("sll_rise_db_p95", "p95", "3 3")] },
    { title: "Pointing error", xLabel: "phase-shifter bits", yLabel: "degrees", series: [...seriesFor("pointing_error_deg_max", "max"), ...seriesFor("pointing_error_deg_rms", "rms", "3 3")] },
    { title: "Gain loss at the commanded direction", xLabel: "phase-shifter bits", yLabel: "dB (positive = loss)", series: [...seriesFor("gain_loss_db_max", "max"), ...seriesFor("gain_loss_db_median", "median", "3 3"), ...seriesFor("theory_expected_gain_loss_db", "expected (phase + attenuator term)", "5 2 1 2"), ...theory("theory_gain_loss_db", "phase term alone (theory)", "2 3")] },
  ];
  const svg = chartSvg(`Bit-depth trade-off: ${typeof doc.name === "string" ? doc.name : "sweep"}`, panels, ["Theory curves: the estimates recorded in sweep.json for each row's quantizer (nearest: published; randomized: derived; sources in README, \"Theory beside measurement\")."]);
  const f = (x: unknown, d: number) => (Number.isFinite(n(x)) ? n(x).toFixed(d) : "n/a");
  const table = rows
    .map((r) => `<tr><td>${f(r.phase_bits, 0)}</td><td>${f(r.atten_step_db, 3)}</td><td>${esc(String(r.quantizer ?? "nearest"))}</td><td>${f(r.psl_db_max, 2)}</td><td>${f(r.sll_rise_db_p95, 2)}</td><td>${f(r.pointing_error_deg_max, 4)}</td><td>${f(r.gain_loss_db_median, 3)}</td><td>${f(r.theory_expected_gain_loss_db, 3)}</td><td>${f(r.theory_gain_loss_db, 3)}</td></tr>`)
    .join("");
  return `<section id="sweep"><h2>Choosing a part: the bit-depth sweep</h2><figure><div class="svg">${svg.replace(/^<\?xml[^>]*>/, "")}</div><figcaption>Worst and p95 sidelobe rise, pointing error and gain loss against phase bits, one line per attenuator step and quantizer, with the published theory.</figcaption></figure>
<table><thead><tr><th>bits</th><th>step dB</th><th>quantizer</th><th>PSL max dB</th><th>rise p95 dB</th><th>pointing max °</th><th>gain loss median dB</th><th>expected gain loss dB (phase + attenuator term)</th><th>phase term alone dB</th></tr></thead><tbody>${table}</tbody></table></section>`;
}

const CSS = `
:root{--ink:#1b1b1b;--muted:#5c5c5c;--line:#d6d3ca;--panel:#fbfaf7;--head:#23395b;--accent:#b5381f}
*{box-sizing:border-box}
body{font-family:"DejaVu Sans",Verdana,system-ui,sans-serif;margin:0 auto;padding:16px 20px 40px;max-width:1280px;color:var(--ink);background:#fff;font-size:14px;line-height:1.4}
h1{font-size:22px;border-bottom:3px solid var(--head);padding-bottom:6px;margin:8px 0 12px}
h2{font-size:17px;margin:26px 0 8px;color:var(--head)}h3{font-size:15px;color:var(--head)}
.beam-heading{font-size:18px;margin:10px 0 4px;color:var(--ink)}
table{border-collapse:collapse;font-size:12.5px;margin:6px 0;max-width:100%}td,th{border:1px solid var(--line);padding:3px 8px;text-align:right;vertical-align:top}
thead th{background:#eceae3}th[scope=row]{text-align:left;font-weight:600;background:#f6f5f1}.kv td{text-align:left}
td.src{text-align:left;color:var(--muted);font-size:11.5px}
figure{margin:12px 0;padding:10px;border:1px solid var(--line);background:var(--panel);min-width:0}figcaption{font-size:12.5px;margin-bottom:8px}
canvas,svg{max-width:100%;height:auto}
.grid2{display:grid;grid-template-columns:minmax(0,1fr) minmax(0,1fr);gap:12px}
@media (max-width:1000px){.grid2{grid-template-columns:minmax(0,1fr)}}
.stack{position:relative;display:inline-block;max-width:100%}.stack canvas{display:block}.stack canvas+canvas{position:absolute;left:0;top:0;width:100%;height:100%}
.cuts{display:grid;grid-template-columns:repeat(auto-fit,minmax(300px,1fr));gap:8px}
svg.cut{width:100%;font-size:11px;font-family:inherit}#phase-histogram svg{max-width:520px}svg .plot{fill:#fff;stroke:#8a8a8a}svg .gl{stroke:#e3e1da}
svg .ideal{fill:none;stroke:#6f6f6f;stroke-width:1.4;stroke-dasharray:5 3}svg .realized{fill:none;stroke:#1d3557;stroke-width:1.6}
svg .barfill{fill:#23395b}svg .lsb{stroke:var(--accent);stroke-dasharray:4 3}svg.changes{width:100%;font-size:11px}svg .changed rect{fill:#23395b}
.aps{display:grid;grid-template-columns:repeat(auto-fit,minmax(240px,1fr));gap:10px}.cap{font-size:12px;font-weight:600}
.maps{display:grid;grid-template-columns:repeat(auto-fit,minmax(300px,1fr));gap:10px}.gmap canvas{cursor:crosshair;width:100%}
.cbar{position:relative;width:240px;max-width:100%;margin:6px 0 22px;font-size:10.5px}.cbar .bar{height:11px;border:1px solid #666}
.cbar .bar-ticks{position:relative;height:12px}.cbar .bar-ticks span{position:absolute;transform:translateX(-50%);top:1px}.cbar .bar-unit{position:absolute;top:26px;left:0;color:var(--muted);white-space:nowrap}
.controls{display:flex;flex-wrap:wrap;gap:10px;align-items:center;padding:8px;background:#eceae3;border:1px solid var(--line)}
.controls select{max-width:320px;font:inherit}.controls button{font:inherit;padding:1px 8px}.hint{font-size:11.5px;color:var(--muted)}
.badge{display:inline-block;padding:3px 8px;font-size:12px;border:1px solid var(--line)}.badge.ok{border-color:#2f6f3e;color:#1f4f2b;background:#eef6ef}.badge.bad{border:2px solid var(--accent);color:var(--accent);font-weight:700}.badge.na{color:var(--muted)}
.safety{border-left:6px solid var(--accent);background:#fbf1ee;padding:10px 14px;font-size:13px;white-space:pre-line}
.note{font-size:11.5px;color:var(--muted)}code{font-size:12px}
a.beam-link{color:var(--head);font-weight:600}
@media print{.controls,.hint{display:none}body{max-width:none;padding:0}figure{break-inside:avoid;background:#fff}.safety{background:#fff}}
`;

/** The band analysis (manifest extra.band, from squint.csv): each beam's worst pointing and gain loss across the band. */
function bandPart(m: Manifest): string {
  const b = (m.extra as { band?: BandReport } | undefined)?.band;
  if (!b) return "";
  const ghz = (x: number | string | null) => (x === null ? "n/a" : `${Number((Number(x) / 1e9).toPrecision(9))} GHz`);
  const num = (x: number | null, d: number) => (x === null || !Number.isFinite(x) ? "n/a" : x.toFixed(d));
  const F = m.frequenciesHz;
  const beams = m.counts.beams;
  const dist = (label: string, d: BandReport["worstPointingDeg"], digits: number) => `<tr><th scope="row">${esc(label)}</th><td>${num(d.median, digits)}</td><td>${num(d.p95, digits)}</td><td>${num(d.max, digits)}</td></tr>`;
  const worst = (key: "worstPointingDeg" | "worstGainLossDb", at: "worstPointingAtHz" | "worstGainLossAtHz", digits: number, unit: string) =>
    b.perBeam
      .map((r, i) => ({ r, i }))
      .filter((x) => x.r[key] !== null)
      .sort((x, y) => y.r[key]! - x.r[key]! || x.i - y.i)
      .slice(0, 8)
      .map(({ r, i }) => {
        const fi = Math.floor(i / beams);
        return `<tr><td>${num(r[key], digits)} ${unit}</td><td><a class="beam-link" href="#f=${fi}&amp;beam=${r.beam}">beam ${r.beam}</a></td><td>${esc(ghz(F[fi] ?? null))} table</td><td>played at ${esc(ghz(r[at]))}</td></tr>`;
      })
      .join("");
  return `<section id="band"><h2>Across the band</h2><p>Every table played at ${b.frequenciesHz.length} band frequencies, ${esc(ghz(b.frequenciesHz[0]!))} to ${esc(ghz(b.frequenciesHz[b.frequenciesHz.length - 1]!))} (squint.csv): phase steering is not true time delay, so the beam squints away from the commanded direction off the table's frequency. Per beam, its worst value across the band:</p>
<table><thead><tr><th></th><th>median</th><th>p95</th><th>max</th></tr></thead><tbody>${dist("pointing error, deg", b.worstPointingDeg, 4)}${dist("gain loss, dB", b.worstGainLossDb, 3)}</tbody></table>
<h3>Beams that squint most</h3><table><tbody>${worst("worstPointingDeg", "worstPointingAtHz", 4, "°")}</tbody></table>
<h3>Beams that lose most gain across the band</h3><table><tbody>${worst("worstGainLossDb", "worstGainLossAtHz", 3, "dB")}</tbody></table></section>`;
}

export async function makeReport(dir: string, o: ReportOptions): Promise<{ html: string; beam: number | null; warnings: string[] }> {
  checkFolder(dir);
  const has = (name: string) => folderEntry(dir, name).kind === "file";
  const hasBuild = has("manifest.json");
  const hasSweep = has("sweep.json");
  const hasDiff = has("diff.json");
  if (!hasBuild && !hasSweep && !hasDiff) throw new InputError({ file: dir, message: "expected a steercode build folder (manifest.json), sweep folder (sweep.json) or diff folder (diff.json)" });
  const parts: string[] = [];
  let title = "steercode report";
  let beam: number | null = null;
  let data: PageData | null = null;
  const warnings: string[] = [];
  const m = hasBuild ? readManifest(dir) : null;
  if (m) {
    title = `steercode report: ${m.name || "build"}`;
    const r = buildPart(dir, m, o);
    parts.push(r.html);
    parts.push(bandPart(m));
    beam = r.beam;
    data = r.data;
    warnings.push(...r.warnings);
  }
  if (hasDiff) parts.push(comparisonPart(dir, m));
  if (hasSweep) {
    if (!m) title = "steercode sweep report";
    parts.push(sweepPart(dir));
  }
  const script = data ? `<script type="application/json" id="steercode-data">${scriptJson(data)}</script>\n<script>${(await explorerBundle()).replace(/<\/script/gi, "<\\/script")}</script>` : "";
  const html = `<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8">${REPORT_GENERATOR}<title>${esc(title)}</title>
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta http-equiv="Content-Security-Policy" content="default-src 'none'; script-src 'unsafe-inline' 'wasm-unsafe-eval'; style-src 'unsafe-inline'; img-src data:">
<style>${CSS}</style></head><body>
<h1>${esc(title)}</h1>
<div class="safety" id="safety">${esc(SAFETY)}</div>
${parts.join("\n")}
<p class="note">Generated by steercode ${esc(m?.tool.version ?? "")} from the files in this folder; the explorer recomputes each beam with steercode's own engine. Theory values are estimates for this quantizer and part (published, or derived here; "n/a" says why none applies), each named with its source in README.</p>
${script}
</body></html>
`;
  return { html, beam, warnings: [...(data?.crcProblem ? [data.crcProblem] : []), ...warnings] };
}

/**
 * Write atomically: a temporary file beside the target, renamed into place. If writing
 * fails (a full disk, ENOSPC; no permission) the temporary file is removed, the previous
 * report stays as it was, and the failure is an environment problem (InputError: exit 2).
 * `write` is a test hook (fault injection).
 */
export function writeReport(path: string, html: string, write: (file: string, data: string) => void = (f, d) => writeFileSync(f, d, { flag: "wx" })): void {
  const tmp = `${path}.steercode-tmp-${process.pid}`;
  try {
    rmSync(tmp, { force: true });
    write(tmp, html);
    renameSync(tmp, path);
  } catch (e) {
    rmSync(tmp, { force: true });
    const code = (e as NodeJS.ErrnoException).code;
    if (!code) throw e;
    const why = code === "ENOSPC" ? "no space left on the device" : code === "EDQUOT" ? "disk quota exceeded" : code === "EACCES" || code === "EPERM" ? "permission denied" : code === "EROFS" ? "read-only file system" : code;
    throw new InputError({ file: path, message: `cannot write the report: ${why} (${code}); nothing was written` });
  }
}
