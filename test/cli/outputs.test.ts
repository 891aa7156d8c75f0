/**
 * Who may replace what (issue 8 item 7; README "Output folders are written atomically"):
 * an output replaces only an earlier output of the same command; anything else is
 * refused with exit 2 before any work, naming what is there, and left byte for byte.
 */
import { readFileSync, readdirSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { beforeAll, describe, expect, it } from "vitest";
import { baseScenario, cli, tempDir, writeScenario } from "../helpers.js";

function snapshot(dir: string): Record<string, string> {
  const out: Record<string, string> = {};
  for (const f of readdirSync(dir, { recursive: true }) as string[]) {
    try {
      out[f] = readFileSync(join(dir, f)).toString("base64");
    } catch {
      /* folder */
    }
  }
  return out;
}

describe("-o replaces only an earlier output of the same command", () => {
  const t = tempDir();
  const A = join(t, "A"), B = join(t, "B"), S = join(t, "S"), D = join(t, "D");
  let scenario: string;
  beforeAll(() => {
    scenario = writeScenario(baseScenario(), {}, join(t, "in"));
    expect(cli(["build", scenario, "-o", A, "--no-analysis"]).code).toBe(0);
    expect(cli(["build", scenario, "-o", B, "--no-analysis"]).code).toBe(0);
    expect(cli(["sweep", scenario, "--phase-bits", "3", "-o", S]).code).toBe(0);
    expect(cli(["diff", A, B, "-o", D]).code).toBe(0);
  });

  it("sweep -o onto a build, build -o onto a sweep, diff -o onto a build: exit 2, named, nothing touched", () => {
    const a = snapshot(A), s = snapshot(S);
    let r = cli(["sweep", scenario, "--phase-bits", "3", "-o", A]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/A: exists and holds a steercode build \(manifest\.json\); sweep -o may replace only an earlier sweep output/);
    r = cli(["build", scenario, "-o", S]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/S: exists and holds a steercode sweep \(sweep\.json\); build -o may replace only an earlier build output/);
    r = cli(["diff", A, B, "-o", A]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/A: exists and holds a steercode build \(manifest\.json\); diff -o may replace only an earlier diff output/);
    r = cli(["build", scenario, "-o", D]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/D: exists and holds a steercode diff \(diff\.json\)/);
    expect(snapshot(A)).toEqual(a);
    expect(snapshot(S)).toEqual(s);
    expect(readdirSync(t).sort()).toEqual(["A", "B", "D", "S", "in"]); // no staging folder left
  });

  it("report -o onto the manifest is refused; an earlier report is replaced", () => {
    const m = readFileSync(join(A, "manifest.json"));
    const r = cli(["report", A, "-o", join(A, "manifest.json")]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/manifest\.json: exists and is not a steercode report/);
    expect(readFileSync(join(A, "manifest.json")).equals(m)).toBe(true);
    const rep = join(t, "r.html");
    expect(cli(["report", A, "-o", rep]).code).toBe(0);
    expect(cli(["report", A, "-o", rep]).code).toBe(0);
    writeFileSync(join(t, "notes.html"), "<html><title>my notes</title></html>");
    expect(cli(["report", A, "-o", join(t, "notes.html")]).code).toBe(2);
    expect(readFileSync(join(t, "notes.html"), "utf8")).toBe("<html><title>my notes</title></html>");
  });

  it("the same command replaces its own earlier output (build, sweep, diff)", () => {
    expect(cli(["build", scenario, "-o", A, "--no-analysis"]).code).toBe(0);
    expect(cli(["sweep", scenario, "--phase-bits", "4", "-o", S]).code).toBe(0);
    expect(cli(["diff", A, B, "-o", D]).code).toBe(0);
    expect(readdirSync(D).sort()).toEqual(["changes.csv", "diff.json"]);
  });
});
