import { cpSync, existsSync, readdirSync } from "node:fs";
import { join } from "node:path";
import { fileURLToPath } from "node:url";
import { InputError } from "../core/errors.js";
import { printJson, type Io } from "./shared.js";

export const DEMO_DIR = fileURLToPath(new URL("../../fixtures/demo/", import.meta.url));
const DEMO_FILES = ["scenario.json", "cal.csv", "range-rev-1.csv", "range-rev-2.csv"];

export function initCommand(io: Io, dir: string): number {
  if (existsSync(dir) && readdirSync(dir).some((f) => DEMO_FILES.includes(f)))
    throw new InputError({ file: dir, message: `already holds ${DEMO_FILES.filter((f) => existsSync(join(dir, f))).join(", ")}; refusing to overwrite. Choose an empty or new folder` });
  for (const f of DEMO_FILES) cpSync(join(DEMO_DIR, f), join(dir, f), { errorOnExist: true, force: false });
  if (io.json) printJson(io, { ok: true, dir, files: DEMO_FILES });
  else io.stdout(`wrote a demo scenario (invented data) to ${dir}: ${DEMO_FILES.join(", ")}\nnext: steercode check ${join(dir, "scenario.json")}\n`);
  return 0;
}
