/** The analysis thread count that `--jobs` (cli/commands.ts) and the library's `jobs` (index.ts) take. */

/** The most threads asked for; more than the machine's cores are then cut to the cores. */
export const MAX_JOBS = 256;

/** A whole number from 1 to MAX_JOBS (the most threads for the analysis, the calling thread included). */
export function isJobsCount(n: unknown): n is number {
  return typeof n === "number" && Number.isInteger(n) && n >= 1 && n <= MAX_JOBS;
}
