/**
 * The report page: one self-contained file whose explorer runs steercode's own engine.
 * Browser tests drive Debian's headless Chromium (playwright-core, /usr/bin/chromium; CI
 * installs it): three routes to a beam, the deep link, the peak pixel at the realized
 * peak, no console errors, no request leaving the file, screenshots at 800 and 1400 px
 * (saved under test-artifacts/ for a person to look at).
 */
import { copyFileSync, mkdirSync, readFileSync, statSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { chromium, type Browser, type Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { baseScenario, cli, tempDir, writeScenario } from "../helpers.js";
import { hasTool, itWith, TOOLS } from "../tools.js";

const ROOT = join(import.meta.dirname, "..", "..");
const DEMO = join(ROOT, "fixtures", "demo", "scenario.json");
const ARTIFACTS = join(ROOT, "test-artifacts");

describe("report files", () => {
  const t = tempDir();
  const build = join(t, "build");
  const sweep = join(t, "sweep");

  it("is one self-contained file: inline script and style only, a CSP that forbids the network, the safety text", () => {
    expect(cli(["build", DEMO, "-o", build]).code).toBe(0);
    const r = cli(["report", build, "--json"]);
    expect(r.code).toBe(0);
    const html = readFileSync(join(build, "report.html"), "utf8");
    expect(html).not.toMatch(/<script[^>]+src=/i);
    expect(html).not.toMatch(/<link[^>]+href=/i);
    expect(html).not.toMatch(/(src|href)="(https?:)?\/\//i);
    expect(html).not.toMatch(/@import|url\(http/i);
    expect(html).toMatch(/Content-Security-Policy" content="default-src 'none'/);
    expect(html).toMatch(/RF safety/);
    // the taper and the part in words, not raw JSON
    const summary = /<section id="summary">[\s\S]*?<\/section>/.exec(html)![0];
    expect(summary).toMatch(/Taylor, -30 dB design sidelobes, n̄ = 4/);
    expect(summary).not.toMatch(/[{}]/);
    // stated bound for the demo (README): under 3 MB
    expect(statSync(join(build, "report.html")).size).toBeLessThan(3_000_000);
  });

  it("a bad --beam is exit 2 and names the range", () => {
    const r = cli(["report", build, "--beam", "9999"]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/--beam 9999: expected a beam from 0 to 132/);
  });

  it("a sweep folder's strings are escaped and its charts are drawn from numbers, not copied", () => {
    expect(cli(["sweep", DEMO, "--phase-bits", "4..5", "--atten-step", "0.5", "-o", sweep]).code).toBe(0);
    // a crafted sweep.json and sweep.svg: markup in a name and a row, script in the svg
    const doc = JSON.parse(readFileSync(join(sweep, "sweep.json"), "utf8"));
    doc.name = "<img src=x onerror=alert(1)>";
    doc.rows[0].quantizer = "</script><script>alert(2)</script>";
    writeFileSync(join(sweep, "sweep.json"), JSON.stringify(doc));
    writeFileSync(join(sweep, "sweep.svg"), '<svg><script>alert(3)</script></svg>');
    expect(cli(["report", sweep]).code).toBe(0);
    const html = readFileSync(join(sweep, "report.html"), "utf8");
    expect(html).not.toMatch(/<img src=x/);
    expect(html).not.toMatch(/<script>alert/);
    expect(html).toMatch(/&lt;img src=x onerror=alert\(1\)&gt;/);
  });
});

describe("report explorer in Chromium", () => {
  const t = tempDir();
  const build = join(t, "build");
  const list = join(t, "list");
  let browser: Browser | null = null;
  const errors: string[] = [];
  const requests: string[] = [];

  beforeAll(async () => {
    expect(cli(["build", DEMO, "-o", build]).code).toBe(0);
    expect(cli(["report", build]).code).toBe(0);
    if (hasTool(TOOLS.chromium))
      browser = await chromium.launch({ executablePath: TOOLS.chromium.command, args: ["--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run", "--disable-background-networking", "--disable-component-update", "--disable-sync"] });
  }, 120_000);
  afterAll(async () => {
    await browser?.close();
  });

  async function open(file: string, width: number, hash = ""): Promise<Page> {
    const page = await browser!.newPage({ viewport: { width, height: 1000 } });
    page.on("console", (m) => {
      if (m.type() === "error") errors.push(m.text());
    });
    page.on("pageerror", (e) => errors.push(String(e)));
    page.on("request", (r) => {
      if (!r.url().startsWith("file:") && !r.url().startsWith("data:")) requests.push(r.url());
    });
    await page.goto("file://" + file + hash);
    await page.waitForSelector("body.ready", { timeout: 30_000 });
    return page;
  }

  const heatHash = (page: Page) => page.evaluate(() => (document.getElementById("uv-heat") as HTMLCanvasElement).toDataURL());
  const heading = (page: Page) => page.locator("#beam-heading").textContent();

  itWith([TOOLS.chromium], "three routes to a beam: the list, a click on a grid map, the worst-beam table; the page and the address follow", async () => {
    const page = await open(join(build, "report.html"), 1400);
    const first = await heatHash(page);
    // route 1: the beam list
    await page.selectOption("#beam-select", "7");
    expect(await heading(page)).toMatch(/^beam 7 — az -10\.00°, el -30\.00° .* at 28 GHz$/);
    expect(page.url()).toMatch(/#f=0&beam=7$/);
    const second = await heatHash(page);
    expect(second).not.toBe(first);
    expect(await page.locator("#beam-metrics").textContent()).toMatch(/pointing error/);
    // route 2: click the cell of beam 100 on the sidelobe-rise map (grid: az inner, 19 values; el outer, 7)
    await page.locator("#map-sll_rise_db").scrollIntoViewIfNeeded();
    const cell = await page.evaluate(() => {
      const c = document.getElementById("map-sll_rise_db") as HTMLCanvasElement;
      const f = JSON.parse(c.dataset.frame!) as { x0: number; y0: number; w: number; h: number };
      const r = c.getBoundingClientRect();
      const i = 100 % 19, j = Math.floor(100 / 19);
      const x = f.x0 + ((i + 0.5) / 19) * f.w, y = f.y0 + f.h - ((j + 0.5) / 7) * f.h;
      return { x: r.left + (x / c.width) * r.width, y: r.top + (y / c.height) * r.height };
    });
    await page.mouse.click(cell.x, cell.y);
    expect(await heading(page)).toMatch(/^beam 100 — /);
    expect(await heatHash(page)).not.toBe(second);
    // route 3: the worst-beam table
    const link = page.locator("a.beam-link").nth(3);
    const target = (await link.textContent())!;
    await link.click();
    await page.waitForFunction((t) => document.getElementById("beam-heading")!.textContent!.startsWith(t + " "), target);
    expect(await page.locator("#crc-badge").textContent()).toMatch(/✓ codes match table\.bin/);
    await page.close();
    expect(errors).toEqual([]);
    expect(requests).toEqual([]);
  });

  itWith([TOOLS.chromium], "the deep link #f=K&beam=N opens at that beam; the pattern's peak pixel lies at the realized peak; metrics equal beams.csv", async () => {
    const page = await open(join(build, "report.html"), 1400, "#f=0&beam=41");
    expect(await heading(page)).toMatch(/^beam 41 — /);
    const r = await page.evaluate(() => {
      const c = document.getElementById("uv-heat") as HTMLCanvasElement;
      const f = JSON.parse(c.dataset.frame!) as { x0: number; y0: number; w: number; h: number; xlo: number; xhi: number; ylo: number; yhi: number };
      const n = Number(c.dataset.samples);
      const img = c.getContext("2d")!.getImageData(f.x0, f.y0, f.w, f.h);
      let best = -1, bx = 0, by = 0;
      for (let y = 0; y < f.h; y++)
        for (let x = 0; x < f.w; x++) {
          const o = (y * f.w + x) * 4;
          const [r, g, b] = [img.data[o]!, img.data[o + 1]!, img.data[o + 2]!];
          if (Math.max(r, g, b) - Math.min(r, g, b) < 12) continue; // neutral: outside visible space, axes
          const l = r + g + b; // the colour ramp's lightness rises monotonically with dB
          if (l > best) [best, bx, by] = [l, x, y];
        }
      const u = f.xlo + ((bx + 0.5) / f.w) * (f.xhi - f.xlo), v = f.yhi - ((by + 0.5) / f.h) * (f.yhi - f.ylo);
      return { u, v, cell: (f.xhi - f.xlo) / n, text: document.getElementById("beam-metrics")!.textContent! };
    });
    const row = readFileSync(join(build, "beams.csv"), "utf8").trim().split("\n")[1 + 41]!.split(",");
    const [pu, pv] = [Number(row[6]), Number(row[7])];
    expect(Math.abs(r.u - pu)).toBeLessThanOrEqual(1.5 * r.cell);
    expect(Math.abs(r.v - pv)).toBeLessThanOrEqual(1.5 * r.cell);
    // the page's engine gives beams.csv's numbers (same code, same inputs)
    expect(r.text).toContain(`${Number(row[8]).toFixed(4)}°`); // pointing error
    expect(r.text).toContain(`${Number(row[10]).toFixed(2)} dB`); // psl
    await page.close();
    expect(errors).toEqual([]);
  });

  itWith([TOOLS.chromium], "nothing is cut off at 800 px or 1400 px; screenshots saved as test artefacts", async () => {
    mkdirSync(ARTIFACTS, { recursive: true });
    for (const width of [800, 1400]) {
      const page = await open(join(build, "report.html"), width);
      const overflow = await page.evaluate(() => {
        const W = document.documentElement.clientWidth;
        return Array.from(document.querySelectorAll("canvas, svg, table, figure"))
          .filter((e) => e.getBoundingClientRect().right > W + 1)
          .map((e) => e.id || e.tagName);
      });
      expect(overflow, `overflowing at ${width}px`).toEqual([]);
      await page.screenshot({ path: join(ARTIFACTS, `report-demo-${width}.png`), fullPage: true });
      await page.close();
    }
    expect(errors).toEqual([]);
  });

  itWith([TOOLS.chromium], "two elements at broadside (no sidelobe in visible space): the page renders and says n/a", async () => {
    const s = writeScenario(baseScenario({ array: { lattice: { kind: "rectangular", columns: 2, rows: 1, dx: "0.5 lambda", dy: "0.5 lambda" } }, beams: { kind: "uv", u: { from: 0, to: 0, step: 1 }, v: { from: 0, to: 0, step: 1 } } }));
    const out = join(t, "two");
    expect(cli(["build", s, "-o", out]).code).toBe(0);
    expect(cli(["report", out]).code).toBe(0);
    const page = await open(join(out, "report.html"), 1000);
    expect(await page.locator("#beam-metrics").textContent()).toMatch(/PSL realizedn\/a dB/);
    await page.close();
    expect(errors).toEqual([]);
  });

  itWith([TOOLS.chromium], "with `devices` the aperture views box each beamformer device", async () => {
    const s = writeScenario(baseScenario({ devices: { channels: 4 } }));
    const out = join(t, "dev");
    expect(cli(["build", s, "-o", out]).code).toBe(0);
    expect(cli(["report", out]).code).toBe(0);
    const page = await open(join(out, "report.html"), 1000);
    expect(await page.locator("#ap-status").textContent()).toMatch(/dashed boxes: beamformer devices/);
    await page.close();
    expect(errors).toEqual([]);
  });

  itWith([TOOLS.chromium], "a beam list draws as a u-v scatter whose points pick beams", async () => {
    const s = writeScenario(baseScenario({ beams: { kind: "list", file: "beams.csv" } }), { "beams.csv": "u,v\n0,0\n0.3,0.1\n-0.4,0.2\n0.6,-0.3\n" });
    expect(cli(["build", s, "-o", list]).code).toBe(0);
    expect(cli(["report", list]).code).toBe(0);
    copyFileSync(join(list, "report.html"), join(t, "list.html"));
    const page = await open(join(t, "list.html"), 1000);
    await page.locator("#map-pointing_error_deg").scrollIntoViewIfNeeded();
    const pt = await page.evaluate(() => {
      const c = document.getElementById("map-pointing_error_deg") as HTMLCanvasElement;
      const f = JSON.parse(c.dataset.frame!) as { x0: number; y0: number; w: number; h: number };
      const r = c.getBoundingClientRect();
      const x = f.x0 + ((-0.4 + 1) / 2) * f.w, y = f.y0 + f.h - ((0.2 + 1) / 2) * f.h;
      return { x: r.left + (x / c.width) * r.width, y: r.top + (y / c.height) * r.height };
    });
    await page.mouse.click(pt.x, pt.y);
    expect(await heading(page)).toMatch(/^beam 2 — .*\(u -0\.4000, v 0\.2000\)/);
    await page.close();
    expect(errors).toEqual([]);
  });

  itWith([TOOLS.chromium], "an optimized build: the page's engine (in Chromium) finds the same optimized codes as the build (per-beam CRC of table.bin)", async () => {
    const s = writeScenario(baseScenario({
      array: { lattice: { kind: "rectangular", columns: 8, rows: 2, dx: "0.5 lambda", dy: "0.5 lambda" } },
      taper: { kind: "taylor", sidelobe: "-25 dB", nbar: 3 },
      quantizer: { method: "optimized", seed: 3 },
    }));
    const opt = join(t, "opt");
    expect(cli(["build", s, "-o", opt]).code).toBe(0);
    const changed = readFileSync(join(opt, "beams.csv"), "utf8").trim().split("\n").slice(1).map((l) => Number(l.split(",").at(-1)));
    expect(changed.some((c) => c > 0)).toBe(true); // the codes differ from nearest somewhere
    expect(cli(["report", opt]).code).toBe(0);
    copyFileSync(join(opt, "report.html"), join(t, "opt.html"));
    const page = await open(join(t, "opt.html"), 1000);
    for (const b of ["0", "1", "2"]) {
      await page.selectOption("#beam-select", b);
      expect(await page.locator("#crc-badge").textContent()).toMatch(/✓ codes match table\.bin/);
    }
    await page.close();
    expect(errors).toEqual([]);
  });
});
