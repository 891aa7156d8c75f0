/**
 * Command-line conventions, through the built command: help and version everywhere,
 * did-you-mean for mistyped commands and options (exit 2), `help <command>`, shell
 * completion, `report --frequency` by index or by value, `--compare` checked before work.
 */
import { existsSync, readFileSync, readdirSync, writeFileSync } from "node:fs";
import { dirname, join } from "node:path";
import { describe, expect, it } from "vitest";
import { baseScenario, cli, tempDir, writeScenario } from "../helpers.js";

const ROOT = join(import.meta.dirname, "..", "..");
const DEMO = join(ROOT, "fixtures", "demo", "scenario.json");
const VERSION = (JSON.parse(readFileSync(join(ROOT, "package.json"), "utf8")) as { version: string }).version;
const COMMANDS = ["init", "check", "build", "sweep", "diff", "verify", "report"];

describe("help and version", () => {
  it("-v and --version print the package version", () => {
    for (const f of ["-v", "--version"]) {
      const r = cli([f]);
      expect(r.code).toBe(0);
      expect(r.stdout.trim()).toBe(VERSION);
    }
  });

  for (const c of COMMANDS) {
    it(`${c}: -h and --help show a description for every positional and option, and an example`, () => {
      const a = cli([c, "-h"]);
      const b = cli([c, "--help"]);
      expect(a.code).toBe(0);
      expect(a.stdout).toBe(b.stdout);
      expect(a.stdout).toMatch(/\nExamples:\n/);
      // every line that starts an option or positional carries words after its name
      const lines = a.stdout.split("\n");
      const start = lines.findIndex((l) => /^(Positionals|Options):/.test(l));
      const end = lines.findIndex((l) => l.startsWith("Examples:"));
      let entries = 0;
      for (const l of lines.slice(start, end)) {
        const m = /^\s+(-\w, )?(--?[\w-]+|\w+)\s{2,}(.*)$/.exec(l);
        if (!m) continue;
        entries++;
        expect(m[3]!.replace(/\[[^\]]*\]/g, "").trim(), `${c}: ${l}`).not.toBe("");
      }
      expect(entries).toBeGreaterThanOrEqual(4); // at least one positional or option of its own, --json, -v, -h
      // `help <command>` gives the same page
      expect(cli(["help", c]).stdout).toBe(a.stdout);
    });
  }
});

describe("mistakes get a did-you-mean and exit 2", () => {
  it("a mistyped command", () => {
    const r = cli(["bulid", "x.json"]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/unknown command 'bulid' \(did you mean build\?\)/);
    expect(r.stderr).not.toMatch(/ at .*\.js:\d+/); // no stack trace
  });

  it("a mistyped option names the command's own option", () => {
    const r = cli(["build", DEMO, "--job", "2", "-o", join(tempDir(), "x")]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/unknown option --job \(did you mean --jobs\?\)/);
    expect(r.stderr).toMatch(/see: steercode help build/);
    const s = cli(["sweep", DEMO, "--phase-bit", "3..4"]);
    expect(s.code).toBe(2);
    expect(s.stderr).toMatch(/did you mean --phase-bits\?/);
  });

  it("a missing argument names the usage; help of an unknown command suggests one", () => {
    const r = cli(["verify"]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/verify: missing argument; usage: steercode verify <dir>/);
    const h = cli(["help", "bild"]);
    expect(h.code).toBe(2);
    expect(h.stderr).toMatch(/did you mean build\?/);
  });
});

describe("completion", () => {
  it("prints a shell completion script for steercode", () => {
    const r = cli(["completion"]);
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/complete .*steercode/);
  });

  // `completion foo` printed the whole script on stdout and then exit 2 ("unknown argument foo");
  // `completion -h` and `help completion` printed the script instead of help
  it("takes no arguments: anything after it is exit 2 with nothing on stdout; -h is its help", () => {
    for (const extra of [["foo"], ["bash"], ["--foo"], ["foo", "bar"], ["--shell", "zsh"]]) {
      const r = cli(["completion", ...extra]);
      expect(r.code, extra.join(" ")).toBe(2);
      expect(r.stdout, extra.join(" ")).toBe("");
      expect(r.stderr).toContain(`completion takes no arguments, got ${extra.join(" ")}`);
    }
    for (const h of [["completion", "-h"], ["completion", "--help"], ["help", "completion"]]) {
      const r = cli(h);
      expect(r.code).toBe(0);
      expect(r.stdout).toMatch(/^steercode completion\n/);
      expect(r.stdout).not.toMatch(/complete .*steercode/);
    }
    // the script's own call back into steercode still completes
    const c = cli(["--get-yargs-completions", "steercode", "bu"]);
    expect(c.code).toBe(0);
    expect(c.stdout.split("\n")).toContain("build");
  });
});

