/**
 * One temporary folder per test run: every test's temporary folders (`tempDir` in
 * helpers.ts) are made inside it, and the global set-up's teardown removes it whole, so
 * a run leaves nothing in the system's temporary folder (the runs before this kept
 * every `steercode-test-*`, `steercode-bad-*` … folder: thousands in /tmp).
 */
import { chmodSync, lstatSync, mkdtempSync, readdirSync, rmSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";

/** The key under which the global set-up provides the run's folder to the test files (vitest `provide`/`inject`). */
export const RUN_ROOT_KEY = "steercodeRunRoot";
export const RUN_ROOT_PREFIX = "steercode-run-";

declare module "vitest" {
  export interface ProvidedContext {
    steercodeRunRoot: string;
  }
}

export function createRunRoot(parent = tmpdir()): string {
  const root = mkdtempSync(join(parent, RUN_ROOT_PREFIX));
  // world-traversable: faults.test.ts runs the command as `nobody` in a folder of its own inside
  chmodSync(root, 0o755);
  return root;
}

/** Give the owner write access to every folder below (a test makes read-only folders), then remove. */
function unprotect(p: string): void {
  let st;
  try {
    st = lstatSync(p);
  } catch {
    return;
  }
  if (!st.isDirectory()) return;
  try {
    chmodSync(p, 0o700);
  } catch {
    /* not ours: rmSync says so */
  }
  for (const e of readdirSync(p)) unprotect(join(p, e));
}

/** Removes the run's folder and everything in it; returns a problem's text, or null. */
export function removeRunRoot(root: string): string | null {
  try {
    rmSync(root, { recursive: true, force: true, maxRetries: 3 });
    return null;
  } catch {
    try {
      unprotect(root);
      rmSync(root, { recursive: true, force: true, maxRetries: 3 });
      return null;
    } catch (e) {
      return `could not remove the test run's temporary folder ${root}: ${(e as Error).message}`;
    }
  }
}
