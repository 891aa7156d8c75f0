/**
 * Atomic output folders. Everything is written into a fresh sibling folder
 * `.<name>.steercode-tmp-<pid>-<n>`, then renamed into place. An existing target is
 * replaced only when it is an earlier output of the same command (its marker file —
 * manifest.json, sweep.json or diff.json — records which); anything else is refused
 * before a byte is written. On SIGINT/SIGTERM or an error
 * the temporary folder is removed and the previous output stays as it was.
 */
import { existsSync, lstatSync, mkdirSync, readdirSync, readFileSync, renameSync, rmSync, statSync } from "node:fs";
import { basename, dirname, join, resolve } from "node:path";
import { InputError } from "../core/errors.js";

export const MANIFEST_FORMATS = ["steercode-manifest/1", "steercode-sweep/1", "steercode-diff/1"];

/** The command that wrote an output folder; its marker file's `format` records it. */
export type OutputCommand = "build" | "sweep" | "diff";

const MARKERS: { command: OutputCommand; file: string; format: string; what: string }[] = [
  { command: "build", file: "manifest.json", format: "steercode-manifest/1", what: "a steercode build (manifest.json)" },
  { command: "sweep", file: "sweep.json", format: "steercode-sweep/1", what: "a steercode sweep (sweep.json)" },
  { command: "diff", file: "diff.json", format: "steercode-diff/1", what: "a steercode diff (diff.json)" },
];

/**
 * What an existing folder holds: "empty", the commands whose outputs it holds (a build
 * made with --compare also holds a diff.json: it counts as a build), or [] when it
 * holds no steercode marker (or one that cannot be read).
 */
export function outputCommands(dir: string): "empty" | OutputCommand[] {
  let entries: string[];
  try {
    entries = readdirSync(dir);
  } catch {
    return [];
  }
  if (entries.length === 0) return "empty";
  const found: OutputCommand[] = [];
  for (const m of MARKERS) {
    if (!entries.includes(m.file)) continue;
    try {
      const doc = JSON.parse(readFileSync(join(dir, m.file), "utf8")) as { format?: string };
      if (doc.format === m.format) found.push(m.command);
    } catch {
      /* not ours */
    }
  }
  return found.includes("build") ? ["build", ...found.filter((c) => c === "sweep")] : found;
}

/** Is `dir` a folder steercode wrote (or an empty folder)? */
export function isOurs(dir: string): boolean {
  const k = outputCommands(dir);
  return k === "empty" || k.length > 0;
}

/**
 * Refuse early (before any work) unless the target is new, empty, or an earlier output
 * of the same command: `sweep -o` never replaces a build's tables, `diff -o` never a
 * build, `build -o` never a sweep.
 */
/**
 * An output named by an empty string is refused (exit 2): resolve("") is the working folder,
 * so `-o "$UNSET"` wrote a build into it, reported as "wrote :", and a report or a
 * calibration failed with a message that named no file.
 */
export function refuseEmptyTarget(target: string, expected: string, hint = ""): void {
  if (target.trim() === "") throw new InputError({ file: "-o", message: `expected ${expected}, got an empty string${hint}` });
}

export function checkTarget(target: string, command: OutputCommand): void {
  refuseEmptyTarget(target, "a folder name", " (write -o . for the working folder)");
  const abs = resolve(target);
  // a link (dangling or not) is never written through nor replaced: the rename would replace the link itself
  if (isLink(abs)) throw new InputError({ file: target, message: "is a symbolic link; expected a new folder or an earlier steercode output (steercode does not write through links)" });
  if (!existsSync(abs)) {
    const parent = dirname(abs);
    if (!existsSync(parent)) throw new InputError({ file: target, message: `the parent folder ${parent} does not exist` });
    return;
  }
  if (!statSync(abs).isDirectory()) throw new InputError({ file: target, message: `exists and is not a folder; expected a new folder or an earlier steercode ${command} output` });
  const k = outputCommands(abs);
  if (k === "empty") return;
  if (!k.length) throw new InputError({ file: target, message: "exists and was not written by steercode (no steercode manifest inside); refusing to overwrite it. Choose another -o folder or remove it yourself" });
  if (k.length === 1 && k[0] === command) return;
  const what = k.map((c) => MARKERS.find((m) => m.command === c)!.what).join(" and ");
  throw new InputError({ file: target, message: `exists and holds ${what}; ${command} -o may replace only an earlier ${command} output, so nothing was written. Choose another -o folder` });
}