describe("report --frequency and build --compare", () => {
  const t = tempDir();
  const s = writeScenario(baseScenario({ frequency: ["27.5 GHz", "29 GHz"] }));
  const a = join(t, "a");

  it("report --frequency takes an index or a frequency with its unit", () => {
    expect(cli(["build", s, "-o", a]).code).toBe(0);
    const byIndex = cli(["report", a, "--frequency", "1", "--beam", "2", "-o", join(t, "r1.html"), "--json"]);
    const byValue = cli(["report", a, "--frequency", "29 GHz", "--beam", "2", "-o", join(t, "r2.html"), "--json"]);
    expect(byIndex.code).toBe(0);
    expect(byValue.code).toBe(0);
    expect(readFileSync(join(t, "r1.html"), "utf8")).toBe(readFileSync(join(t, "r2.html"), "utf8"));
    const miss = cli(["report", a, "--frequency", "28 GHz"]);
    expect(miss.code).toBe(2);
    expect(miss.stderr).toMatch(/--frequency "28 GHz": the build's tables are for 27\.5 GHz, 29 GHz/);
    // an index past the last table names the range and the tables
    const past = cli(["report", a, "--frequency", "2"]);
    expect(past.code).toBe(2);
    expect(past.stderr).toMatch(/--frequency 2: expected a frequency index from 0 to 1 \(the build's tables are for 27\.5 GHz, 29 GHz\)/);
    // a frequency that overflows the doubles (Infinity) matched every table, opening the first one with exit 0
    for (const f of ["1e999 GHz", "1e400 Hz"]) {
      const r = cli(["report", a, "--frequency", f, "-o", join(t, "inf.html")]);
      expect(r.code, f).toBe(2);
      expect(r.stderr).toContain(`--frequency: expected a frequency index (0, 1 …) or a frequency with its unit, e.g. "28 GHz", got "${f}"`);
    }
    expect(existsSync(join(t, "inf.html"))).toBe(false);
  });

  it("--compare with an incompatible build is refused before any work, naming no staging folder", () => {
    const other = writeScenario(baseScenario({ frequency: ["27.5 GHz", "29 GHz"], beams: { kind: "uv", u: { from: 0, to: 0.5, step: 0.5 }, v: { from: 0, to: 0, step: 1 } } }));
    const out = join(t, "b");
    const r = cli(["build", other, "-o", out, "--compare", a]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/--compare: these builds cannot be compared word by word: the beam counts differ \(3 vs 2\)/);
    expect(r.stderr).not.toMatch(/steercode-tmp/);
    expect(existsSync(out)).toBe(false);
    expect(readdirSync(dirname(out)).filter((n) => n.includes("steercode-tmp"))).toEqual([]);
  });
});

describe("a value that starts with a minus sign", () => {
  // `--probe-direction -10,5` (a probe 10° to the left) was read as the short flags -1, -0, -, -5: exit 2
  // "unknown argument 0 (did you mean -o?)", naming neither the option nor the value; only `=-10,5` worked
  it("a negative number list after a value option is its value, as with =", () => {
    const t = tempDir();
    const s = writeScenario(baseScenario(), {}, join(t, "s"));
    // REV readings of the 8-element base scenario (3-bit shifter): x = 0.1·e^{j·e rad}, ideal states
    const rows: string[] = [];
    for (let e = 0; e < 8; e++)
      for (let k = 0; k < 8; k++) {
        const d = (k * Math.PI) / 4, xr = 0.1 * Math.cos(e), xi = 0.1 * Math.sin(e);
        const zr = 1 + xr * (Math.cos(d) - 1) - xi * Math.sin(d), zi = xr * Math.sin(d) + xi * (Math.cos(d) - 1);
        rows.push(`${e},${k},${(10 * Math.log10(zr * zr + zi * zi)).toFixed(6)}`);
      }
    writeFileSync(join(t, "rev.csv"), "element,phase_code,power_db\n" + rows.join("\n") + "\n");
    const run = (probe: string[], out: string) => cli(["calibrate", s, "--data", join(t, "rev.csv"), "--method", "rev", ...probe, "-o", join(t, out)]);
    for (const [option, value, said] of [["--probe-direction", "-10,5", /^# probe: far field, az -10 deg, el 5 deg/m], ["--probe-position", "-0.5,0,1", /^# probe: near field at x -0\.5 m, y 0 m, z 1 m/m]] as const) {
      const spaced = run([option, value], "a.csv");
      expect(spaced.code, spaced.stderr).toBe(0);
      const joined = run([`${option}=${value}`], "b.csv");
      expect(joined.code, joined.stderr).toBe(0);
      const a = readFileSync(join(t, "a.csv"), "utf8");
      expect(a).toMatch(said);
      expect(a).toBe(readFileSync(join(t, "b.csv"), "utf8"));
    }
    // a whole-number option given a negative number names the option and the value
    const jobs = cli(["build", s, "-o", join(t, "out"), "--jobs", "-2"]);
    expect(jobs.code).toBe(2);
    expect(jobs.stderr).toMatch(/--jobs: expected a whole number from 1 to 256 in decimal digits, got "-2"/);
    expect(existsSync(join(t, "out"))).toBe(false);
  });
});
