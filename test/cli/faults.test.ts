/**
 * Faults from the environment (issue 9): a crash between the two renames of the commit,
 * signals, a full disk, a read-only parent, two builds racing for one new folder, input
 * read from a pipe. Each must end in exit 0 or 2 with a located message, the previous
 * output intact and no staging folder left.
 */
import { spawn, spawnSync } from "node:child_process";
import { chmodSync, existsSync, mkdirSync, readFileSync, readdirSync, renameSync, writeFileSync } from "node:fs";
import { join } from "node:path";
import { describe, expect, it } from "vitest";
import { BIN, baseScenario, cli, tempDir, writeScenario } from "../helpers.js";
import { recoverStale } from "../../src/io/outdir.js";

/** The pid of a process that has exited (nothing else holds it for the instant we use it). */
function deadPid(): number {
  const r = spawnSync(process.execPath, ["-e", "process.stdout.write(String(process.pid))"], { encoding: "utf8" });
  return Number(r.stdout);
}

function small(d: string, name = "s", over: Record<string, unknown> = {}): string {
  return writeScenario(baseScenario({ outputs: ["bin"], ...over }), {}, join(d, name));
}

describe("faults: the commit survives kill -9 between its two renames", () => {
  it("no target, the previous output in .NAME.steercode-old-PID-N: the next run restores it and removes the staging folder", () => {
    const d = tempDir();
    const out = join(d, "out");
    expect(cli(["build", small(d), "-o", out, "--no-analysis"]).code).toBe(0);
    const before = readFileSync(join(out, "manifest.json"));
    // the state a SIGKILL leaves after the first rename: target moved aside, complete staging folder beside it
    const pid = deadPid();
    renameSync(out, join(d, `.out.steercode-old-${pid}-1`));
    mkdirSync(join(d, `.out.steercode-tmp-${pid}-0`));
    writeFileSync(join(d, `.out.steercode-tmp-${pid}-0`, "table.bin"), "partial");
    recoverStale(out);
    expect(readFileSync(join(out, "manifest.json")).equals(before)).toBe(true);
    expect(readdirSync(d).filter((n) => n.startsWith("."))).toEqual([]);
  });

  it("the same state, then a build of other tables: it replaces the restored output, nothing is left behind", () => {
    const d = tempDir();
    const out = join(d, "out");
    expect(cli(["build", small(d), "-o", out, "--no-analysis"]).code).toBe(0);
    renameSync(out, join(d, `.out.steercode-old-${deadPid()}-1`));
    const r = cli(["build", small(d, "s2", { frequency: "11 GHz" }), "-o", out, "--no-analysis", "--json"]);
    expect(r.code, r.stderr).toBe(0);
    expect(JSON.parse(readFileSync(join(out, "manifest.json"), "utf8")).frequenciesHz).toEqual(["11000000000"]);
    expect(readdirSync(d).filter((n) => n.startsWith("."))).toEqual([]);
  });

  it("a crash after the second rename: the new output stays, the old folder goes", () => {
    const d = tempDir();
    const out = join(d, "out");
    expect(cli(["build", small(d), "-o", out, "--no-analysis"]).code).toBe(0);
    const now = readFileSync(join(out, "manifest.json"));
    expect(cli(["build", small(d, "s2", { frequency: "11 GHz" }), "-o", join(d, `.out.steercode-old-${deadPid()}-1`), "--no-analysis"]).code).toBe(0);
    recoverStale(out);
    expect(readFileSync(join(out, "manifest.json")).equals(now)).toBe(true);
    expect(readdirSync(d).filter((n) => n.startsWith("."))).toEqual([]);
  });
});

