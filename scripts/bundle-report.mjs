// Build step (npm run build / prepare): bundle the report page's script,
// src/report/explorer.ts with steercode's own engine code, into one browser file,
// dist/report/explorer.js, which `steercode report` inlines into report.html.
// From source (tests), src/report/page.ts calls bundleExplorer() directly.
// esbuild (a devDependency): it bundles TypeScript for the browser in ~100 ms.
import { mkdirSync, writeFileSync } from "node:fs";
import { fileURLToPath } from "node:url";

export const BANNER = "/*steercode-report-bundle*/";

export async function bundleExplorer() {
  const { build } = await import("esbuild");
  const r = await build({
    entryPoints: [fileURLToPath(new URL("../src/report/explorer.ts", import.meta.url))],
    bundle: true,
    format: "iife",
    platform: "browser",
    target: "es2020",
    minify: true,
    legalComments: "none",
    write: false,
    banner: { js: BANNER },
    logLevel: "silent",
  });
  return r.outputFiles[0].text;
}

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  const text = await bundleExplorer();
  mkdirSync(new URL("../dist/report/", import.meta.url), { recursive: true });
  writeFileSync(new URL("../dist/report/explorer.js", import.meta.url), text);
}
