/**
 * The static report page: one self-contained HTML file (inline CSS, inline SVG, no scripts, no
 * external resources) that reads offline and prints. Sections: survivors per constraint set and
 * constraint, the standard planes, and the provenance needed to reproduce the scan (spec, code
 * version, constants edition, numerical knobs, constraint definitions).
 */
import { escapeXml } from '../plot/notation.js';
import type { SetSummary } from './survivor-summary.js';

export interface ReportFigure {
  readonly heading: string;
  readonly svg: string;
  readonly notes: readonly string[];
}

export interface ProvenanceItem {
  readonly label: string;
  readonly value: string;
}

export interface ReportContent {
  readonly title: string;
  readonly points: number;
  readonly summaries: readonly SetSummary[];
  readonly figures: readonly ReportFigure[];
  readonly skippedPlanes: readonly string[];
  readonly provenance: readonly ProvenanceItem[];
  /** pretty-printed JSON blocks shown folded: spec, knobs, constraint definitions */
  readonly documents: readonly { readonly label: string; readonly json: string }[];
  readonly generatedAt: string;
}

const CSS = `
body { font-family: "DejaVu Sans", "Helvetica Neue", Arial, sans-serif; color: #1b1b1b; background: #fff;
  max-width: 1180px; margin: 1.5rem auto; padding: 0 1rem; line-height: 1.4; }
h1 { font-size: 1.5rem; margin-bottom: 0.2rem; }
h2 { font-size: 1.15rem; border-bottom: 1px solid #ccc; padding-bottom: 0.2rem; margin-top: 2rem; }
h3 { font-size: 1rem; margin: 1rem 0 0.4rem; }
.lede { color: #444; margin-top: 0; }
table { border-collapse: collapse; margin: 0.4rem 0 1rem; font-size: 0.9rem; }
th, td { border: 1px solid #d0d0d0; padding: 0.25rem 0.6rem; text-align: left; }
td.num, th.num { text-align: right; font-variant-numeric: tabular-nums; }
th { background: #f2f2f2; }
.figures { display: grid; grid-template-columns: repeat(auto-fill, minmax(540px, 1fr)); gap: 1.2rem; }
figure { margin: 0; border: 1px solid #e2e2e2; padding: 0.4rem; }
figure svg { width: 100%; height: auto; display: block; }
figcaption { font-size: 0.85rem; color: #333; margin-top: 0.3rem; }
pre { background: #f6f6f6; padding: 0.6rem; overflow-x: auto; font-size: 0.8rem; max-height: 28rem; }
details { margin: 0.3rem 0; }
summary { cursor: pointer; }
.note { color: #555; font-size: 0.85rem; }
@media print { .figures { grid-template-columns: 1fr; } pre { max-height: none; } }
`;

const fmt = (n: number): string => n.toLocaleString('en-US');
const pct = (part: number, whole: number): string => (whole > 0 ? `${((100 * part) / whole).toFixed(1)} %` : '');

function summaryHtml(s: SetSummary): string {
  const rows = s.constraints.map((c) => `<tr><td>${escapeXml(c.name)}</td><td>${escapeXml(c.kind || '—')}</td>` +
    `<td class="num">${fmt(s.judged - c.failed)}</td><td class="num">${fmt(c.failed)}</td><td class="num">${pct(c.failed, s.judged)}</td>` +
    `<td class="num">${fmt(c.onlyThis)}</td></tr>`).join('');
  return `<h3>Constraint set “${escapeXml(s.set)}”</h3>
<p>${fmt(s.survivors)} of ${fmt(s.judged)} judged points survive every constraint (${pct(s.survivors, s.judged)})${s.judgedAt ? `; judged ${escapeXml(s.judgedAt)}` : ''}.</p>
<table><thead><tr><th>constraint</th><th>kind</th><th class="num">pass</th><th class="num">excluded</th><th class="num">excluded share</th><th class="num">excluded by this alone</th></tr></thead>
<tbody>${rows}</tbody></table>`;
}

export function reportHtml(c: ReportContent): string {
  const summaries = c.summaries.length
    ? c.summaries.map(summaryHtml).join('\n')
    : '<p>The scan has not been judged: no verdicts are stored (run <code>darksieve judge</code>).</p>';
  const figures = c.figures.map((f) => `<figure>${f.svg}<figcaption><strong>${escapeXml(f.heading)}.</strong> ${f.notes.filter(Boolean).map(escapeXml).join(' · ')}</figcaption></figure>`).join('\n');
  const skipped = c.skippedPlanes.length ? `<p class="note">Not drawn: ${c.skippedPlanes.map(escapeXml).join('; ')}.</p>` : '';
  const provenance = c.provenance.map((p) => `<tr><th>${escapeXml(p.label)}</th><td>${escapeXml(p.value)}</td></tr>`).join('');
  const documents = c.documents.map((d) => `<details><summary>${escapeXml(d.label)}</summary><pre>${escapeXml(d.json)}</pre></details>`).join('\n');
  return `<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>${escapeXml(c.title)}</title>
<style>${CSS}</style>
</head>
<body>
<h1>${escapeXml(c.title)}</h1>
<p class="lede">${fmt(c.points)} points stored. Report generated ${escapeXml(c.generatedAt)} by darksieve. Results are research approximations; see the project README for model assumptions and validity limits.</p>
<h2>Survivors</h2>
${summaries}
<h2>Standard planes</h2>
<p class="note">Filled circles: points that survive every constraint of the shown set; faint crosses: excluded points. Large scans are drawn as 2-D histograms (opaque bins hold survivors). Dashed line: Ωh² = 0.120 where the plane is a full grid.</p>
<div class="figures">
${figures}
</div>
${skipped}
<h2>Provenance</h2>
<table><tbody>${provenance}</tbody></table>
${documents}
</body>
</html>
`;
}