function isLink(abs: string): boolean {
  try {
    return lstatSync(abs).isSymbolicLink();
  } catch {
    return false;
  }
}

const ERRNO_TEXT: Record<string, string> = {
  EACCES: "permission denied",
  EPERM: "operation not permitted",
  EROFS: "read-only file system",
  ENOSPC: "no space left on device",
  EDQUOT: "disk quota exceeded",
  EIO: "input/output error",
  EMFILE: "too many open files",
  ENFILE: "too many open files in the system",
  ENOTDIR: "a part of the path is not a folder",
  ENOENT: "no such file or folder",
  ENAMETOOLONG: "file name too long",
  ELOOP: "too many levels of symbolic links",
  EEXIST: "already exists",
  ENOTEMPTY: "a folder appeared there meanwhile",
  EXDEV: "crosses file systems",
  EBUSY: "busy",
};

/** An error from the operating system (errno code), as opposed to a bug. */
export function isSystemError(e: unknown): e is NodeJS.ErrnoException {
  return e instanceof Error && typeof (e as NodeJS.ErrnoException).code === "string" && /^E[A-Z0-9]+$/.test((e as NodeJS.ErrnoException).code!) && typeof (e as NodeJS.ErrnoException).syscall === "string";
}

/** A failed write/rename/mkdir as an input/environment problem (exit 2) naming the output and the cause. */
export function writeProblem(e: NodeJS.ErrnoException, target: string, what = "cannot write the output"): InputError {
  const code = e.code ?? "";
  return new InputError({ file: target, message: `${what}: ${ERRNO_TEXT[code] ?? code} (${code}, ${e.syscall}${e.path ? ` ${e.path}` : ""}); nothing was written, an earlier output is unchanged` });
}

/**
 * `report -o FILE`: refuse (before any work) to replace anything but an earlier
 * steercode report, so a report never overwrites a manifest, a table or a scenario.
 */
export function checkReportTarget(out: string): void {
  refuseEmptyTarget(out, "a file name for the report (e.g. report.html)");
  if (!existsSync(out)) return;
  if (statSync(out).isDirectory()) throw new InputError({ file: out, message: "is a folder; expected a file name for the report (e.g. report.html)" });
  let head = "";
  try {
    head = readFileSync(out, "utf8").slice(0, 4096);
  } catch {
    /* unreadable: refused below */
  }
  if (REPORT_MARKER.test(head)) return;
  throw new InputError({ file: out, message: `exists and is not a steercode report${/\.json$/i.test(out) && /"format":\s*"steercode-/.test(head) ? " (it is a steercode output file)" : ""}; report -o may replace only an earlier report, so nothing was written. Choose another file name` });
}

/** The generator tag every report carries in its <head> (see makeReport). */
export const REPORT_GENERATOR = '<meta name="generator" content="steercode report">';
const REPORT_MARKER = /<meta name="generator" content="steercode report">|<title>steercode (?:sweep )?report/;

let counter = 0;
const live = new Set<string>();
let hooked = false;

function cleanupAll(): void {
  for (const d of live) rmSync(d, { recursive: true, force: true });
  live.clear();
}

let exitHooked = false;
/** Staging folders are removed when the process exits normally (any caller, the library too). */
function hookExit(): void {
  if (exitHooked) return;
  exitHooked = true;
  process.on("exit", cleanupAll);
}

/**
 * The command line's signal handling: SIGHUP/SIGINT/SIGQUIT/SIGTERM remove every staging
 * folder and exit 128 + signal. Only the CLI installs it; a program that imports the
 * library keeps its own signal handling (a staging folder it leaves is removed by the next
 * build to the same folder, see recoverStale).
 */
