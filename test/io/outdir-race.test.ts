/**
 * The commit's two renames (src/io/outdir.ts `StagedDir.commit`) when another build commits
 * to the same folder between them. Seen in faults.test.ts's six racing builds on a loaded
 * machine: `.out.steercode-old-PID-1` was left beside the output. Build A renamed the
 * earlier output away (out → old), build B renamed its staging folder to out, A's own rename
 * then failed (ENOTEMPTY), and so did putting the earlier output back (out exists again):
 * A retried and replaced B's output, and the first `old` folder stayed behind.
 * The interleaving is forced here by wrapping renameSync.
 */
import { mkdirSync, readdirSync, readFileSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { describe, expect, it, vi } from "vitest";
import { tempDir } from "../helpers.js";

const hook = vi.hoisted(() => ({ before: null as null | ((from: string, to: string) => void) }));
vi.mock("node:fs", async (importOriginal) => {
  const fs = await importOriginal<typeof import("node:fs")>();
  const renameSync: typeof fs.renameSync = (from, to) => {
    hook.before?.(String(from), String(to));
    fs.renameSync(from, to);
  };
  return { ...fs, default: { ...fs, renameSync }, renameSync };
});

const { StagedDir } = await import("../../src/io/outdir.js");

const output = (dir: string, who: string) => {
  mkdirSync(dir);
  writeFileSync(join(dir, "manifest.json"), JSON.stringify({ format: "steercode-manifest/1", who }));
};

describe("a build committing over another build's commit", () => {
  it("leaves one output (the last to commit) and no old or staging folder", () => {
    const d = tempDir();
    const out = join(d, "out");
    output(out, "earlier");
    const stage = new StagedDir(out, "build");
    writeFileSync(join(stage.tmp, "manifest.json"), JSON.stringify({ format: "steercode-manifest/1", who: "A" }));
    let raced = false;
    hook.before = (from, to) => {
      // build B commits just after A moved the earlier output away, before A's staging folder arrives
      if (!raced && from === stage.tmp && to === out) {
        raced = true;
        output(out, "B");
      }
    };
    try {
      stage.commit();
    } finally {
      hook.before = null;
    }
    expect(raced).toBe(true);
    expect(JSON.parse(readFileSync(join(out, "manifest.json"), "utf8")).who).toBe("A");
    expect(readdirSync(d)).toEqual(["out"]);
  });
});
