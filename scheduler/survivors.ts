/**
 * Surviving points of a judged constraint set, optionally filtered by a `--where` expression, and
 * their output as an aligned table, CSV or JSON.
 *
 * `--where` is an expression of the sandbox (scheduler/expressions.ts) over the scan's numeric point
 * columns (point_id, parameters, observables; NULL is seen as NaN). It is compiled once and registered as a deterministic SQL function that SQLite calls only
 * with the columns the expression reads, inside the query that walks the verdicts in point order.
 * Why not translate it to SQL: SQL and mathjs differ on NULL versus NaN (`not (x < 1)` is NULL in SQL
 * but true in JS), on division by zero and on integer division, so a filter would mean something
 * different from the same text in a constraint. Why not evaluate on rows streamed into JS: every
 * column of every surviving point would cross into JS, where only the filter's inputs need to; the
 * SQL function keeps the scan inside SQLite and stops at --limit.
 */
import type { Database } from 'better-sqlite3';
import { InvalidInputError } from '../physics/issue.js';
import { compileExpression } from './expressions.js';
import { quoteId } from './ledger.js';

export const OUTPUT_FORMATS = ['table', 'csv', 'json'] as const;
export type OutputFormat = (typeof OUTPUT_FORMATS)[number];

export interface SurvivorQuery {
  readonly scanId: number;
  readonly set: string;
  /** point columns to return, in order (scan-context.ts scanColumns().all) */
  readonly columns: readonly string[];
  /** the columns a --where expression may read (scanColumns().numeric) */
  readonly numeric: readonly string[];
  /** filter expression over numeric point columns */
  readonly where?: string;
  /** most rows returned; undefined for all */
  readonly limit?: number;
}

/** SQL function registered on the connection for the --where filter. */
const WHERE_FUNCTION = 'darksieve_where';

/** Iterates the surviving points (arrays in `q.columns` order), in point-id order. */
export function survivorRows(db: Database, q: SurvivorQuery): IterableIterator<unknown[]> {
  let filter = '';
  if (q.where !== undefined) {
    const compiled = compileExpression(q.where, q.numeric, '--where', { expect: 'boolean' });
    if (!compiled.evaluate) throw new InvalidInputError(compiled.issues);
    const evaluate = compiled.evaluate;
    const names = compiled.symbols;
    const scope: Record<string, number> = {};
    db.function(WHERE_FUNCTION, { deterministic: true, varargs: true }, (...args: unknown[]) => {
      for (let i = 0; i < names.length; i++) {
        const x = args[i];
        scope[names[i]!] = typeof x === 'number' ? x : NaN;
      }
      return evaluate(scope) === true ? 1 : 0;
    });
    filter = ` AND ${WHERE_FUNCTION}(${names.map((n) => `p.${quoteId(n)}`).join(', ')}) = 1`;
  }
  const limit = q.limit !== undefined ? ' LIMIT ?' : '';
  const sql = `SELECT ${q.columns.map((c) => `p.${quoteId(c)}`).join(', ')}
    FROM verdicts v JOIN points p ON p.scan_id = v.scan_id AND p.point_id = v.point_id
    WHERE v.scan_id = ? AND v.constraint_set = ? AND v.survives = 1${filter}
    ORDER BY v.point_id${limit}`;
  const params: unknown[] = [q.scanId, q.set];
  if (q.limit !== undefined) params.push(q.limit);
  return db.prepare(sql).raw(true).iterate(...params) as IterableIterator<unknown[]>;
}

function csvField(v: unknown): string {
  if (v === null || v === undefined) return '';
  const s = String(v);
  return /[",\n\r]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

function tableField(v: unknown): string {
  if (v === null || v === undefined) return '-';
  if (typeof v === 'number') return String(Number(v.toPrecision(5)));
  return String(v);
}

/** Bytes collected before one call of `write`: stdout on a pipe is synchronous, one call per row would be a system call per row. */
const OUTPUT_CHUNK = 1 << 16;

/**
 * Writes the rows in the chosen format through `write` and returns how many were written. CSV and
 * JSON keep full double precision (they are for other programs); the table rounds to 5 digits and
 * holds its rows in memory to align them (it is meant for --limit-sized output).
 */
export function writeRows(columns: readonly string[], rows: Iterable<unknown[]>, format: OutputFormat, write: (text: string) => void): number {
  let n = 0;
  let buffer = '';
  const put = (text: string): void => {
    buffer += text;
    if (buffer.length >= OUTPUT_CHUNK) {
      write(buffer);
      buffer = '';
    }
  };
  if (format === 'csv') {
    put(`${columns.join(',')}\n`);
    for (const r of rows) {
      put(`${r.map(csvField).join(',')}\n`);
      n++;
    }
  } else if (format === 'json') {
    put('[');
    for (const r of rows) {
      const obj: Record<string, unknown> = {};
      columns.forEach((c, i) => {
        obj[c] = r[i] ?? null;
      });
      put(`${n === 0 ? '\n' : ',\n'}${JSON.stringify(obj)}`);
      n++;
    }
    put(n === 0 ? ']\n' : '\n]\n');
  } else {
    const cells = [columns.slice()];
    for (const r of rows) {
      cells.push(r.map(tableField));
      n++;
    }
    const widths = columns.map((_, i) => Math.max(...cells.map((row) => row[i]!.length)));
    for (const row of cells) put(`${row.map((c, i) => c.padStart(widths[i]!)).join('  ')}\n`);
  }
  if (buffer !== '') write(buffer);
  return n;
}
