#!/usr/bin/env node
// Entry point. Runs the CLI from a cached bundle of its sources (bin/bundle-cache.mjs: about a third
// of the start-up time), or, when there is none, registers the TypeScript loader (tsx) and runs the
// sources as they are. A stand-in physics module for tests (DARKSIEVE_PHYSICS_MODULE, a .ts file)
// needs tsx in this process, so it takes the second way.
import { bundledEntry } from './bundle-cache.mjs';

const cli = new URL('../scheduler/cli.ts', import.meta.url);
const bundle = process.env.DARKSIEVE_PHYSICS_MODULE ? null : await bundledEntry(cli);
if (process.env.DARKSIEVE_DEBUG) process.setSourceMapsEnabled(true);
if (bundle) {
  await import(bundle);
} else {
  const { register } = await import('tsx/esm/api');
  register();
  await import(cli.href);
}
