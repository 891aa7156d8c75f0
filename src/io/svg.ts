/**
 * Hand-written SVG charts (no plotting dependency: the figures are simple line charts
 * and the output must be byte-stable). Series are told apart by colour, marker and
 * dash, so they read in greyscale and for colour-blind readers.
 */
export interface Series {
  label: string;
  points: [number, number][];
  colour: string;
  dash?: string;
  marker?: "circle" | "square" | "triangle" | "diamond" | "none";
  width?: number;
}

export interface Panel {
  title: string;
  xLabel: string;
  yLabel: string;
  series: Series[];
  notes?: string[];
}

/** Our palette: dark-to-light steps, distinguishable without colour. */
export const PALETTE = ["#1d3557", "#c1121f", "#2a9d8f", "#e09f3e", "#6d597a", "#3a86ff"];
export const MARKERS: Series["marker"][] = ["circle", "square", "triangle", "diamond", "circle", "square"];

function esc(s: string): string {
  return s.replace(/&/g, "&amp;").replace(/</g, "&lt;").replace(/>/g, "&gt;");
}
const f = (x: number) => (Math.round(x * 100) / 100).toString();
const tick = (x: number) => String(Number(x.toPrecision(6)));

/** Round tick values from lo to hi, about n of them (also used by the report page's script). */
export function niceTicks(lo: number, hi: number, n = 5): number[] {
  if (!(hi > lo)) return [lo];
  const raw = (hi - lo) / n;
  const mag = 10 ** Math.floor(Math.log10(raw));
  const step = [1, 2, 2.5, 5, 10].map((m) => m * mag).find((s) => s >= raw) ?? raw;
  const out: number[] = [];
  for (let t = Math.ceil(lo / step) * step; t <= hi + 1e-9 * step; t += step) out.push(Math.abs(t) < step * 1e-9 ? 0 : t);
  return out;
}

function marker(kind: Series["marker"], x: number, y: number, c: string): string {
  switch (kind) {
    case "square":
      return `<rect x="${f(x - 3.5)}" y="${f(y - 3.5)}" width="7" height="7" fill="${c}"/>`;
    case "triangle":
      return `<path d="M${f(x)} ${f(y - 4.5)}L${f(x + 4)} ${f(y + 3)}L${f(x - 4)} ${f(y + 3)}Z" fill="${c}"/>`;
    case "diamond":
      return `<path d="M${f(x)} ${f(y - 4.5)}L${f(x + 4.5)} ${f(y)}L${f(x)} ${f(y + 4.5)}L${f(x - 4.5)} ${f(y)}Z" fill="none" stroke="${c}" stroke-width="1.5"/>`;
    case "none":
      return "";
    default:
      return `<circle cx="${f(x)}" cy="${f(y)}" r="3.5" fill="${c}"/>`;
  }
}

/** Legend rows under a panel: two entries a row. */
export function legendRows(p: Panel): number {
  return Math.ceil(p.series.length / 2);
}

