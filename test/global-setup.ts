// The CLI tests run the compiled command (bin/steercode.js → dist/); compile once first.
import { execFileSync } from "node:child_process";

export default function setup(): void {
  execFileSync("npm", ["run", "-s", "build"], { stdio: "inherit" });
}
