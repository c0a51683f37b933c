import type { PolicyFactory } from '../../sim/policy.ts';
import { Pibt, pibtOptionDocs, pibtOptions, type PibtOptions } from './pibt.ts';

export const pibt: PolicyFactory<PibtOptions> = {
  name: 'pibt',
  summary: 'reactive: one move per robot per tick by priority inheritance with backtracking; under a backlog robots take the oldest tasks of the cheapest stations (distance, queue, ageing), cheapest pair first; scales to 10,000 robots',
  source: 'Okumura, Machida, Défago, Tamura, IJCAI 2019 / AIJ 2022',
  // Reactive: nothing is reserved beyond the next tick, so the engine may clear stalled robots.
  allowsRecovery: true,
  options: pibtOptions as never,
  optionDocs: pibtOptionDocs,
  // Parsed again so that callers passing raw options (benchmarks, tests) get the defaults.
  create: (context, options) => new Pibt(context, pibtOptions.parse(options ?? {})),
};