export function panelSvg(p: Panel, x0: number, y0: number, w: number, h: number): string {
  const L = 62, R = 12, T = 30;
  const legendH = legendRows(p) * 14 + 6;
  const Bm = 44 + legendH;
  const pts = p.series.flatMap((s) => s.points).filter(([a, b]) => Number.isFinite(a) && Number.isFinite(b));
  let xl = Math.min(...pts.map((q) => q[0])), xh = Math.max(...pts.map((q) => q[0]));
  let yl = Math.min(...pts.map((q) => q[1])), yh = Math.max(...pts.map((q) => q[1]));
  if (!pts.length) { xl = 0; xh = 1; yl = 0; yh = 1; }
  if (xh === xl) { xl -= 0.5; xh += 0.5; }
  if (yh === yl) { yl -= 0.5; yh += 0.5; }
  const pad = (yh - yl) * 0.08;
  yl -= pad;
  yh += pad;
  const X = (x: number) => x0 + L + ((x - xl) / (xh - xl)) * (w - L - R);
  const Y = (y: number) => y0 + T + (1 - (y - yl) / (yh - yl)) * (h - T - Bm);
  const out: string[] = [];
  out.push(`<g class="panel"><rect x="${x0 + L}" y="${y0 + T}" width="${w - L - R}" height="${h - T - Bm}" fill="#fbfaf7" stroke="#8a8a8a"/>`);
  out.push(`<text x="${x0 + L}" y="${y0 + 18}" font-size="13" font-weight="600">${esc(p.title)}</text>`);
  for (const t of niceTicks(yl, yh)) {
    out.push(`<line x1="${x0 + L}" x2="${x0 + w - R}" y1="${f(Y(t))}" y2="${f(Y(t))}" stroke="#dddddd"/>`);
    out.push(`<text x="${x0 + L - 6}" y="${f(Y(t) + 4)}" font-size="10" text-anchor="end">${tick(t)}</text>`);
  }
  for (const t of niceTicks(xl, xh, Math.min(8, Math.round(xh - xl) || 5))) out.push(`<text x="${f(X(t))}" y="${y0 + h - Bm + 14}" font-size="10" text-anchor="middle">${tick(t)}</text>`);
  out.push(`<text x="${f(x0 + L + (w - L - R) / 2)}" y="${y0 + h - legendH - 12}" font-size="11" text-anchor="middle">${esc(p.xLabel)}</text>`);
  out.push(`<text transform="translate(${x0 + 14} ${f(y0 + T + (h - T - Bm) / 2)}) rotate(-90)" font-size="11" text-anchor="middle">${esc(p.yLabel)}</text>`);
  p.series.forEach((s) => {
    const good = s.points.filter(([a, b]) => Number.isFinite(a) && Number.isFinite(b));
    if (!good.length) return;
    const d = good.map(([a, b], i) => `${i ? "L" : "M"}${f(X(a))} ${f(Y(b))}`).join("");
    out.push(`<path d="${d}" fill="none" stroke="${s.colour}" stroke-width="${s.width ?? 1.8}"${s.dash ? ` stroke-dasharray="${s.dash}"` : ""}/>`);
    for (const [a, b] of good) out.push(marker(s.marker, X(a), Y(b), s.colour));
  });
  // legend under the plot, two entries a row, so it never hides a curve
  p.series.forEach((s, i) => {
    const ly = y0 + h - legendH + 8 + Math.floor(i / 2) * 14;
    const lx = x0 + L + (i % 2) * ((w - L - R) / 2);
    out.push(`<line x1="${lx}" x2="${lx + 22}" y1="${ly - 4}" y2="${ly - 4}" stroke="${s.colour}" stroke-width="${s.width ?? 1.8}"${s.dash ? ` stroke-dasharray="${s.dash}"` : ""}/>${marker(s.marker, lx + 11, ly - 4, s.colour)}`);
    out.push(`<text x="${lx + 28}" y="${ly}" font-size="10">${esc(s.label)}</text>`);
  });
  (p.notes ?? []).forEach((n, i) => out.push(`<text x="${x0 + L + 4}" y="${y0 + h - Bm - 6 - i * 12}" font-size="9" fill="#444">${esc(n)}</text>`));
  out.push("</g>");
  return out.join("\n");
}

export function chartSvg(title: string, panels: Panel[], footer: string[], cols = 2): string {
  const w = 520;
  const h = 300 + Math.max(...panels.map(legendRows)) * 14 + 6;
  const rows = Math.ceil(panels.length / cols);
  const W = cols * w, H = rows * h + 40 + footer.length * 14 + 10;
  const body = panels.map((p, i) => panelSvg(p, (i % cols) * w, 40 + Math.floor(i / cols) * h, w, h)).join("\n");
  const foot = footer.map((t, i) => `<text x="12" y="${40 + rows * h + 14 + i * 14}" font-size="10" fill="#333">${esc(t)}</text>`).join("\n");
  return `<svg xmlns="http://www.w3.org/2000/svg" width="${W}" height="${H}" viewBox="0 0 ${W} ${H}" font-family="DejaVu Sans, Verdana, sans-serif">
<rect width="${W}" height="${H}" fill="#ffffff"/>
<text x="12" y="26" font-size="16" font-weight="700">${esc(title)}</text>
${body}
${foot}
</svg>
`;
}
