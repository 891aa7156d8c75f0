/** Bad usage of the command line (exit code 2). */
export class UsageError extends Error {}
