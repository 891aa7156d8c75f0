import { readFileSync } from "node:fs";

let cached: string | null = null;
export function toolVersion(): string {
  if (!cached) cached = (JSON.parse(readFileSync(new URL("../../package.json", import.meta.url), "utf8")) as { version: string }).version;
  return cached;
}
