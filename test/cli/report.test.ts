/**
 * Browser test: the report opens in Debian's headless Chromium (playwright-core driving
 * /usr/bin/chromium; CI installs it), renders without console errors, holds its figures,
 * and its screenshot is not blank.
 */
import { readFileSync } from "node:fs";
import { join } from "node:path";
import { PNG } from "pngjs";
import { chromium } from "playwright-core";
import { describe, expect, it } from "vitest";
import { cli, tempDir } from "../helpers.js";
import { itWith, TOOLS } from "../tools.js";

const DEMO = join(import.meta.dirname, "..", "..", "fixtures", "demo", "scenario.json");
const CHROMIUM = "/usr/bin/chromium";

describe("report", () => {
  const t = tempDir();
  const build = join(t, "build");
  const sweep = join(t, "sweep");

  it("is one self-contained file: no external scripts, stylesheets, fonts or network", () => {
    expect(cli(["build", DEMO, "-o", build]).code).toBe(0);
    const r = cli(["report", build, "--json"]);
    expect(r.code).toBe(0);
    const html = readFileSync(join(build, "report.html"), "utf8");
    expect(html).not.toMatch(/<script/i);
    expect(html).not.toMatch(/(src|href)="(https?:)?\/\//i);
    expect(html).not.toMatch(/@import|url\(http/i);
    expect(html).toMatch(/RF safety/);
    expect(html).toMatch(/data:image\/png;base64,/);
  });

  it("a bad --beam is exit 2 and names the range", () => {
    const r = cli(["report", build, "--beam", "9999"]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/--beam 9999: expected a beam from 0 to 132/);
  });

  itWith([TOOLS.chromium], "renders in headless Chromium with no console errors, every figure present, not blank", async () => {
    expect(cli(["sweep", DEMO, "--phase-bits", "4..6", "--atten-step", "0.5,1", "-o", sweep]).code).toBe(0);
    expect(cli(["report", sweep, "-o", join(sweep, "report.html")]).code).toBe(0);
    const browser = await chromium.launch({
      executablePath: CHROMIUM,
      args: ["--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run", "--disable-background-networking", "--disable-component-update", "--disable-sync"],
    });
    try {
      for (const [file, figures] of [[join(build, "report.html"), ["#summary", "#heatmap img", "#cuts svg", "#beam-maps img", "#phase-histogram svg", "#safety"]], [join(sweep, "report.html"), ["#sweep svg", "#safety"]]] as const) {
        const page = await browser.newPage({ viewport: { width: 1200, height: 1600 } });
        const errors: string[] = [];
        page.on("console", (m) => { if (m.type() === "error") errors.push(m.text()); });
        page.on("pageerror", (e) => errors.push(String(e)));
        const requests: string[] = [];
        page.on("request", (r) => { if (!r.url().startsWith("file:") && !r.url().startsWith("data:")) requests.push(r.url()); });
        await page.goto("file://" + file);
        for (const sel of figures) expect(await page.locator(sel).count(), `${file} ${sel}`).toBeGreaterThan(0);
        // every image decoded
        const broken = await page.evaluate(() => Array.from(document.images).filter((i) => !i.complete || i.naturalWidth === 0).length);
        expect(broken).toBe(0);
        const shot = PNG.sync.read(await page.screenshot({ fullPage: true }));
        // not blank: many distinct colours and a fair share of non-white pixels
        const colours = new Set<number>();
        let ink = 0;
        for (let i = 0; i < shot.data.length; i += 4 * 7) {
          const c = (shot.data[i]! << 16) | (shot.data[i + 1]! << 8) | shot.data[i + 2]!;
          colours.add(c);
          if (c !== 0xffffff) ink++;
        }
        expect(colours.size).toBeGreaterThan(50);
        expect(ink / (shot.data.length / 28)).toBeGreaterThan(0.05);
        expect(errors).toEqual([]);
        expect(requests).toEqual([]);
        await page.close();
      }
    } finally {
      await browser.close();
    }
  });
});
