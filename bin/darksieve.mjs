#!/usr/bin/env node
// Entry point: registers the TypeScript loader (tsx) so the sources run as they are, without a build
// step, then hands over to the CLI. Worker threads use the same loader through workers/thread-entry.mjs.
import { register } from 'tsx/esm/api';

register();
await import(new URL('../scheduler/cli.ts', import.meta.url).href);
