/**
 * Tests that need a Debian tool (gcc, python3-scipy, chromium, iverilog, python3-intelhex …).
 *
 * On a machine without the tool such a test is skipped with a message naming the Debian
 * package to install; with STEERCODE_REQUIRE_TOOLS=1 (set by .ci/run) a missing tool is a
 * failure instead, so CI always runs every check.
 */
import { spawnSync } from "node:child_process";
import { existsSync } from "node:fs";
import { it } from "vitest";

export interface Tool {
  /** What to look for: an absolute path, or a command run with `probe` arguments. */
  command: string;
  /** Arguments that make the command succeed when it works (e.g. ["-c", "import scipy"]). */
  probe?: string[];
  /** The Debian package(s) that provide it. */
  debian: string;
}

export const TOOLS = {
  gcc: { command: "gcc", probe: ["--version"], debian: "gcc" },
  scipy: { command: "/usr/bin/python3", probe: ["-c", "import numpy, scipy.signal"], debian: "python3-scipy python3-numpy" },
  numpy: { command: "/usr/bin/python3", probe: ["-c", "import numpy"], debian: "python3-numpy" },
  chromium: { command: "/usr/bin/chromium", debian: "chromium" },
  iverilog: { command: "iverilog", probe: ["-V"], debian: "iverilog" },
  intelhex: { command: "/usr/bin/python3", probe: ["-c", "import intelhex"], debian: "python3-intelhex" },
} satisfies Record<string, Tool>;

const cache = new Map<Tool, boolean>();

export function hasTool(t: Tool): boolean {
  let ok = cache.get(t);
  if (ok === undefined) {
    if (t.probe === undefined) ok = existsSync(t.command);
    else {
      const r = spawnSync(t.command, t.probe, { stdio: "ignore", timeout: 30_000 });
      ok = r.status === 0;
    }
    cache.set(t, ok);
  }
  return ok;
}

export const REQUIRE_TOOLS = process.env.STEERCODE_REQUIRE_TOOLS === "1";

/**
 * `it` for a test that needs `tools`: runs when they are present; otherwise skipped with
 * a message naming the Debian package(s), or failed when STEERCODE_REQUIRE_TOOLS=1.
 */
export function itWith(tools: Tool[], name: string, fn: () => unknown | Promise<unknown>, timeout?: number): void {
  const missing = tools.filter((t) => !hasTool(t));
  if (missing.length === 0) {
    it(name, fn, timeout);
    return;
  }
  const pkgs = missing.map((t) => t.debian).join(" ");
  if (REQUIRE_TOOLS) {
    it(name, () => {
      throw new Error(`STEERCODE_REQUIRE_TOOLS=1 but a tool is missing: apt-get install ${pkgs}`);
    });
    return;
  }
  console.warn(`skipped (needs Debian package ${pkgs}: apt-get install ${pkgs}): ${name}`);
  it.skip(`${name} [skipped: apt-get install ${pkgs}]`, fn);
}
