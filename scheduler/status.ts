/**
 * Progress of the scans in a ledger, read over a readonly connection so it works from another
 * terminal while `run` writes (WAL readers see a consistent snapshot and never block the writer).
 * The rate is measured from the chunks finished in the last RATE_WINDOW_S seconds (or since the run
 * started, when that is more recent).
 */
import { LedgerReader, type ScanStatus } from './ledger.js';
import { formatDuration } from './progress.js';

export const RATE_WINDOW_S = 60;

export interface ScanStatusReport {
  readonly id: number;
  readonly name: string;
  readonly status: ScanStatus;
  readonly created_at: string;
  readonly spec_hash: string;
  readonly code_version: string;
  readonly constants_edition: string;
  readonly points_total: number;
  readonly points_done: number;
  readonly chunks_total: number;
  readonly chunks_done: number;
  readonly chunks_failed: number;
  readonly chunk_size: number;
  readonly fraction_done: number;
  readonly last_chunk_at: string | null;
  /** points per second over the last RATE_WINDOW_S seconds (0 when nothing finished then) */
  readonly recent_points_per_s: number;
  /** seconds left at the recent rate; null when unknown */
  readonly eta_s: number | null;
  readonly failed: readonly { chunk: number; attempts: number; error: string | null }[];
}

export interface LedgerStatus {
  readonly db: string;
  readonly scans: readonly ScanStatusReport[];
}

export function ledgerStatus(dbPath: string): LedgerStatus {
  const reader = LedgerReader.openReadonly(dbPath);
  try {
    const nowMs = Date.now();
    const recent = reader.connection.prepare(
      `SELECT COALESCE(SUM(n), 0) AS points FROM chunks WHERE scan_id = ? AND status = 'done' AND finished_at >= ?`,
    );
    const scans = reader.scans().map((s): ScanStatusReport => {
      const p = reader.progress(s.id);
      const windowS = Math.min(RATE_WINDOW_S, Math.max(1, (nowMs - Date.parse(s.updatedAt)) / 1000));
      const r = recent.get(s.id, new Date(nowMs - windowS * 1000).toISOString()) as { points: number };
      const rate = s.status === 'running' && r.points > 0 ? r.points / windowS : 0;
      return {
        id: s.id, name: s.name, status: s.status, created_at: s.createdAt, spec_hash: s.specHash, code_version: s.codeVersion,
        constants_edition: s.constantsEdition, points_total: s.nPoints, points_done: p.pointsDone, chunks_total: s.nChunks,
        chunks_done: p.chunksDone, chunks_failed: p.chunksFailed, chunk_size: s.chunkSize,
        fraction_done: s.nPoints > 0 ? p.pointsDone / s.nPoints : 1, last_chunk_at: p.lastFinishedAt,
        recent_points_per_s: rate, eta_s: rate > 0 ? (s.nPoints - p.pointsDone) / rate : null,
        failed: reader.failedChunks(s.id, 5),
      };
    });
    return { db: dbPath, scans };
  } finally {
    reader.close();
  }
}

export function formatStatus(st: LedgerStatus): string {
  if (st.scans.length === 0) return `${st.db}: no scans\n`;
  const lines = [`${st.db}:`];
  for (const s of st.scans) {
    lines.push(
      `  scan ${s.id} '${s.name}': ${s.status}, ${s.points_done}/${s.points_total} points (${(100 * s.fraction_done).toFixed(1)} %), ` +
        `chunks ${s.chunks_done}/${s.chunks_total} done${s.chunks_failed > 0 ? `, ${s.chunks_failed} failed` : ''}` +
        (s.recent_points_per_s > 0 ? `, ${s.recent_points_per_s.toFixed(0)} points/s, ETA ${formatDuration(s.eta_s ?? NaN)}` : ''),
    );
    for (const f of s.failed) lines.push(`    chunk ${f.chunk} failed after ${f.attempts} attempts: ${f.error ?? '?'}`);
  }
  return `${lines.join('\n')}\n`;
}
