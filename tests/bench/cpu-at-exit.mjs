// Preload for the scan bench (node --import): the main thread prints the CPU time of the whole process
// (every thread) as it exits, so a bench can measure a CLI command run in a fresh process.
import { isMainThread } from 'node:worker_threads';

if (isMainThread) {
  process.on('exit', () => {
    const u = process.cpuUsage();
    process.stderr.write(`\ncpu-at-exit-us ${u.user + u.system}\n`);
  });
}
