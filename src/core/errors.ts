/**
 * Typed input problems. Every problem carries where it was found (file, JSON
 * pointer, CSV line/column) and what was expected. Only src/cli turns these
 * into messages and exit codes.
 */
export interface Problem {
  file?: string;
  pointer?: string;
  line?: number;
  column?: string;
  message: string;
}

export function formatProblem(p: Problem): string {
  let where = p.file ?? "";
  if (p.line !== undefined) where += `${where ? ", " : ""}line ${p.line}`;
  if (p.column !== undefined) where += `${where ? ", " : ""}column ${p.column}`;
  if (p.pointer !== undefined) where += `${where ? ": " : ""}${p.pointer === "" ? "/" : p.pointer}`;
  return where ? `${where}: ${p.message}` : p.message;
}

/** Bad input or usage: exit code 2. Holds every problem found, not only the first. */
export class InputError extends Error {
  readonly problems: Problem[];
  constructor(problems: Problem[] | Problem) {
    const list = Array.isArray(problems) ? problems : [problems];
    super(list.map(formatProblem).join("\n"));
    this.name = "InputError";
    this.problems = list;
  }
}
