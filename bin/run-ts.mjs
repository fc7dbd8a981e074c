#!/usr/bin/env node
// Runs one TypeScript file with the tsx loader registered: `node bin/run-ts.mjs FILE [args...]`.
import { register } from 'tsx/esm/api';
import { pathToFileURL } from 'node:url';
import path from 'node:path';

const file = process.argv[2];
if (!file) {
  process.stderr.write('usage: node bin/run-ts.mjs FILE.ts [args...]\n');
  process.exit(2);
}
register();
process.argv.splice(2, 1);
await import(pathToFileURL(path.resolve(file)).href);
