/**
 * Test runs leave no temporary folders behind: every `tempDir` lies in the run's folder,
 * which the global set-up's teardown removes (before, each run left its folders in /tmp:
 * 3852 `steercode-test-*` and 2171 `steercode-bad-*` had piled up).
 */
import { chmodSync, existsSync, mkdirSync, readdirSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { basename, dirname, join } from "node:path";
import { describe, expect, inject, it } from "vitest";
import { tempDir } from "./helpers.js";
import { createRunRoot, removeRunRoot, RUN_ROOT_KEY, RUN_ROOT_PREFIX } from "./run-root.js";

describe("temporary folders of a test run", () => {
  it("tempDir makes its folders inside the run's folder, itself one folder in the system's temporary folder", () => {
    const root = inject(RUN_ROOT_KEY);
    expect(typeof root).toBe("string");
    expect(dirname(root)).toBe(tmpdir());
    expect(basename(root).startsWith(RUN_ROOT_PREFIX)).toBe(true);
    for (const prefix of [undefined, "steercode-bad-"]) {
      const d = tempDir(prefix);
      expect(dirname(d)).toBe(root);
      expect(existsSync(d)).toBe(true);
    }
  });

  it("the teardown removes the run's folder with everything in it, read-only folders included", () => {
    const parent = tempDir();
    const root = createRunRoot(parent);
    const ro = join(root, "a", "ro");
    mkdirSync(ro, { recursive: true });
    writeFileSync(join(ro, "f"), "x");
    chmodSync(ro, 0o555);
    chmodSync(join(root, "a"), 0o555);
    expect(removeRunRoot(root)).toBeNull();
    expect(existsSync(root)).toBe(false);
    expect(readdirSync(parent)).toEqual([]);
  });
});
