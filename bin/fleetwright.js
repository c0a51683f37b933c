#!/usr/bin/env node
// Entry point: registers the TypeScript loader (tsx) so the sources run without a build step.
import { register } from 'tsx/esm/api';

register();
await import('../cli/main.ts');
