// The CLI tests run the compiled command (bin/steercode.js → dist/); compile once first.
// Every temporary folder of the run goes into one folder (run-root.ts), removed at the end.
import { execFileSync } from "node:child_process";
import type { TestProject } from "vitest/node";
import { createRunRoot, removeRunRoot, RUN_ROOT_KEY } from "./run-root.js";

export default function setup(project: TestProject): () => void {
  execFileSync("npm", ["run", "-s", "build"], { stdio: "inherit" });
  const root = createRunRoot();
  project.provide(RUN_ROOT_KEY, root);
  return () => {
    const problem = removeRunRoot(root);
    if (problem) process.stderr.write(`steercode tests: ${problem}\n`);
  };
}
