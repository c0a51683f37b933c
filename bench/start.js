// `npm run bench`: runs the compiled benchmark (build/build.js) when the build is current for
// the sources, else the TypeScript sources through tsx (build/fresh.js decides; the rows say
// which under `loader`). Arguments pass through to bench/run.ts.
import { builtEntry } from '../build/fresh.js';

const built = builtEntry('bench');
process.env.FLEETWRIGHT_BENCH_LOADER = built ? 'build' : 'tsx';
if (built) {
  await import(built);
} else {
  const { register } = await import('tsx/esm/api');
  register();
  await import('./run.ts');
}
