/// <reference lib="dom" />
/**
 * The report page's script (bundled into report.html by scripts/bundle-report.mjs).
 *
 * It runs steercode's own engine in the browser: the recorded Plan is revived from the
 * page, each beam's codes come from the same quantizer the build used (checked against
 * the CRC-32 of that beam's words in table.bin, so the page shows the table's codes),
 * and patterns and metrics come from the same BeamAnalyzer that wrote beams.csv.
 */
import { BeamPacker } from "../core/engine.js";
import { BeamAnalyzer, METRICS, M } from "../core/pattern/analyze.js";
import type { Plan } from "../core/plan.js";
import { allocBeamCodes, makeQuantizer, type BeamCodes } from "../core/quantize/index.js";
import { crc32 } from "../core/crc32.js";
import { INK, RAMP, rampColour } from "./colours.js";
import { niceTicks as chartTicks } from "../io/svg.js";
import { reviveTyped, type PageData } from "./model.js";

const $ = <T extends HTMLElement = HTMLElement>(id: string): T => document.getElementById(id) as T;
const fmt = (x: number, d: number): string => (Number.isFinite(x) ? x.toFixed(d) : "n/a");
const esc = (s: string): string => s.replace(/&/g, "&amp;").replace(/</g, "&lt;").replace(/>/g, "&gt;").replace(/"/g, "&quot;");

function b64(s: string): Uint8Array {
  const bin = atob(s);
  const out = new Uint8Array(bin.length);
  for (let i = 0; i < bin.length; i++) out[i] = bin.charCodeAt(i);
  return out;
}

const data = JSON.parse($("steercode-data").textContent ?? "{}") as PageData;
const plan = reviveTyped(data.plan, b64) as Plan;
const F = plan.frequenciesHz.length;
const B = plan.beams.count;
const E = plan.elements.count;
const metrics = data.metrics ? new Float64Array(b64(data.metrics).buffer) : null;
const NC = data.metricColumns.length;
const crcs = data.crc ? new Uint32Array(b64(data.crc).buffer) : null;

// ---------------------------------------------------------------- engine
const analyzers = new Map<number, BeamAnalyzer>();
function analyzer(fi: number): BeamAnalyzer {
  let a = analyzers.get(fi);
  if (!a) {
    a = new BeamAnalyzer(plan, fi);
    analyzers.set(fi, a);
  }
  return a;
}
const codes: BeamCodes = allocBeamCodes(E);
const words = new Uint32Array(E);
const packer = new BeamPacker(plan);
const met = new Float64Array(METRICS);

interface Shown {
  fi: number;
  beam: number;
  crcOk: boolean | null;
  ms: number;
}
let shown: Shown = { fi: -1, beam: -1, crcOk: null, ms: 0 };

// ---------------------------------------------------------------- drawing helpers
/** The charts' tick values, printed to 6 significant digits. */
const niceTicks = (lo: number, hi: number, n = 5): number[] => chartTicks(lo, hi, n).map((t) => Number(t.toPrecision(6)));

interface Frame {
  x0: number;
  y0: number;
  w: number;
  h: number;
  xlo: number;
  xhi: number;
  ylo: number;
  yhi: number;
}
const fx = (f: Frame, x: number) => f.x0 + ((x - f.xlo) / (f.xhi - f.xlo)) * f.w;
const fy = (f: Frame, y: number) => f.y0 + f.h - ((y - f.ylo) / (f.yhi - f.ylo)) * f.h;

function axes(ctx: CanvasRenderingContext2D, f: Frame, xLabel: string, yLabel: string): void {
  ctx.save();
  ctx.strokeStyle = INK.axis;
  ctx.fillStyle = INK.text;
  ctx.lineWidth = 1;
  ctx.strokeRect(f.x0 + 0.5, f.y0 + 0.5, f.w, f.h);
  ctx.font = "11px sans-serif";
  ctx.textAlign = "center";
  ctx.textBaseline = "top";
  for (const t of niceTicks(f.xlo, f.xhi)) {
    const x = Math.round(fx(f, t)) + 0.5;
    ctx.beginPath();
    ctx.moveTo(x, f.y0 + f.h);
    ctx.lineTo(x, f.y0 + f.h + 5);
    ctx.stroke();
    ctx.fillText(String(t), x, f.y0 + f.h + 7);
  }
  ctx.fillText(xLabel, f.x0 + f.w / 2, f.y0 + f.h + 22);
  ctx.textAlign = "right";
  ctx.textBaseline = "middle";
  for (const t of niceTicks(f.ylo, f.yhi)) {
    const y = Math.round(fy(f, t)) + 0.5;
    ctx.beginPath();
    ctx.moveTo(f.x0 - 5, y);
    ctx.lineTo(f.x0, y);
    ctx.stroke();
    ctx.fillText(String(t), f.x0 - 7, y);
  }
  ctx.translate(12, f.y0 + f.h / 2);
  ctx.rotate(-Math.PI / 2);
  ctx.textAlign = "center";
  ctx.fillText(yLabel, 0, 0);
  ctx.restore();
}

function colourBar(el: HTMLElement, lo: number, hi: number, unit: string): void {
  const stops = RAMP.map((c, i) => `rgb(${c.join(",")}) ${((i / (RAMP.length - 1)) * 100).toFixed(0)}%`).join(",");
  const ticks = niceTicks(lo, hi, 4);
  el.innerHTML = `<div class="bar" style="background:linear-gradient(to right,${stops})"></div><div class="bar-ticks">${ticks
    .map((t) => `<span style="left:${(((t - lo) / (hi - lo || 1)) * 100).toFixed(1)}%">${t}</span>`)
    .join("")}</div><div class="bar-unit">${esc(unit)}</div>`;
}

// ---------------------------------------------------------------- u-v pattern
const UV_MARGIN = { l: 48, r: 12, t: 10, b: 40 };
const DB_FLOOR = -50;

function drawPattern(an: BeamAnalyzer, fi: number, b: number): void {
  const heat = $<HTMLCanvasElement>("uv-heat");
  const over = $<HTMLCanvasElement>("uv-overlay");
  const S = 360;
  const W = UV_MARGIN.l + S + UV_MARGIN.r, H = UV_MARGIN.t + S + UV_MARGIN.b;
  for (const c of [heat, over]) {
    c.width = W;
    c.height = H;
  }
  const f: Frame = { x0: UV_MARGIN.l, y0: UV_MARGIN.t, w: S, h: S, xlo: -1, xhi: 1, ylo: -1, yhi: 1 };
  heat.dataset.frame = JSON.stringify(f);
  // samples: as fine as the array's size allows within a fixed budget of evaluations
  const N = Math.max(60, Math.min(240, Math.floor(Math.sqrt(1.5e7 / Math.max(1, E)))));
  heat.dataset.samples = String(N);
  const pu = met[M.peak_u]!, pv = met[M.peak_v]!;
  const peak = an.powerAt(pu, pv, "realized");
  const img = new ImageData(N, N);
  for (let j = 0; j < N; j++) {
    const v = 1 - ((j + 0.5) / N) * 2;
    for (let i = 0; i < N; i++) {
      const u = -1 + ((i + 0.5) / N) * 2;
      const o = (j * N + i) * 4;
      if (u * u + v * v > 1) {
        img.data[o] = 206;
        img.data[o + 1] = 206;
        img.data[o + 2] = 206;
      } else {
        const db = 10 * Math.log10(an.powerAt(u, v, "realized") / peak + 1e-30);
        const [r, g, bb] = rampColour((Math.max(DB_FLOOR, db) - DB_FLOOR) / -DB_FLOOR);
        img.data[o] = r;
        img.data[o + 1] = g;
        img.data[o + 2] = bb;
      }
      img.data[o + 3] = 255;
    }
  }
  const off = document.createElement("canvas");
  off.width = N;
  off.height = N;
  off.getContext("2d")!.putImageData(img, 0, 0);
  const ctx = heat.getContext("2d")!;
  ctx.fillStyle = "#ffffff";
  ctx.fillRect(0, 0, W, H);
  ctx.imageSmoothingEnabled = false;
  ctx.drawImage(off, f.x0, f.y0, S, S);
  axes(ctx, f, "u = sin θ cos φ", "v = sin θ sin φ");
  // overlay: horizon, commanded direction, realized peak
  const o2 = over.getContext("2d")!;
  o2.clearRect(0, 0, W, H);
  o2.lineWidth = 1.5;
  o2.setLineDash([5, 4]);
  o2.strokeStyle = "#111111";
  o2.beginPath();
  o2.arc(fx(f, 0), fy(f, 0), S / 2, 0, 2 * Math.PI);
  o2.stroke();
  o2.setLineDash([]);
  const u0 = plan.beams.u[b]!, v0 = plan.beams.v[b]!;
  o2.strokeStyle = INK.commanded;
  o2.lineWidth = 2;
  o2.beginPath();
  o2.arc(fx(f, u0), fy(f, v0), 8, 0, 2 * Math.PI);
  o2.stroke();
  o2.strokeStyle = INK.accent;
  o2.beginPath();
  o2.moveTo(fx(f, pu) - 6, fy(f, pv));
  o2.lineTo(fx(f, pu) + 6, fy(f, pv));
  o2.moveTo(fx(f, pu), fy(f, pv) - 6);
  o2.lineTo(fx(f, pu), fy(f, pv) + 6);
  o2.stroke();
  colourBar($("uv-bar"), DB_FLOOR, 0, "dB relative to the realized peak");
  void fi;
}

// ---------------------------------------------------------------- cuts
function cutSvg(an: BeamAnalyzer, axis: "u" | "v", u0: number, v0: number, lo: number): string {
  const other = axis === "u" ? v0 : u0;
  const half = Math.sqrt(Math.max(0, 1 - other * other));
  const n = 401;
  const xs: number[] = [], ri: number[] = [], rr: number[] = [];
  const peak = Math.max(an.powerAt(met[M.peak_u]!, met[M.peak_v]!, "realized"), 1e-300);
  for (let i = 0; i < n; i++) {
    const t = -half + (2 * half * i) / (n - 1);
    const u = axis === "u" ? t : u0, v = axis === "v" ? t : v0;
    xs.push(t);
    rr.push(Math.max(lo, 10 * Math.log10(an.powerAt(u, v, "realized") / peak + 1e-30)));
    ri.push(Math.max(lo, 10 * Math.log10(an.powerAt(u, v, "ideal") / peak + 1e-30)));
  }
  const W = 440, H = 250;
  const f: Frame = { x0: 50, y0: 10, w: W - 62, h: H - 50, xlo: -1, xhi: 1, ylo: lo, yhi: 3 };
  const path = (ys: number[]) => ys.map((y, i) => `${i ? "L" : "M"}${fx(f, xs[i]!).toFixed(1)} ${fy(f, y).toFixed(1)}`).join("");
  const xt = niceTicks(-1, 1).map((t) => `<line x1="${fx(f, t).toFixed(1)}" x2="${fx(f, t).toFixed(1)}" y1="${f.y0}" y2="${f.y0 + f.h + 4}" class="gl"/><text x="${fx(f, t).toFixed(1)}" y="${f.y0 + f.h + 16}" text-anchor="middle">${t}</text>`).join("");
  const yt = niceTicks(lo, 0, 5).map((t) => `<line x1="${f.x0 - 4}" x2="${f.x0 + f.w}" y1="${fy(f, t).toFixed(1)}" y2="${fy(f, t).toFixed(1)}" class="gl"/><text x="${f.x0 - 7}" y="${(fy(f, t) + 4).toFixed(1)}" text-anchor="end">${t}</text>`).join("");
  const label = axis === "u" ? `along u at v = ${v0.toFixed(3)}` : `along v at u = ${u0.toFixed(3)}`;
  return `<svg viewBox="0 0 ${W} ${H}" class="cut" role="img" aria-label="cut ${label}"><rect x="${f.x0}" y="${f.y0}" width="${f.w}" height="${f.h}" class="plot"/>${xt}${yt}
<path d="${path(ri)}" class="ideal"/><path d="${path(rr)}" class="realized"/>
<text x="${f.x0 + f.w / 2}" y="${H - 8}" text-anchor="middle">${axis} (${label})</text><text transform="translate(12 ${f.y0 + f.h / 2}) rotate(-90)" text-anchor="middle">dB rel. realized peak</text></svg>`;
}

// ---------------------------------------------------------------- aperture
function drawAperture(canvas: HTMLCanvasElement, values: Float64Array, lo: number, hi: number, mark: (i: number) => "disabled" | "clipped" | null): void {
  const el = plan.elements;
  let xmin = Infinity, xmax = -Infinity, ymin = Infinity, ymax = -Infinity;
  for (let i = 0; i < E; i++) {
    xmin = Math.min(xmin, el.x[i]!);
    xmax = Math.max(xmax, el.x[i]!);
    ymin = Math.min(ymin, el.y[i]!);
    ymax = Math.max(ymax, el.y[i]!);
  }
  const span = Math.max(xmax - xmin, ymax - ymin, 1e-9);
  const S = 260, pad = 12;
  canvas.width = S + 2 * pad;
  canvas.height = S + 2 * pad;
  const ctx = canvas.getContext("2d")!;
  ctx.fillStyle = "#ffffff";
  ctx.fillRect(0, 0, canvas.width, canvas.height);
  // cell size from the nearest-neighbour spacing (sampled), capped
  let dmin = Infinity;
  for (let i = 0; i < Math.min(E, 64); i++)
    for (let j = 0; j < E; j++) {
      if (i === j) continue;
      const d = Math.hypot(el.x[i]! - el.x[j]!, el.y[i]! - el.y[j]!);
      if (d > 0 && d < dmin) dmin = d;
    }
  const scale = S / span;
  const cell = Math.max(1, Math.min(28, Number.isFinite(dmin) ? dmin * scale * 0.9 : 8));
  const X = (x: number) => pad + (x - (xmin + xmax) / 2) * scale + S / 2;
  const Y = (y: number) => pad + S / 2 - (y - (ymin + ymax) / 2) * scale;
  for (let i = 0; i < E; i++) {
    const [r, g, b] = rampColour((values[i]! - lo) / (hi - lo || 1));
    const x = X(el.x[i]!), y = Y(el.y[i]!);
    const m = mark(i);
    ctx.fillStyle = m === "disabled" ? "#f4f2ec" : `rgb(${r},${g},${b})`;
    ctx.fillRect(x - cell / 2, y - cell / 2, cell, cell);
    if (m === "disabled") {
      ctx.strokeStyle = INK.disabled;
      ctx.lineWidth = 1.2;
      ctx.beginPath();
      ctx.moveTo(x - cell / 2, y - cell / 2);
      ctx.lineTo(x + cell / 2, y + cell / 2);
      ctx.moveTo(x + cell / 2, y - cell / 2);
      ctx.lineTo(x - cell / 2, y + cell / 2);
      ctx.stroke();
    } else if (m === "clipped") {
      ctx.strokeStyle = INK.clipped;
      ctx.lineWidth = 2;
      ctx.strokeRect(x - cell / 2 + 1, y - cell / 2 + 1, cell - 2, cell - 2);
    }
  }
  // device boundaries: the scenario's `devices` assignment, else elements.csv's device column
  const devOf = plan.devices ? (i: number) => String(plan.devices!.device[i]) : el.device ? (i: number) => el.device![i]! : null;
  if (devOf) {
    const boxes = new Map<string, [number, number, number, number]>();
    for (let i = 0; i < E; i++) {
      const d = devOf(i);
      const bx = boxes.get(d) ?? [Infinity, Infinity, -Infinity, -Infinity];
      boxes.set(d, [Math.min(bx[0], X(el.x[i]!)), Math.min(bx[1], Y(el.y[i]!)), Math.max(bx[2], X(el.x[i]!)), Math.max(bx[3], Y(el.y[i]!))]);
    }
    ctx.strokeStyle = "#111111";
    ctx.setLineDash([3, 2]);
    ctx.lineWidth = 1;
    for (const [x0, y0, x1, y1] of boxes.values()) ctx.strokeRect(x0 - cell / 2 - 1, y0 - cell / 2 - 1, x1 - x0 + cell + 2, y1 - y0 + cell + 2);
    ctx.setLineDash([]);
  }
}

function apertureViews(an: BeamAnalyzer): void {
  const maxPhase = 2 ** plan.phaseBits - 1;
  const maxAtten = Math.max(1, 2 ** plan.attenBits - 1);
  const step = plan.attenStepDb;
  const en = plan.elements.enabled;
  const clippedAt = (i: number) => en[i] && plan.attenBits >= 0 && codes.attenDb[i]! / (step || 1) > maxAtten + 0.5;
  const mark = (i: number): "disabled" | "clipped" | null => (!en[i] ? "disabled" : clippedAt(i) ? "clipped" : null);
  const pc = Float64Array.from(codes.phaseCode);
  const ac = Float64Array.from(codes.attenCode);
  const pe = an.phaseErr;
  let peMax = 360 / 2 ** plan.phaseBits / 2;
  for (let i = 0; i < E; i++) if (en[i] && Number.isFinite(pe[i]!)) peMax = Math.max(peMax, Math.abs(pe[i]!));
  drawAperture($<HTMLCanvasElement>("ap-phase"), pc, 0, maxPhase, mark);
  colourBar($("ap-phase-bar"), 0, maxPhase, "phase code");
  drawAperture($<HTMLCanvasElement>("ap-atten"), ac, 0, maxAtten, mark);
  colourBar($("ap-atten-bar"), 0, maxAtten, `attenuation code (× ${step} dB)`);
  drawAperture($<HTMLCanvasElement>("ap-error"), pe, -peMax, peMax, mark);
  colourBar($("ap-error-bar"), -peMax, peMax, "phase error vs ideal, deg");
  let clipped = 0, disabled = 0;
  for (let i = 0; i < E; i++) {
    if (!en[i]) disabled++;
    else if (clippedAt(i)) clipped++;
  }
  $("ap-status").textContent = `${E} elements: ${disabled} disabled (crossed), ${clipped} clipped at the attenuator's last step (red outline)${plan.devices || plan.elements.device ? "; dashed boxes: beamformer devices" : ""}.`;
}

// ---------------------------------------------------------------- metrics, heading
/** The rms phase estimate that fits this build's quantizer and part (README, "Theory beside measurement"). */
function phaseTheoryText(): string {
  const lsb = 360 / 2 ** plan.phaseBits;
  if (plan.phaseStates || plan.attenStates) return "enabled elements; measured states: no uniform-step estimate applies";
  if (plan.quantizer.method === "randomized") return `enabled elements; LSB/√6 = ${fmt(lsb / Math.sqrt(6), 3)}° for randomized (stochastic) rounding, derived`;
  if (plan.quantizer.method === "nearest") return `enabled elements; LSB/√12 = ${fmt(lsb / Math.sqrt(12), 3)}° for nearest rounding`;
  return "enabled elements";
}

function metricsTable(fi: number, b: number): void {
  const row = (k: string, v: string, src: string) => `<tr><th scope="row">${esc(k)}</th><td>${v}</td><td class="src">${esc(src)}</td></tr>`;
  const csv = (col: string): number => {
    const c = data.metricColumns.indexOf(col);
    return metrics && c >= 0 ? metrics[(fi * B + b) * NC + c]! : NaN;
  };
  const extra = data.metricColumns
    .filter((c) => !["peak_u", "peak_v", "pointing_error_deg", "psl_ideal_db", "psl_db", "sll_rise_db", "gain_loss_db", "rms_phase_error_deg", "rms_amp_error_db", "clipped"].includes(c))
    .map((c) => row(c, fmt(csv(c), 3), "beams.csv"))
    .join("");
  $("beam-metrics").innerHTML = `<table class="metrics"><thead><tr><th>metric</th><th>value</th><th>how</th></tr></thead><tbody>
${row("pointing error", `${fmt(met[M.pointing_error_deg]!, 4)}°`, "angle between commanded direction and realized main-lobe peak")}
${row("realized peak (u, v)", `${fmt(met[M.peak_u]!, 5)}, ${fmt(met[M.peak_v]!, 5)}`, "exact array factor, refined")}
${row("PSL realized", `${fmt(met[M.psl_db]!, 2)} dB`, "largest lobe outside the main lobe, visible space incl. horizon")}
${row("PSL ideal", `${fmt(met[M.psl_ideal_db]!, 2)} dB`, "tapered, unquantised weights")}
${row("sidelobe rise", `${fmt(met[M.sll_rise_db]!, 2)} dB`, "realized − ideal")}
${row("gain loss", `${fmt(met[M.gain_loss_db]!, 3)} dB`, "at the commanded direction, referred to the tapered ideal: negative when clipped elements (more attenuation needed than the range) run louder than the taper asks")}
${row("rms phase error", `${fmt(met[M.rms_phase_error_deg]!, 3)}°`, phaseTheoryText())}
${row("rms amplitude error", `${fmt(met[M.rms_amp_error_db]!, 3)} dB`, "enabled elements, realized vs ideal; a clipped element adds its whole excess over the attenuator's range")}
${row("clipped elements", String(met[M.clipped]!), "attenuation past the attenuator's range")}
${extra}
${row("computed in", `${shown.ms.toFixed(0)} ms`, "this page, steercode's own engine")}
</tbody></table>`;
  const badge = $("crc-badge");
  if (shown.crcOk === null && data.crcProblem) {
    badge.className = "badge bad";
    badge.textContent = `✗ ${data.crcProblem}`;
  } else if (shown.crcOk === null) {
    badge.className = "badge na";
    badge.textContent = "codes recomputed by steercode's engine (no table.bin CRC in this folder to check them against)";
  } else if (shown.crcOk) {
    badge.className = "badge ok";
    badge.textContent = `✓ codes match table.bin (CRC-32 of this beam's ${E} words ${crcs![fi * B + b]!.toString(16).padStart(8, "0")})`;
  } else {
    badge.className = "badge bad";
    badge.textContent = "✗ the recomputed codes do NOT match table.bin for this beam: run steercode verify on this folder";
  }
}

function heading(fi: number, b: number): void {
  const bs = plan.beams;
  const fGHz = plan.frequenciesHz[fi]! / 1e9;
  $("beam-heading").textContent = `beam ${b} — az ${bs.azDeg[b]!.toFixed(2)}°, el ${bs.elDeg[b]!.toFixed(2)}° (u ${bs.u[b]!.toFixed(4)}, v ${bs.v[b]!.toFixed(4)}) at ${Number(fGHz.toPrecision(9))} GHz`;
  document.title = `beam ${b} at ${Number(fGHz.toPrecision(9))} GHz — ${data.title}`;
}

// ---------------------------------------------------------------- grid-wide maps
interface GridMap {
  col: string;
  canvas: HTMLCanvasElement;
  frame: Frame;
  pick: (x: number, y: number) => number;
}
const maps: GridMap[] = [];

function gridValues(fi: number, col: string): Float64Array {
  const c = data.metricColumns.indexOf(col);
  const out = new Float64Array(B).fill(NaN);
  if (!metrics || c < 0) return out;
  for (let b = 0; b < B; b++) out[b] = metrics[(fi * B + b) * NC + c]!;
  return out;
}

function drawGridMaps(fi: number, sel: number): void {
  const spec = plan.beams.spec;
  for (const m of maps) {
    const vals = gridValues(fi, m.col);
    let lo = Infinity, hi = -Infinity;
    for (const v of vals) if (Number.isFinite(v)) [lo, hi] = [Math.min(lo, v), Math.max(hi, v)];
    if (!(hi > lo)) [lo, hi] = [Number.isFinite(lo) ? lo - 1 : 0, Number.isFinite(lo) ? lo + 1 : 1];
    const ctx = m.canvas.getContext("2d")!;
    const W = 330, H = 300;
    m.canvas.width = W;
    m.canvas.height = H;
    ctx.fillStyle = "#ffffff";
    ctx.fillRect(0, 0, W, H);
    const f = m.frame;
    if (spec.grid) {
      const ni = spec.inner.count, no = spec.outer.count;
      const cw = f.w / ni, ch = f.h / no;
      for (let b = 0; b < B; b++) {
        const i = b % ni, j = Math.floor(b / ni);
        const v = vals[b]!;
        const [r, g, bb] = Number.isFinite(v) ? rampColour((v - lo) / (hi - lo)) : [217, 214, 207];
        ctx.fillStyle = `rgb(${r},${g},${bb})`;
        ctx.fillRect(f.x0 + i * cw, f.y0 + f.h - (j + 1) * ch, Math.ceil(cw), Math.ceil(ch));
      }
      const names: Record<string, [string, string]> = { azel: ["az (deg)", "el (deg)"], uv: ["u", "v"], thetaphi: ["θ (deg)", "φ (deg)"] };
      axes(ctx, f, names[spec.kind]![0], names[spec.kind]![1]);
      const i = sel % ni, j = Math.floor(sel / ni);
      ctx.strokeStyle = INK.accent;
      ctx.lineWidth = 2;
      ctx.strokeRect(f.x0 + i * cw - 1, f.y0 + f.h - (j + 1) * ch - 1, cw + 2, ch + 2);
    } else {
      ctx.fillStyle = "#fbfaf7";
      ctx.fillRect(f.x0, f.y0, f.w, f.h);
      ctx.strokeStyle = "#8a8a8a";
      ctx.beginPath();
      ctx.arc(fx(f, 0), fy(f, 0), f.w / 2, 0, 2 * Math.PI);
      ctx.stroke();
      for (let b = 0; b < B; b++) {
        const v = vals[b]!;
        const [r, g, bb] = Number.isFinite(v) ? rampColour((v - lo) / (hi - lo)) : [217, 214, 207];
        ctx.fillStyle = `rgb(${r},${g},${bb})`;
        ctx.beginPath();
        ctx.arc(fx(f, plan.beams.u[b]!), fy(f, plan.beams.v[b]!), B > 2000 ? 1.5 : 3.5, 0, 2 * Math.PI);
        ctx.fill();
      }
      axes(ctx, f, "u", "v");
      ctx.strokeStyle = INK.accent;
      ctx.lineWidth = 2;
      ctx.beginPath();
      ctx.arc(fx(f, plan.beams.u[sel]!), fy(f, plan.beams.v[sel]!), 7, 0, 2 * Math.PI);
      ctx.stroke();
    }
    colourBar($(`map-${m.col}-bar`), lo, hi, UNITS[m.col] ?? "");
  }
}

const UNITS: Record<string, string> = {
  sll_rise_db: "sidelobe rise, dB (realized − ideal PSL)",
  pointing_error_deg: "pointing error, deg",
  gain_loss_db: "gain loss at the commanded direction, dB",
  psl_db: "PSL, dB",
  scan_loss_db: "scan loss, dB (element pattern)",
};

function setupGridMaps(): void {
  const host = $("grid-maps");
  if (!metrics) {
    host.innerHTML = `<p class="note">No beams.csv in this folder (built with --no-analysis): grid-wide maps need the analysis.</p>`;
    return;
  }
  const spec = plan.beams.spec;
  const cols = ["sll_rise_db", "pointing_error_deg", "gain_loss_db", ...data.metricColumns.filter((c) => !["peak_u", "peak_v", "pointing_error_deg", "psl_ideal_db", "psl_db", "sll_rise_db", "gain_loss_db", "rms_phase_error_deg", "rms_amp_error_db", "clipped"].includes(c))];
  host.innerHTML = cols.map((c) => `<figure class="gmap"><figcaption>${esc(UNITS[c] ?? c)}</figcaption><canvas id="map-${c}" class="pick" width="330" height="300"></canvas><div id="map-${c}-bar" class="cbar"></div></figure>`).join("");
  for (const col of cols) {
    const canvas = $<HTMLCanvasElement>(`map-${col}`);
    let frame: Frame;
    let pick: (x: number, y: number) => number;
    if (spec.grid) {
      const ni = spec.inner.count, no = spec.outer.count;
      const a0 = Number(spec.inner.from), da = Number(spec.inner.step), b0 = Number(spec.outer.from), db = Number(spec.outer.step);
      frame = { x0: 52, y0: 10, w: 266, h: 246, xlo: a0 - da / 2, xhi: a0 + (ni - 0.5) * da, ylo: b0 - db / 2, yhi: b0 + (no - 0.5) * db };
      if (ni === 1) [frame.xlo, frame.xhi] = [a0 - 1, a0 + 1];
      if (no === 1) [frame.ylo, frame.yhi] = [b0 - 1, b0 + 1];
      pick = (x, y) => {
        const i = Math.floor(((x - frame.x0) / frame.w) * ni), j = Math.floor(((frame.y0 + frame.h - y) / frame.h) * no);
        return i >= 0 && i < ni && j >= 0 && j < no ? j * ni + i : -1;
      };
    } else {
      frame = { x0: 52, y0: 10, w: 246, h: 246, xlo: -1, xhi: 1, ylo: -1, yhi: 1 };
      pick = (x, y) => {
        const u = frame.xlo + ((x - frame.x0) / frame.w) * 2, v = frame.ylo + ((frame.y0 + frame.h - y) / frame.h) * 2;
        let best = -1, bd = Infinity;
        for (let b = 0; b < B; b++) {
          const d = (plan.beams.u[b]! - u) ** 2 + (plan.beams.v[b]! - v) ** 2;
          if (d < bd) [best, bd] = [b, d];
        }
        return best;
      };
    }
    canvas.dataset.frame = JSON.stringify(frame);
    maps.push({ col, canvas, frame, pick });
    canvas.addEventListener("click", (ev) => {
      const r = canvas.getBoundingClientRect();
      const x = ((ev.clientX - r.left) / r.width) * canvas.width, y = ((ev.clientY - r.top) / r.height) * canvas.height;
      const b = pick(x, y);
      if (b >= 0) select(shown.fi, b);
    });
  }
}

// ---------------------------------------------------------------- worst beams
function worstTable(): void {
  const host = $("worst");
  if (!metrics) {
    host.innerHTML = "";
    return;
  }
  const rows: string[] = [];
  for (const [col, label, unit, d] of [["sll_rise_db", "sidelobe rise", "dB", 2], ["pointing_error_deg", "pointing error", "°", 4], ["gain_loss_db", "gain loss", "dB", 3]] as const) {
    const c = data.metricColumns.indexOf(col);
    const idx: number[] = [];
    for (let k = 0; k < F * B; k++) if (Number.isFinite(metrics[k * NC + c]!)) idx.push(k);
    idx.sort((a, b) => metrics[b * NC + c]! - metrics[a * NC + c]!);
    for (const k of idx.slice(0, 3)) {
      const fi = Math.floor(k / B), b = k % B;
      rows.push(`<tr><td>${label}</td><td>${fmt(metrics[k * NC + c]!, d)} ${unit}</td><td><a class="beam-link" href="#f=${fi}&amp;beam=${b}">beam ${b}</a></td><td>${Number((plan.frequenciesHz[fi]! / 1e9).toPrecision(9))} GHz</td><td>az ${plan.beams.azDeg[b]!.toFixed(1)}°, el ${plan.beams.elDeg[b]!.toFixed(1)}°</td></tr>`);
    }
  }
  host.innerHTML = `<table><thead><tr><th>worst by</th><th>value</th><th>beam</th><th>frequency</th><th>direction</th></tr></thead><tbody>${rows.join("")}</tbody></table>`;
}

// ---------------------------------------------------------------- phase-error histogram
function histogram(an: BeamAnalyzer): string {
  const lsb = 360 / 2 ** plan.phaseBits;
  const vals: number[] = [];
  for (let i = 0; i < E; i++) if (plan.elements.enabled[i] && Number.isFinite(an.phaseErr[i]!)) vals.push(an.phaseErr[i]!);
  const lim = Math.max(lsb / 2, ...vals.map(Math.abs)) * 1.05;
  const bins = 30;
  const counts = new Array<number>(bins).fill(0);
  for (const v of vals) counts[Math.min(bins - 1, Math.floor(((v + lim) / (2 * lim)) * bins))]!++;
  const max = Math.max(1, ...counts);
  const W = 440, H = 220;
  const f: Frame = { x0: 46, y0: 10, w: W - 58, h: H - 50, xlo: -lim, xhi: lim, ylo: 0, yhi: max };
  const bw = f.w / bins;
  const bars = counts.map((c, i) => `<rect x="${(f.x0 + i * bw).toFixed(1)}" y="${fy(f, c).toFixed(1)}" width="${(bw - 1).toFixed(1)}" height="${(f.y0 + f.h - fy(f, c)).toFixed(1)}" class="barfill"/>`).join("");
  const xt = niceTicks(-lim, lim).map((t) => `<text x="${fx(f, t).toFixed(1)}" y="${f.y0 + f.h + 14}" text-anchor="middle">${t}</text>`).join("");
  const yt = niceTicks(0, max, 4).map((t) => `<text x="${f.x0 - 6}" y="${(fy(f, t) + 4).toFixed(1)}" text-anchor="end">${t}</text>`).join("");
  const lsbLines = [-lsb / 2, lsb / 2].map((v) => `<line x1="${fx(f, v).toFixed(1)}" x2="${fx(f, v).toFixed(1)}" y1="${f.y0}" y2="${f.y0 + f.h}" class="lsb"/>`).join("");
  return `<svg viewBox="0 0 ${W} ${H}" class="cut" role="img" aria-label="phase error histogram"><rect x="${f.x0}" y="${f.y0}" width="${f.w}" height="${f.h}" class="plot"/>${bars}${lsbLines}${xt}${yt}<text x="${f.x0 + f.w / 2}" y="${H - 8}" text-anchor="middle">phase error per enabled element (deg); dashed: ±LSB/2</text></svg>`;
}

// ---------------------------------------------------------------- selection
function select(fi: number, b: number, fromHash = false): void {
  if (!(Number.isInteger(fi) && fi >= 0 && fi < F && Number.isInteger(b) && b >= 0 && b < B)) return;
  const t0 = performance.now();
  const an = analyzer(fi);
  makeQuantizer(plan, fi, an.prep).beam(b, codes);
  packer.pack(codes, words);
  let crcOk: boolean | null = null;
  if (crcs) {
    const bytes = plan.word.bytes;
    const buf = new Uint8Array(E * bytes);
    for (let i = 0; i < E; i++) for (let k = 0; k < bytes; k++) buf[i * bytes + k] = (words[i]! >>> (8 * k)) & 0xff;
    crcOk = crc32(buf) === crcs[fi * B + b];
  }
  an.analyse(b, codes, met, 0);
  shown = { fi, beam: b, crcOk, ms: 0 };
  heading(fi, b);
  drawPattern(an, fi, b);
  const lo = -60;
  $("cuts").innerHTML = cutSvg(an, "u", plan.beams.u[b]!, plan.beams.v[b]!, lo) + cutSvg(an, "v", plan.beams.u[b]!, plan.beams.v[b]!, lo);
  apertureViews(an);
  $("phase-histogram").innerHTML = histogram(an);
  shown.ms = performance.now() - t0;
  document.body.dataset.ms = shown.ms.toFixed(1);
  metricsTable(fi, b);
  drawGridMaps(fi, b);
  $<HTMLSelectElement>("freq-select").value = String(fi);
  $<HTMLSelectElement>("beam-select").value = String(b);
  document.body.dataset.beam = String(b);
  document.body.dataset.frequency = String(fi);
  const hash = `#f=${fi}&beam=${b}`;
  if (!fromHash && location.hash !== hash) history.replaceState(null, "", hash);
}

function fromHash(): { fi: number; beam: number } | null {
  const m = /^#f=(\d+)&beam=(\d+)$/.exec(location.hash);
  return m ? { fi: Number(m[1]), beam: Number(m[2]) } : null;
}

function setup(): void {
  const fsel = $<HTMLSelectElement>("freq-select");
  fsel.innerHTML = plan.frequenciesHz.map((f, i) => `<option value="${i}">${Number((f / 1e9).toPrecision(9))} GHz</option>`).join("");
  const bsel = $<HTMLSelectElement>("beam-select");
  const opts: string[] = [];
  for (let b = 0; b < B; b++) opts.push(`<option value="${b}">beam ${b}: az ${plan.beams.azDeg[b]!.toFixed(1)}°, el ${plan.beams.elDeg[b]!.toFixed(1)}°</option>`);
  bsel.innerHTML = opts.join("");
  fsel.addEventListener("change", () => select(Number(fsel.value), shown.beam));
  bsel.addEventListener("change", () => select(shown.fi, Number(bsel.value)));
  $("prev-beam").addEventListener("click", () => select(shown.fi, Math.max(0, shown.beam - 1)));
  $("next-beam").addEventListener("click", () => select(shown.fi, Math.min(B - 1, shown.beam + 1)));
  window.addEventListener("hashchange", () => {
    const h = fromHash();
    if (h) select(h.fi, h.beam, true);
  });
  setupGridMaps();
  worstTable();
  const h = fromHash();
  if (h && h.fi < F && h.beam < B) select(h.fi, h.beam, true);
  else select(data.start.f, data.start.beam);
  document.body.classList.add("ready");
}

setup();
