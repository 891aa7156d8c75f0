import { constants, copyFileSync, existsSync, lstatSync, mkdirSync, readdirSync, rmdirSync, rmSync, type Stats } from "node:fs";
import { join, resolve } from "node:path";
import { fileURLToPath } from "node:url";
import { InputError } from "../core/errors.js";
import { isSystemError, MARKERS_WHAT, outputCommands, writeProblem } from "../io/outdir.js";
import { printJson, type Io } from "./shared.js";

export const DEMO_DIR = fileURLToPath(new URL("../../fixtures/demo/", import.meta.url));
const DEMO_FILES = ["scenario.json", "cal.csv", "range-rev-1.csv", "range-rev-2.csv"];

/**
 * The demo's files into `dir` (new, or a folder without them), all or none: `init ""` was
 * exit 3 (cp's EEXIST in the working folder), `init LINK` to a dangling link said
 * "no such file or folder (mkdir)", and `init BUILD` wrote the demo into a build folder
 * that the next `build -o BUILD` replaces, demo files and edits included.
 */
export function initCommand(io: Io, dir: string): number {
  if (dir.trim() === "") throw new InputError({ message: "init: expected a folder name for the demo, got an empty string (write . for the working folder)" });
  let st: Stats | null = null;
  try {
    st = lstatSync(dir);
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    if (code === "ENOTDIR") throw new InputError({ file: dir, message: "a part of the path is not a folder; expected a new folder or one without the demo's files" });
    if (code !== "ENOENT") throw e;
  }
  if (st?.isSymbolicLink()) throw new InputError({ file: dir, message: "is a symbolic link; expected a new folder or one without the demo's files (steercode does not write through links)" });
  if (st && !st.isDirectory()) throw new InputError({ file: dir, message: "exists and is not a folder; expected a new folder or one without the demo's files" });
  if (st) {
    if (readdirSync(dir).some((f) => DEMO_FILES.includes(f)))
      throw new InputError({ file: dir, message: `already holds ${DEMO_FILES.filter((f) => existsSync(join(dir, f))).join(", ")}; refusing to overwrite. Choose an empty or new folder` });
    const k = outputCommands(dir);
    if (k !== "empty" && k.length)
      throw new InputError({ file: dir, message: `holds ${k.map((c) => MARKERS_WHAT[c]).join(" and ")}; the next ${k[0]} -o there would replace the folder, the demo's files with it. Choose an empty or new folder` });
  }
  const created = st ? null : resolve(dir);
  const written: string[] = [];
  try {
    if (created) mkdirSync(created, { recursive: true });
    for (const f of DEMO_FILES) {
      copyFileSync(join(DEMO_DIR, f), join(dir, f), constants.COPYFILE_EXCL);
      written.push(f);
    }
  } catch (e) {
    // all or none: remove what this run wrote (and the folder it made)
    for (const f of written) rmSync(join(dir, f), { force: true });
    if (created) {
      try {
        rmdirSync(created);
      } catch {
        /* not empty (someone else wrote there) or already gone */
      }
    }
    if (isSystemError(e)) throw writeProblem(e, dir, "cannot write the demo");
    throw e;
  }
  if (io.json) printJson(io, { ok: true, dir, files: DEMO_FILES });
  else io.stdout(`wrote a demo scenario (invented data) to ${dir}: ${DEMO_FILES.join(", ")}\nnext: steercode check ${join(dir, "scenario.json")}\n`);
  return 0;
}
