/**
 * Atomic output folders. Everything is written into a fresh sibling folder
 * `.<name>.steercode-tmp-<pid>-<n>`, then renamed into place. An existing target is
 * replaced only when it is a steercode output (it holds a steercode manifest);
 * anything else is refused before a byte is written. On SIGINT/SIGTERM or an error
 * the temporary folder is removed and the previous output stays as it was.
 */
import { existsSync, mkdirSync, readdirSync, readFileSync, renameSync, rmSync, statSync } from "node:fs";
import { basename, dirname, join, resolve } from "node:path";
import { InputError } from "../core/errors.js";

export const MANIFEST_FORMATS = ["steercode-manifest/1", "steercode-sweep/1", "steercode-diff/1"];

/** Is `dir` a folder steercode wrote (or an empty folder)? */
export function isOurs(dir: string): boolean {
  try {
    const entries = readdirSync(dir);
    if (entries.length === 0) return true;
    for (const m of ["manifest.json", "sweep.json", "diff.json"]) {
      if (!entries.includes(m)) continue;
      const doc = JSON.parse(readFileSync(join(dir, m), "utf8")) as { format?: string };
      if (doc.format && MANIFEST_FORMATS.includes(doc.format)) return true;
    }
  } catch {
    return false;
  }
  return false;
}

/** Refuse early (before any work) when the target exists and is not ours. */
export function checkTarget(target: string): void {
  const abs = resolve(target);
  if (!existsSync(abs)) {
    const parent = dirname(abs);
    if (!existsSync(parent)) throw new InputError({ file: target, message: `the parent folder ${parent} does not exist` });
    return;
  }
  if (!statSync(abs).isDirectory()) throw new InputError({ file: target, message: "exists and is not a folder; expected a new folder or an earlier steercode output" });
  if (!isOurs(abs)) throw new InputError({ file: target, message: "exists and was not written by steercode (no steercode manifest inside); refusing to overwrite it. Choose another -o folder or remove it yourself" });
}

let counter = 0;
const live = new Set<string>();
let hooked = false;

function cleanupAll(): void {
  for (const d of live) rmSync(d, { recursive: true, force: true });
  live.clear();
}

function hookSignals(): void {
  if (hooked) return;
  hooked = true;
  for (const sig of ["SIGINT", "SIGTERM"] as const) {
    process.on(sig, () => {
      cleanupAll();
      process.exit(sig === "SIGINT" ? 130 : 143);
    });
  }
  process.on("exit", cleanupAll);
}

function alive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch (e) {
    return (e as NodeJS.ErrnoException).code === "EPERM";
  }
}

/** Staging folders left by a process that was killed outright (SIGKILL, power loss) are removed. */
function removeStale(abs: string): void {
  const prefix = `.${basename(abs)}.steercode-`;
  let names: string[] = [];
  try {
    names = readdirSync(dirname(abs));
  } catch {
    return;
  }
  for (const n of names) {
    if (!n.startsWith(prefix)) continue;
    const m = /steercode-(?:tmp|old)-(\d+)-\d+$/.exec(n);
    if (m && !alive(Number(m[1]))) rmSync(join(dirname(abs), n), { recursive: true, force: true });
  }
}

export class StagedDir {
  readonly tmp: string;
  private done = false;
  constructor(readonly target: string) {
    checkTarget(target);
    hookSignals();
    const abs = resolve(target);
    removeStale(abs);
    this.tmp = join(dirname(abs), `.${basename(abs)}.steercode-tmp-${process.pid}-${counter++}`);
    mkdirSync(this.tmp);
    live.add(this.tmp);
  }
  /** Move the staged folder into place, replacing an earlier steercode output. */
  commit(): void {
    const abs = resolve(this.target);
    let old: string | null = null;
    if (existsSync(abs)) {
      checkTarget(this.target);
      old = join(dirname(abs), `.${basename(abs)}.steercode-old-${process.pid}-${counter++}`);
      renameSync(abs, old);
    }
    renameSync(this.tmp, abs);
    live.delete(this.tmp);
    this.done = true;
    if (old) rmSync(old, { recursive: true, force: true });
  }
  abort(): void {
    if (this.done) return;
    rmSync(this.tmp, { recursive: true, force: true });
    live.delete(this.tmp);
  }
}