describe("faults: signals, disks, permissions, races", () => {
  for (const [sig, code] of [["SIGHUP", 129], ["SIGQUIT", 131]] as const) {
    it(`${sig} during a build removes the staging folder and keeps the previous output`, async () => {
      const d = tempDir();
      const out = join(d, "out");
      expect(cli(["build", small(d), "-o", out, "--no-analysis"]).code).toBe(0);
      const before = readFileSync(join(out, "manifest.json"));
      const s = writeScenario(baseScenario({
        array: { lattice: { kind: "rectangular", columns: 64, rows: 64, dx: "0.5 lambda", dy: "0.5 lambda" } },
        beams: { kind: "uv", u: { from: -0.6, to: 0.6, step: 0.01 }, v: { from: -0.6, to: 0.6, step: 0.02 } },
        phaseShifter: { bits: 6 },
      }), {}, join(d, "big"));
      const child = spawn(process.execPath, [BIN, "build", s, "-o", out, "--no-analysis"], { stdio: "ignore" });
      const t0 = Date.now();
      while (!readdirSync(d).some((n) => n.includes("steercode-tmp")) && Date.now() - t0 < 20000) await new Promise((r) => setTimeout(r, 10));
      expect(readdirSync(d).some((n) => n.includes("steercode-tmp"))).toBe(true);
      child.kill(sig);
      const got = await new Promise<number | null>((r) => child.on("exit", (c) => r(c)));
      expect(got).toBe(code);
      expect(readFileSync(join(out, "manifest.json")).equals(before)).toBe(true);
      expect(readdirSync(d).filter((n) => n.startsWith("."))).toEqual([]);
    });
  }

  it("a full disk (ENOSPC, a 64 KiB tmpfs): exit 2 naming the output, nothing left on the disk", (ctx) => {
    const d = tempDir();
    const mnt = join(d, "mnt");
    mkdirSync(mnt);
    const m = spawnSync("mount", ["-t", "tmpfs", "-o", "size=64k", "tmpfs", mnt]);
    if (m.status !== 0) ctx.skip(); // mounting a tmpfs needs root (CI runs as root)
    try {
      const s = writeScenario(baseScenario({ beams: { kind: "uv", u: { from: -0.5, to: 0.5, step: 0.01 }, v: { from: 0, to: 0, step: 1 } } }), {}, join(d, "s"));
      const r = cli(["build", s, "-o", join(mnt, "out")]);
      expect(r.code, r.stderr).toBe(2);
      expect(r.stderr).toMatch(/mnt\/out: cannot write the output: no space left on device \(ENOSPC/);
      expect(r.stderr).not.toMatch(/internal error|\n\s+at /);
      expect(readdirSync(mnt)).toEqual([]);
    } finally {
      spawnSync("umount", [mnt]);
    }
  });

  it("a read-only parent folder (EACCES): exit 2 naming the output", (ctx) => {
    const d = tempDir();
    chmodSync(d, 0o755);
    const s = small(d);
    chmodSync(join(d, "s"), 0o755);
    const ro = join(d, "ro");
    mkdirSync(ro);
    chmodSync(ro, 0o555);
    // root may write anywhere: run as nobody then (the checkout is world-readable)
    const asRoot = process.getuid?.() === 0;
    const r = spawnSync(process.execPath, [BIN, "build", s, "-o", join(ro, "out")], { encoding: "utf8", ...(asRoot ? { uid: 65534, gid: 65534 } : {}), env: { ...process.env, NO_COLOR: "1" } });
    if (r.error) ctx.skip();
    expect(r.status, r.stderr).toBe(2);
    expect(r.stderr).toMatch(/ro\/out: cannot create a staging folder in .*ro: permission denied \(EACCES/);
    expect(readdirSync(ro)).toEqual([]);
  });

  it("six builds racing for one new -o: every one succeeds (none ENOTEMPTY), one complete output, no staging folder", async () => {
    const d = tempDir();
    const s = small(d);
    const out = join(d, "out");
    const codes = await Promise.all(
      Array.from({ length: 6 }, () => new Promise<{ code: number | null; err: string }>((res) => {
        const c = spawn(process.execPath, [BIN, "build", s, "-o", out, "--no-analysis"], { stdio: ["ignore", "ignore", "pipe"] });
        let err = "";
        c.stderr.on("data", (b) => (err += String(b)));
        c.on("exit", (code) => res({ code, err }));
      })),
    );
    for (const c of codes) expect(c.code, c.err).toBe(0);
    expect(existsSync(join(out, "manifest.json"))).toBe(true);
    expect(cli(["verify", out]).code).toBe(0);
    expect(readdirSync(d).filter((n) => n.startsWith("."))).toEqual([]);
  });
});

describe("inputs from a pipe are read once: the copy is what was read", () => {
  it("build /dev/stdin copies the scenario as read and verifies", () => {
    const d = tempDir();
    const text = JSON.stringify(baseScenario({ outputs: ["bin", "csv"] }), null, 2);
    const out = join(d, "out");
    const r = spawnSync(process.execPath, [BIN, "build", "/dev/stdin", "-o", out, "--no-analysis"], { input: text, encoding: "utf8" });
    expect(r.status, r.stderr).toBe(0);
    expect(readFileSync(join(out, "inputs", "scenario.json"), "utf8")).toBe(text);
    const v = cli(["verify", out]);
    expect(v.code, v.stdout + v.stderr).toBe(0);
  });

  it("a pipe that never ends is cut at the scenario limit (1 MiB): exit 2", () => {
    const d = tempDir();
    const r = spawnSync(process.execPath, [BIN, "check", "/dev/stdin"], { input: Buffer.alloc(2 * 1024 * 1024, 0x20), encoding: "utf8" });
    expect(r.status, r.stderr).toBe(2);
    expect(r.stderr).toMatch(/\/dev\/stdin: more than 1048576 bytes; expected at most 1048576 bytes/);
    expect(readdirSync(d)).toEqual([]);
  });

  it("--jobs above the core count is capped, with a note", () => {
    const d = tempDir();
    const r = cli(["build", small(d), "-o", join(d, "out"), "--jobs", "256"]);
    expect(r.code, r.stderr).toBe(0);
    expect(r.stderr).toMatch(/note: --jobs 256 is more than the \d+ core\(s\) of this machine; using \d+/);
  });
});
