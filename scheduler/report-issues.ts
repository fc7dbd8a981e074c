/**
 * The one printer for input problems: turns Issue lists into CLI text. Used by every command.
 */
import type { Issue } from '../physics/issue.js';

export function formatIssues(issues: readonly Issue[]): string {
  const lines = issues.map((i) => {
    const parts = [`  ${i.path || '(input)'}: ${i.message}`];
    if (i.seen !== undefined) parts.push(`seen: ${i.seen}`);
    if (i.allowed !== undefined && !i.message.includes(i.allowed)) parts.push(`allowed: ${i.allowed}`);
    return parts.join('; ');
  });
  const n = issues.length;
  return `invalid input (${n} problem${n === 1 ? '' : 's'}):\n${lines.join('\n')}\n`;
}