export function cleanUpOnSignals(): void {
  if (hooked) return;
  hooked = true;
  const codes = { SIGHUP: 129, SIGINT: 130, SIGQUIT: 131, SIGTERM: 143 } as const;
  for (const sig of Object.keys(codes) as (keyof typeof codes)[]) {
    process.on(sig, () => {
      cleanupAll();
      process.exit(codes[sig]);
    });
  }
  hookExit();
}

function alive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch (e) {
    return (e as NodeJS.ErrnoException).code === "EPERM";
  }
}

/**
 * What a process killed outright (SIGKILL, power loss) left behind. The commit is two
 * renames: target → `.NAME.steercode-old-PID-N`, then staging → target. A crash between
 * them leaves no target and the previous output in the `old` folder: it is renamed back
 * into place (the new build never reported success). An `old` folder beside a present
 * target (crash after the second rename) and every staging folder are removed.
 */
export function recoverStale(abs: string): void {
  const prefix = `.${basename(abs)}.steercode-`;
  let names: string[] = [];
  try {
    names = readdirSync(dirname(abs));
  } catch {
    return;
  }
  const stale = names
    .filter((n) => n.startsWith(prefix))
    .map((n) => ({ n, m: /steercode-(tmp|old)-(\d+)-\d+$/.exec(n) }))
    .filter((x) => x.m && !alive(Number(x.m[2])));
  // old folders first: one may have to be restored before the staging folders go
  for (const { n, m } of stale.sort((a, b) => (a.m![1] === b.m![1] ? 0 : a.m![1] === "old" ? -1 : 1))) {
    const p = join(dirname(abs), n);
    if (m![1] === "old" && !existsSync(abs) && !isLink(abs)) renameSync(p, abs);
    else rmSync(p, { recursive: true, force: true });
  }
}

export class StagedDir {
  readonly tmp: string;
  private done = false;
  constructor(readonly target: string, readonly command: OutputCommand) {
    hookExit();
    const abs = resolve(target);
    try {
      recoverStale(abs);
    } catch (e) {
      throw isSystemError(e) ? writeProblem(e, target, "cannot restore the earlier output left by an interrupted build") : e;
    }
    checkTarget(target, command);
    this.tmp = join(dirname(abs), `.${basename(abs)}.steercode-tmp-${process.pid}-${counter++}`);
    try {
      mkdirSync(this.tmp);
    } catch (e) {
      throw isSystemError(e) ? writeProblem(e, target, `cannot create a staging folder in ${dirname(abs)}`) : e;
    }
    live.add(this.tmp);
  }
  /** Move the staged folder into place, replacing an earlier steercode output. */
  commit(): void {
    const abs = resolve(this.target);
    // another build may commit to the same new target between our check and our rename
    // (ENOTEMPTY/EEXIST): look again and replace its output like any earlier one
    for (let attempt = 0; ; attempt++) {
      let old: string | null = null;
      try {
        if (existsSync(abs) || isLink(abs)) {
          checkTarget(this.target, this.command);
          old = join(dirname(abs), `.${basename(abs)}.steercode-old-${process.pid}-${counter++}`);
          renameSync(abs, old);
        }
        try {
          renameSync(this.tmp, abs);
        } catch (e) {
          if (old) renameSync(old, abs); // put the earlier output back
          throw e;
        }
      } catch (e) {
        const code = (e as NodeJS.ErrnoException).code;
        if ((code === "ENOTEMPTY" || code === "EEXIST" || (code === "ENOENT" && old)) && attempt < 8) continue;
        throw isSystemError(e) ? writeProblem(e, this.target) : e;
      }
      live.delete(this.tmp);
      this.done = true;
      if (old) rmSync(old, { recursive: true, force: true });
      return;
    }
  }
  abort(): void {
    if (this.done) return;
    rmSync(this.tmp, { recursive: true, force: true });
    live.delete(this.tmp);
  }
}
