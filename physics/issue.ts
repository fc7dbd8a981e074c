/**
 * Structured problems with user input. Validation never throws on the first problem: it returns
 * every issue it finds, each with the path of the offending field, what was seen and what is
 * allowed. One printer (scheduler/report-issues.ts) turns them into CLI messages; the ledger can
 * store them as JSON.
 */
export interface Issue {
  /** machine-readable kind, e.g. 'out_of_range', 'unknown_parameter', 'missing', 'type' */
  readonly code: string;
  /** where the problem is, e.g. 'm_chi' or 'constraints[2].file' */
  readonly path: string;
  /** one sentence for humans */
  readonly message: string;
  /** the value that was seen, as text */
  readonly seen?: string;
  /** what would have been accepted */
  readonly allowed?: string;
}

/** Thrown where a list of issues must abort an operation (exit code 2 at the CLI). */
export class InvalidInputError extends Error {
  readonly issues: readonly Issue[];
  constructor(issues: readonly Issue[]) {
    super(issues.map((i) => `${i.path}: ${i.message}`).join('; '));
    this.name = 'InvalidInputError';
    this.issues = issues;
  }
}
