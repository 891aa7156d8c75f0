/**
 * `steercode report`: one self-contained HTML file (inline CSS, SVG and PNG data
 * URIs; no scripts, fonts or network) for a build folder, a sweep folder or both.
 * Heat maps use our own colour ramp, whose lightness rises monotonically so that it
 * reads in greyscale and for colour-blind readers.
 */
import { existsSync, readFileSync, renameSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { parse } from "csv-parse/sync";
import { PNG } from "pngjs";
import { InputError } from "../core/errors.js";
import { BeamAnalyzer, METRICS, M } from "../core/pattern/analyze.js";
import { allocBeamCodes, makeQuantizer } from "../core/quantize/index.js";
import { theoryFor } from "../core/theory.js";
import type { Manifest } from "./build.js";
import { loadBuildScenario, readManifest } from "./readbuild.js";
import { chartSvg, PALETTE, type Panel } from "./svg.js";
import { SAFETY } from "../cli/shared.js";

/** Our ramp: dark indigo → slate blue → teal → green → pale straw (lightness increasing). */
export const RAMP: [number, number, number][] = [
  [27, 26, 58],
  [47, 75, 124],
  [31, 138, 138],
  [124, 196, 122],
  [242, 232, 160],
];

export function rampColour(t: number): [number, number, number] {
  const x = Math.max(0, Math.min(1, t)) * (RAMP.length - 1);
  const i = Math.min(RAMP.length - 2, Math.floor(x));
  const f = x - i;
  const a = RAMP[i]!, b = RAMP[i + 1]!;
  return [Math.round(a[0] + f * (b[0] - a[0])), Math.round(a[1] + f * (b[1] - a[1])), Math.round(a[2] + f * (b[2] - a[2]))];
}

/** PNG data URI of a grid (row 0 at the top), NaN cells light grey. */
export function heatPng(values: Float64Array | number[], w: number, h: number, lo: number, hi: number, scale = 1): string {
  const png = new PNG({ width: w * scale, height: h * scale });
  for (let y = 0; y < h * scale; y++)
    for (let x = 0; x < w * scale; x++) {
      const v = values[Math.floor(y / scale) * w + Math.floor(x / scale)]!;
      const o = (y * w * scale + x) * 4;
      const [r, g, b] = Number.isFinite(v) ? rampColour((v - lo) / (hi - lo || 1)) : [232, 232, 232];
      png.data[o] = r;
      png.data[o + 1] = g;
      png.data[o + 2] = b;
      png.data[o + 3] = 255;
    }
  return "data:image/png;base64," + PNG.sync.write(png).toString("base64");
}

/** A metric for prose: "n/a" when it does not exist (no sidelobe in visible space). */
function na(x: number, d: number): string {
  return Number.isFinite(x) ? x.toFixed(d) : "n/a";
}

function esc(s: string): string {
  return s.replace(/&/g, "&amp;").replace(/</g, "&lt;").replace(/>/g, "&gt;").replace(/"/g, "&quot;");
}

function colourBar(lo: number, hi: number, unit: string): string {
  const stops = RAMP.map((c, i) => `<stop offset="${(i / (RAMP.length - 1)).toFixed(2)}" stop-color="rgb(${c.join(",")})"/>`).join("");
  const id = `g${Math.round(lo * 1000)}_${Math.round(hi * 1000)}_${unit.length}`;
  return `<svg class="bar" width="260" height="34" viewBox="0 0 260 34"><defs><linearGradient id="${id}">${stops}</linearGradient></defs><rect x="10" y="4" width="240" height="12" fill="url(#${id})" stroke="#666"/><text x="10" y="30" font-size="10">${lo.toFixed(2)} ${esc(unit)}</text><text x="250" y="30" font-size="10" text-anchor="end">${hi.toFixed(2)} ${esc(unit)}</text></svg>`;
}

interface BeamRow { [k: string]: string }

function figure(id: string, title: string, body: string, caption: string): string {
  return `<figure id="${id}"><figcaption><strong>${esc(title)}</strong> ${esc(caption)}</figcaption>${body}</figure>`;
}

function histogramSvg(values: number[], lsbDeg: number): string {
  const finite = values.filter(Number.isFinite);
  const lim = finite.reduce((m, v) => Math.max(m, Math.abs(v)), lsbDeg / 2) * 1.05;
  const bins = 30;
  const counts = new Array<number>(bins).fill(0);
  for (const v of finite) counts[Math.min(bins - 1, Math.floor(((v + lim) / (2 * lim)) * bins))]!++;
  const max = Math.max(1, ...counts);
  const W = 520, H = 240, L = 50, B = 36, T = 12;
  const bw = (W - L - 10) / bins;
  const bars = counts.map((c, i) => `<rect x="${(L + i * bw).toFixed(1)}" y="${(T + (1 - c / max) * (H - T - B)).toFixed(1)}" width="${(bw - 1).toFixed(1)}" height="${((c / max) * (H - T - B)).toFixed(1)}" fill="${PALETTE[0]}"/>`).join("");
  const X = (v: number) => L + ((v + lim) / (2 * lim)) * (W - L - 10);
  const lsb = [-lsbDeg / 2, lsbDeg / 2].map((v) => `<line x1="${X(v).toFixed(1)}" x2="${X(v).toFixed(1)}" y1="${T}" y2="${H - B}" stroke="${PALETTE[1]}" stroke-dasharray="4 3"/>`).join("");
  return `<svg width="${W}" height="${H}" viewBox="0 0 ${W} ${H}" role="img" aria-label="phase error histogram"><rect x="${L}" y="${T}" width="${W - L - 10}" height="${H - T - B}" fill="#fbfaf7" stroke="#8a8a8a"/>${bars}${lsb}
<text x="${L}" y="${H - 20}" font-size="10">${(-lim).toFixed(2)}°</text><text x="${W - 10}" y="${H - 20}" font-size="10" text-anchor="end">${lim.toFixed(2)}°</text><text x="${(L + W) / 2}" y="${H - 6}" font-size="11" text-anchor="middle">phase error per element (deg); dashed: ±LSB/2</text><text x="${L - 6}" y="${T + 10}" font-size="10" text-anchor="end">${max}</text></svg>`;
}

export interface ReportOptions {
  beam: number | null;
  frequencyIndex: number | null;
}

export function makeReport(dir: string, o: ReportOptions): { html: string; beam: number | null } {
  const hasBuild = existsSync(join(dir, "manifest.json"));
  const hasSweep = existsSync(join(dir, "sweep.json"));
  if (!hasBuild && !hasSweep) throw new InputError({ file: dir, message: "expected a steercode build folder (manifest.json) or sweep folder (sweep.json)" });
  const sections: string[] = [];
  let title = "steercode report";
  let beamShown: number | null = null;
  if (hasBuild) {
    const m = readManifest(dir);
    title = `steercode report: ${m.name || "build"}`;
    const r = buildSections(dir, m, o);
    beamShown = r.beam;
    sections.push(...r.sections);
  }
  if (hasSweep) {
    const doc = JSON.parse(readFileSync(join(dir, "sweep.json"), "utf8")) as { name: string; rows: Record<string, number | string>[] };
    if (!hasBuild) title = `steercode sweep report: ${doc.name || "sweep"}`;
    const svg = readFileSync(join(dir, "sweep.svg"), "utf8");
    const rows = doc.rows
      .map((r) => `<tr><td>${r.phase_bits}</td><td>${r.atten_step_db}</td><td>${r.quantizer}</td><td>${Number(r.psl_db_max).toFixed(2)}</td><td>${Number(r.sll_rise_db_p95).toFixed(2)}</td><td>${Number(r.pointing_error_deg_max).toFixed(4)}</td><td>${Number(r.gain_loss_db_median).toFixed(3)}</td><td>${Number(r.theory_gain_loss_db).toFixed(3)}</td></tr>`)
      .join("");
    sections.push(figure("sweep", "Bit-depth trade-off.", `<div class="svg">${svg.replace(/^<\?xml[^>]*>/, "")}</div>`, "Worst and p95 sidelobe rise, pointing error and gain loss against phase bits, one line per attenuator step, with the published theory."));
    sections.push(`<section><h2>Sweep table</h2><table><tr><th>bits</th><th>step dB</th><th>quantizer</th><th>PSL max dB</th><th>rise p95 dB</th><th>pointing max °</th><th>gain loss median dB</th><th>theory sinc² dB</th></tr>${rows}</table></section>`);
  }
  const html = `<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8"><title>${esc(title)}</title>
<meta name="viewport" content="width=device-width, initial-scale=1">
<style>
body{font-family:"DejaVu Sans",Verdana,sans-serif;margin:24px auto;max-width:1120px;color:#1b1b1b;background:#fff}
h1{font-size:22px;border-bottom:3px solid #1d3557;padding-bottom:6px}h2{font-size:17px;margin-top:28px;color:#1d3557}
table{border-collapse:collapse;font-size:12px;margin:8px 0}td,th{border:1px solid #c9c9c9;padding:3px 8px;text-align:right}th{background:#eef1f5}
td.k{text-align:left;font-weight:600}
figure{margin:18px 0;padding:10px;border:1px solid #d8d8d8;background:#fcfcfb}figcaption{font-size:12px;margin-bottom:8px}
.row{display:flex;gap:18px;flex-wrap:wrap;align-items:flex-start}.map{position:relative;display:inline-block}
.map img{image-rendering:pixelated;display:block}.map svg{position:absolute;left:0;top:0}
.safety{border-left:6px solid #c1121f;background:#fff4f2;padding:10px 14px;font-size:13px;white-space:pre-line}
.note{font-size:11px;color:#444}
</style></head><body>
<h1>${esc(title)}</h1>
<div class="safety" id="safety">${esc(SAFETY)}</div>
${sections.join("\n")}
<p class="note">Generated by steercode from the files in this folder. Theory values are published estimates, each labelled with its source.</p>
</body></html>
`;
  return { html, beam: beamShown };
}

function buildSections(dir: string, m: Manifest, o: ReportOptions): { sections: string[]; beam: number } {
  const loaded = loadBuildScenario(dir, m);
  const plan = loaded.plan;
  const beamsCsv = existsSync(join(dir, "beams.csv")) ? (parse(readFileSync(join(dir, "beams.csv")), { columns: true }) as BeamRow[]) : null;
  const nb = plan.beams.count;
  let fi = o.frequencyIndex ?? 0;
  let beam = o.beam ?? 0;
  if (o.beam === null && beamsCsv) {
    // default: the beam with the largest sidelobe rise
    let worst = -Infinity;
    beamsCsv.forEach((r, i) => {
      const v = Number(r.sll_rise_db);
      if (r.sll_rise_db !== "" && v > worst) {
        worst = v;
        beam = i % nb;
        fi = o.frequencyIndex ?? Math.floor(i / nb);
      }
    });
  }
  if (beam < 0 || beam >= nb) throw new InputError({ file: dir, message: `--beam ${beam}: expected a beam from 0 to ${nb - 1}` });
  if (fi < 0 || fi >= plan.frequenciesHz.length) throw new InputError({ file: dir, message: `--frequency ${fi}: expected 0 to ${plan.frequenciesHz.length - 1}` });
  const an = new BeamAnalyzer(plan, fi);
  const q = makeQuantizer(plan, fi, an.prep);
  const codes = allocBeamCodes(plan.elements.count);
  q.beam(beam, codes);
  const met = new Float64Array(METRICS);
  an.analyse(beam, codes, met, 0);
  const det = an.detail();
  const cuts = an.cuts(401);
  const t = theoryFor(plan);
  const sections: string[] = [];
  const cal = m.calibration;
  const summary: [string, string][] = [
    ["scenario", `${m.scenario.source} (sha256 ${m.scenario.sha256.slice(0, 12)}…)`],
    ["elements", `${m.counts.elements} (${m.counts.enabledElements} enabled)${plan.lattice ? `, ${plan.lattice.kind} ${plan.lattice.columns} × ${plan.lattice.rows}` : ", element list"}`],
    ["beams × frequencies", `${m.counts.beams} × ${m.frequenciesHz.length} (${m.frequenciesHz.map((f) => (Number(f) / 1e9).toPrecision(6) + " GHz").join(", ")})`],
    ["phase shifter", `${m.phaseShifter.bits} bits, LSB ${m.phaseShifter.lsbDeg.toFixed(4)}°${m.phaseShifter.measuredStates ? ", measured states" : ""}`],
    ["attenuator", `${m.attenuator.bits} bits × ${m.attenuator.stepDb} dB (${m.attenuator.rangeDb.toFixed(2)} dB)${m.attenuator.measuredStates ? ", measured states" : ""}`],
    ["taper", JSON.stringify(m.taper)],
    ["quantizer", `${m.quantizer.method}${m.quantizer.seed !== null ? `, seed ${m.quantizer.seed}` : ""}`],
    ["calibration", cal ? `${cal.ref} (sha256 ${cal.sha256.slice(0, 12)}…) ${cal.comments.join(" | ")}` : "none"],
    ["G_ref, clipped", m.perFrequency.map((p) => `${p.gRefDb.toFixed(3)} dB, ${p.clipped} clipped`).join("; ")],
    ["table.bin CRC-32", m.files["table.bin"]?.crc32 ?? "(no table.bin)"],
  ];
  sections.push(`<section id="summary"><h2>Scenario</h2><table>${summary.map(([k, v]) => `<tr><td class="k">${esc(k)}</td><td style="text-align:left">${esc(v)}</td></tr>`).join("")}</table>
<table><tr><th>published estimate</th><th>value</th><th>source</th></tr>
<tr><td class="k">gain loss, phase quantisation</td><td>${t.gainLossDb.value.toFixed(3)} dB</td><td style="text-align:left">${esc(t.gainLossDb.source)}</td></tr>
<tr><td class="k">rms phase error LSB/√12</td><td>${t.rmsPhaseErrorDeg.value.toFixed(3)}°</td><td style="text-align:left">${esc(t.rmsPhaseErrorDeg.source)}</td></tr>
<tr><td class="k">rms amplitude error step/√12</td><td>${t.rmsAmpErrorDb.value.toFixed(3)} dB</td><td style="text-align:left">${esc(t.rmsAmpErrorDb.source)}</td></tr>
<tr><td class="k">random-error sidelobe floor σ²/(ηN)</td><td>${t.randomSidelobeFloorDb.value.toFixed(1)} dB</td><td style="text-align:left">${esc(t.randomSidelobeFloorDb.source)}</td></tr></table></section>`);
  // ---- heat map of the realized pattern
  const w = det.realized;
  // normalise to the largest sampled visible value (a loop: windows can hold 10^5 cells)
  let peak = 0;
  for (let k = 0; k < w.wm * w.wn; k++) if (w.visible[k] && w.p[k]! > peak) peak = w.p[k]!;
  const lo = -50;
  const vals = new Float64Array(w.wm * w.wn);
  for (let j = 0; j < w.wn; j++)
    for (let i = 0; i < w.wm; i++) {
      const src = j * w.wm + i;
      const dst = (w.wn - 1 - j) * w.wm + i; // v up
      vals[dst] = w.visible[src] ? Math.max(lo, 10 * Math.log10(w.p[src]! / peak + 1e-30)) : NaN;
    }
  const scale = Math.max(1, Math.floor(480 / Math.max(w.wm, w.wn)));
  const u0 = plan.beams.u[beam]!, v0 = plan.beams.v[beam]!;
  const W = w.wm * scale, H = w.wn * scale;
  const U = (u: number) => ((u - u0) / det.du - w.m0 + 0.5) * scale;
  const V = (v: number) => H - ((v - v0) / det.dv - w.n0 + 0.5) * scale;
  const pu = met[M.peak_u]!, pv = met[M.peak_v]!;
  const circle = Array.from({ length: 181 }, (_, k) => {
    const a = (2 * Math.PI * k) / 180;
    return `${k ? "L" : "M"}${U(Math.cos(a)).toFixed(1)} ${V(Math.sin(a)).toFixed(1)}`;
  }).join("");
  const overlay = `<svg width="${W}" height="${H}" viewBox="0 0 ${W} ${H}"><path d="${circle}" fill="none" stroke="#ffffff" stroke-width="2"/><path d="${circle}" fill="none" stroke="#111" stroke-width="1" stroke-dasharray="5 4"/>
<circle cx="${U(u0).toFixed(1)}" cy="${V(v0).toFixed(1)}" r="7" fill="none" stroke="#fff" stroke-width="2"/><path d="M${(U(pu) - 6).toFixed(1)} ${V(pv).toFixed(1)}h12M${U(pu).toFixed(1)} ${(V(pv) - 6).toFixed(1)}v12" stroke="#c1121f" stroke-width="2"/>
<text x="${W - 6}" y="${H - 6}" font-size="11" text-anchor="end" fill="#111">u →</text><text x="6" y="14" font-size="11" fill="#111">↑ v</text></svg>`;
  const beamLabel = `beam ${beam} (az ${plan.beams.azDeg[beam]!.toFixed(2)}°, el ${plan.beams.elDeg[beam]!.toFixed(2)}°; u ${u0.toFixed(4)}, v ${v0.toFixed(4)}) at ${(plan.frequenciesHz[fi]! / 1e9).toPrecision(6)} GHz`;
  sections.push(`<h2>Beam ${beam}</h2><p>${esc(beamLabel)}${o.beam === null ? " — the beam with the largest sidelobe rise (choose another with --beam N)" : ""}. Pointing error ${na(met[M.pointing_error_deg]!, 5)}°, PSL ${na(met[M.psl_db]!, 2)} dB (ideal ${na(met[M.psl_ideal_db]!, 2)} dB), gain loss ${na(met[M.gain_loss_db]!, 3)} dB, rms phase error ${na(met[M.rms_phase_error_deg]!, 3)}°.</p>`);
  sections.push(
    figure(
      "heatmap",
      "Realized pattern in u-v space.",
      `<div class="row"><div class="map"><img alt="realized pattern heat map" width="${W}" height="${H}" src="${heatPng(vals, w.wm, w.wn, lo, 0, scale)}">${overlay}</div>${colourBar(lo, 0, "dB")}</div>`,
      "|AF|² relative to the peak, clipped at −50 dB; dashed circle: the horizon (u² + v² = 1); white ring: commanded direction; red cross: realized peak.",
    ),
  );
  // ---- principal-plane cuts
  const cutPanels: Panel[] = (["u", "v"] as const).map((ax) => ({
    title: `Cut along ${ax} through the beam (${ax === "u" ? `v = ${v0.toFixed(3)}` : `u = ${u0.toFixed(3)}`})`,
    xLabel: ax,
    yLabel: "dB relative to peak",
    series: [
      { label: "ideal (tapered, unquantised)", points: cuts[ax].x.map((x, i) => [x, cuts[ax].ideal[i]!] as [number, number]), colour: "#777777", dash: "5 3", marker: "none", width: 1.4 },
      { label: "realized (codes, calibration)", points: cuts[ax].x.map((x, i) => [x, cuts[ax].realized[i]!] as [number, number]), colour: PALETTE[0]!, marker: "none", width: 1.4 },
    ],
  }));
  sections.push(figure("cuts", "Principal-plane cuts.", `<div class="svg">${chartSvg("Ideal vs realized", cutPanels, [])}</div>`, "Exact array factor (no grid), ideal and realized weights of this beam."));
  // ---- maps over the beam grid
  if (beamsCsv) {
    const spec = plan.beams.spec;
    const col = (name: string) => beamsCsv.slice(fi * nb, (fi + 1) * nb).map((r) => (r[name] === "" ? NaN : Number(r[name])));
    const maps: string[] = [];
    for (const [name, label, unit] of [["sll_rise_db", "Sidelobe rise", "dB"], ["pointing_error_deg", "Pointing error", "deg"]] as const) {
      const v = col(name);
      const finite = v.filter(Number.isFinite);
      if (!finite.length) {
        maps.push(`<div class="note">${esc(label)}: no beam has a value (no sidelobe in visible space)</div>`);
        continue;
      }
      const lo2 = finite.reduce((a, b) => Math.min(a, b)), hi2 = finite.reduce((a, b) => Math.max(a, b));
      if (spec.grid) {
        const gw = spec.inner.count, gh = spec.outer.count;
        const flipped = new Float64Array(gw * gh);
        for (let j = 0; j < gh; j++) for (let i = 0; i < gw; i++) flipped[(gh - 1 - j) * gw + i] = v[j * gw + i]!;
        const sc = Math.max(2, Math.floor(320 / Math.max(gw, gh)));
        maps.push(`<div><div class="map"><img alt="${esc(label)} over the beam grid" width="${gw * sc}" height="${gh * sc}" src="${heatPng(flipped, gw, gh, lo2, hi2, sc)}"></div>${colourBar(lo2, hi2, unit)}<div class="note">${esc(label)}; ${spec.kind === "azel" ? "az" : spec.kind === "uv" ? "u" : "θ"} → (${spec.inner.from} … step ${spec.inner.step}), ${spec.kind === "azel" ? "el" : spec.kind === "uv" ? "v" : "φ"} ↑ (${spec.outer.from} … step ${spec.outer.step})</div></div>`);
      } else {
        const az = Array.from(plan.beams.azDeg), el = Array.from(plan.beams.elDeg);
        const X = (a: number) => 20 + ((a + 90) / 180) * 300, Y = (e: number) => 320 - ((e + 90) / 180) * 300;
        const dots = v.map((x, i) => {
          const [r, g, b] = rampColour((x - lo2) / (hi2 - lo2 || 1));
          return `<circle cx="${X(az[i]!).toFixed(1)}" cy="${Y(el[i]!).toFixed(1)}" r="4" fill="rgb(${r},${g},${b})" stroke="#333" stroke-width="0.5"/>`;
        });
        maps.push(`<div><svg width="340" height="340" role="img" aria-label="${esc(label)} over the beams"><rect x="20" y="20" width="300" height="300" fill="#fbfaf7" stroke="#888"/>${dots.join("")}<text x="170" y="336" font-size="10" text-anchor="middle">az (deg)</text></svg>${colourBar(lo2, hi2, unit)}<div class="note">${esc(label)} per listed beam</div></div>`);
      }
    }
    sections.push(figure("beam-maps", "Maps over the beam grid.", `<div class="row">${maps.join("")}</div>`, "Sidelobe rise (realized − ideal PSL) and pointing error of every beam, from beams.csv."));
  }
  sections.push(figure("phase-histogram", "Per-element phase error.", histogramSvg(Array.from(det.phaseErrorDeg), m.phaseShifter.lsbDeg), `Realized minus ideal phase of every enabled element for beam ${beam}.`));
  return { sections, beam };
}

/** Write atomically: a temporary file beside the target, renamed into place. */
export function writeReport(path: string, html: string): void {
  const tmp = `${path}.steercode-tmp-${process.pid}`;
  writeFileSync(tmp, html);
  renameSync(tmp, path);
}
