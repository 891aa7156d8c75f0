import { mkdtempSync, writeFileSync, mkdirSync } from "node:fs";
import { join } from "node:path";
import { spawnSync } from "node:child_process";
import { inject } from "vitest";
import { RUN_ROOT_KEY } from "./run-root.js";
import { loadScenario, type LoadedScenario } from "../src/io/scenario.js";

/**
 * A fresh folder inside the test run's folder (made by the global set-up, removed by its
 * teardown with everything in it): a test needs not clean up after itself.
 */
export function tempDir(prefix = "steercode-test-"): string {
  const root = inject(RUN_ROOT_KEY);
  if (!root) throw new Error("tempDir: no test run folder; run the tests with vitest (vitest.config.ts's globalSetup makes it)");
  return mkdtempSync(join(root, prefix));
}

/** A minimal valid scenario; override any top-level key. */
export function baseScenario(over: Record<string, unknown> = {}): Record<string, unknown> {
  return {
    format: "steercode-scenario/1",
    name: "test",
    frequency: "10 GHz",
    array: { lattice: { kind: "rectangular", columns: 8, rows: 1, dx: "0.5 lambda", dy: "0.5 lambda" } },
    beams: { kind: "uv", u: { from: 0, to: 0.5, step: 0.25 }, v: { from: 0, to: 0, step: 1 } },
    phaseShifter: { bits: 3 },
    attenuator: { bits: 6, step: "0.5 dB" },
    taper: { kind: "uniform" },
    quantizer: { method: "nearest" },
    word: { bits: 16, off: 0, fields: [{ name: "phase", shift: 0, width: 8 }, { name: "atten", shift: 8, width: 8 }] },
    outputs: ["csv", "bin", "c", "mem", "json"],
    ...over,
  };
}

/** Write a scenario (and side files) into a fresh folder; returns the scenario path. */
export function writeScenario(doc: unknown, files: Record<string, string> = {}, dir = tempDir()): string {
  mkdirSync(dir, { recursive: true });
  for (const [name, text] of Object.entries(files)) writeFileSync(join(dir, name), text);
  const p = join(dir, "scenario.json");
  writeFileSync(p, typeof doc === "string" ? doc : JSON.stringify(doc, null, 2));
  return p;
}

export function load(doc: Record<string, unknown>, files: Record<string, string> = {}): LoadedScenario {
  return loadScenario(writeScenario(doc, files));
}

export const BIN = join(import.meta.dirname, "..", "bin", "steercode.js");

export function cli(args: string[], opts: { cwd?: string; timeout?: number; env?: Record<string, string> } = {}): { code: number; stdout: string; stderr: string; ms: number } {
  const t0 = performance.now();
  const r = spawnSync(process.execPath, [BIN, ...args], { encoding: "utf8", cwd: opts.cwd, timeout: opts.timeout ?? 120_000, env: { ...process.env, NO_COLOR: "1", ...opts.env } });
  return { code: r.status ?? -1, stdout: r.stdout, stderr: r.stderr, ms: performance.now() - t0 };
}
