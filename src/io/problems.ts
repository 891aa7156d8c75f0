/**
 * A bounded list of input problems. A broken file can hold millions of bad rows; every
 * one is counted, but only the first MAX_PROBLEMS_PER_FILE of each file are kept and
 * printed, followed by one line "… and N more problems in this file".
 */
import type { Problem } from "../core/errors.js";

export const MAX_PROBLEMS_PER_FILE = 20;

export class ProblemList extends Array<Problem> {
  /** Every problem pushed, kept or not. */
  count = 0;
  private readonly perFile = new Map<string, number>();

  override push(...items: Problem[]): number {
    for (const p of items) {
      this.count++;
      const key = p.file ?? "";
      const n = (this.perFile.get(key) ?? 0) + 1;
      this.perFile.set(key, n);
      if (n <= MAX_PROBLEMS_PER_FILE) super.push(p);
    }
    return this.length;
  }

  /** The kept problems, plus one summary line per file that had more. */
  all(): Problem[] {
    const out: Problem[] = Array.from(this);
    for (const [file, n] of this.perFile)
      if (n > MAX_PROBLEMS_PER_FILE) out.push({ ...(file ? { file } : {}), message: `… and ${groupDigits(n - MAX_PROBLEMS_PER_FILE)} more problem(s) in this file (the first ${MAX_PROBLEMS_PER_FILE} are shown)` });
    return out;
  }
}

/** 1999990 → "1 999 990" */
export function groupDigits(n: number): string {
  return String(n).replace(/\B(?=(\d{3})+(?!\d))/g, " ");
}
