/**
 * Atomic output folders. Everything is written into a fresh sibling folder
 * `.<name>.steercode-tmp-<pid>-<n>`, then renamed into place. An existing target is
 * replaced only when it is an earlier output of the same command (its marker file —
 * manifest.json, sweep.json or diff.json — records which); anything else is refused
 * before a byte is written. On SIGINT/SIGTERM or an error
 * the temporary folder is removed and the previous output stays as it was.
 */
import { closeSync, constants, existsSync, lstatSync, mkdirSync, openSync, readdirSync, readFileSync, readSync, renameSync, rmSync, statSync } from "node:fs";
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

/** "a steercode build (manifest.json)" … per command, for messages. */
export const MARKERS_WHAT = Object.fromEntries(MARKERS.map((m) => [m.command, m.what])) as Record<OutputCommand, string>;

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
 * A file output (`report -o`, `calibrate -o`), checked before any work: new (its folder
 * exists), or a regular file holding an earlier output of its kind (`ours` judges its
 * first 4 KiB). Refused: a symbolic link, dangling or not (the rename would replace the
 * link: `calibrate -o /dev/stdout` replaced the system's /dev/stdout link with a file), a
 * folder, a device, FIFO or socket (reading a FIFO's head waited for a writer for ever,
 * deaf to SIGTERM), and any other file (`calibrate -o build/table.bin` replaced a table).
 */
export function checkFileTarget(out: string, o: { expected: string; command: string; kind: string; short: string; ours: (head: string) => boolean; other?: (head: string) => string }): void {
  refuseEmptyTarget(out, o.expected);
  let st;
  try {
    st = lstatSync(out);
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    if (code === "ENOTDIR") throw new InputError({ file: out, message: `a part of the path is not a folder; expected ${o.expected}` });
    if (code !== "ENOENT") throw writeProblem(e as NodeJS.ErrnoException, out, "cannot check the output");
    const parent = dirname(resolve(out));
    if (!existsSync(parent) || !statSync(parent).isDirectory()) throw new InputError({ file: out, message: `the folder ${dirname(out)} does not exist` });
    return;
  }
  const expected = `expected a new file or an earlier ${o.short}`;
  if (st.isSymbolicLink()) throw new InputError({ file: out, message: `is a symbolic link; ${expected} (steercode does not write through links nor replace them)` });
  if (st.isDirectory()) throw new InputError({ file: out, message: `is a folder; expected ${o.expected}` });
  if (!st.isFile()) throw new InputError({ file: out, message: `is not a regular file (a device, FIFO or socket); ${expected}` });
  if (st.size === 0) return; // an empty file holds nothing to lose
  let head = "";
  let fd = -1;
  try {
    fd = openSync(out, constants.O_RDONLY | constants.O_NOFOLLOW | constants.O_NONBLOCK);
    const buf = Buffer.alloc(4096);
    head = buf.subarray(0, readSync(fd, buf, 0, buf.length, 0)).toString("utf8");
  } catch {
    /* unreadable: refused below */
  } finally {
    if (fd >= 0) closeSync(fd);
  }
  if (o.ours(head)) return;
  throw new InputError({ file: out, message: `exists and is not a ${o.kind}${o.other?.(head) ?? ""}; ${o.command} -o may replace only an earlier ${o.short}, so nothing was written. Choose another file name` });
}

/**
 * `report -o FILE`: refuse (before any work) to replace anything but an earlier
 * steercode report, so a report never overwrites a manifest, a table or a scenario.
 */
export function checkReportTarget(out: string): void {
  checkFileTarget(out, {
    expected: "a file name for the report (e.g. report.html)",
    command: "report",
    kind: "steercode report",
    short: "report",
    ours: (head) => REPORT_MARKER.test(head),
    other: (head) => (/\.json$/i.test(out) && /"format":\s*"steercode-/.test(head) ? " (it is a steercode output file)" : ""),
  });
}

/** `calibrate -o FILE`: a new file or a calibration file (after its `#` lines, a header naming element, phase_offset_deg and gain_offset_db). */
export function checkCalibrationTarget(out: string): void {
  refuseEmptyTarget(out, "a file name for the calibration (e.g. cal.csv)");
  // a build's recorded inputs (inputs/calibration.csv) or any file of an output folder: replacing it would falsify that output
  const folder = dirname(resolve(out));
  for (const dir of basename(folder) === "inputs" ? [folder, dirname(folder)] : [folder]) {
    const k = outputCommands(dir);
    if (k !== "empty" && k.length) throw new InputError({ file: out, message: `lies inside ${k.map((c) => MARKERS.find((m) => m.command === c)!.what).join(" and ")} at ${dir}; calibrate -o never writes into a steercode output (verify would then find its recorded inputs changed). Expected a file outside it (e.g. cal.csv)` });
  }
  checkFileTarget(out, {
    expected: "a file name for the calibration (e.g. cal.csv)",
    command: "calibrate",
    kind: "calibration file",
    short: "calibration file",
    ours: (head) => {
      const header = head.replace(/^\uFEFF/, "").split(/\r\n|\r|\n/).find((l) => !l.startsWith("#"));
      if (header === undefined) return false;
      const cells = header.split(",").map((c) => c.trim().replace(/^"(.*)"$/, "$1"));
      return ["element", "phase_offset_deg", "gain_offset_db"].every((c) => cells.includes(c));
    },
  });
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
          if (old) {
            try {
              renameSync(old, abs); // put the earlier output back
            } catch (back) {
              // another build's output arrived between our two renames: the earlier output is
              // superseded, drop it (it was left beside the target: test/io/outdir-race.test.ts), then retry
              const c = (back as NodeJS.ErrnoException).code;
              if (c !== "ENOTEMPTY" && c !== "EEXIST") throw back;
              rmSync(old, { recursive: true, force: true });
            }
          }
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
