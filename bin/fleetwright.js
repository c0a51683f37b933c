#!/usr/bin/env node
// Entry point: runs the compiled build (npm run build, also run by npm ci) when it is current
// for the sources, else registers the TypeScript loader (tsx) and runs the sources themselves
// (build/fresh.js decides; FLEETWRIGHT_BUILD=off forces the sources, =explain says which).
import { builtEntry } from '../build/fresh.js';

// A stack printed by FLEETWRIGHT_DEBUG=1 names source lines, not bundle lines.
if (process.env.FLEETWRIGHT_DEBUG) process.setSourceMapsEnabled(true);
const built = builtEntry('cli');
if (built) {
  await import(built);
} else {
  const { register } = await import('tsx/esm/api');
  register();
  await import('../cli/main.ts');
}
