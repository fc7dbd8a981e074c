/**
 * `npm run bench`: speed figures of every stage in one run, so ratios between them are measured
 * under the same machine load (these machines are noisy; compare ratios, not absolute numbers).
 * Each part lives next to its subject in tests/bench/*-bench.ts and returns printable lines.
 * `npm run bench -- relic direct` runs only the named parts.
 */
interface Part {
  readonly name: string;
  readonly run: () => Promise<{ lines: readonly string[] }>;
}

const PARTS: readonly Part[] = [
  { name: 'relic', run: async () => (await import('./relic-bench.js')).benchRelic() },
  { name: 'direct', run: async () => (await import('./direct-bench.js')).benchDirect() },
  { name: 'indirect', run: async () => (await import('./indirect-bench.js')).benchIndirect() },
  { name: 'point', run: async () => (await import('./point-bench.js')).benchPoint() },
  { name: 'startup', run: async () => (await import('./startup-bench.js')).benchStartup() },
  { name: 'scan', run: async () => (await import('./scan-bench.js')).benchScan() },
  { name: 'ingest', run: async () => (await import('./scan-bench.js')).benchIngest() },
  { name: 'constraints', run: async () => (await import('./constraints-bench.js')).benchConstraints() },
  { name: 'redis', run: async () => (await import('./redis-bench.js')).benchRedis() },
  { name: 'plot', run: async () => (await import('./plot-bench.js')).benchPlot() },
];

const wanted = process.argv.slice(2).filter((a) => !a.startsWith('-'));
const unknown = wanted.filter((w) => !PARTS.some((p) => p.name === w));
if (unknown.length > 0) {
  process.stderr.write(`unknown bench part(s): ${unknown.join(', ')}; known: ${PARTS.map((p) => p.name).join(', ')}\n`);
  process.exit(2);
}
let failed = 0;
for (const part of PARTS.filter((p) => wanted.length === 0 || wanted.includes(p.name))) {
  process.stdout.write(`== ${part.name}\n`);
  const t0 = performance.now();
  try {
    const { lines } = await part.run();
    for (const line of lines) process.stdout.write(`   ${line}\n`);
  } catch (err) {
    failed++;
    process.stdout.write(`   FAILED: ${err instanceof Error ? err.message : String(err)}\n`);
  }
  process.stdout.write(`   (${((performance.now() - t0) / 1000).toFixed(1)} s)\n`);
}
process.exit(failed > 0 ? 1 : 0);
