import type { PolicyFactory } from '../../sim/policy.ts';
import { GreedyReactive, greedyReactiveOptionDocs, greedyReactiveOptions, type GreedyReactiveOptions } from './greedy-reactive.ts';

export const greedyReactive: PolicyFactory<GreedyReactiveOptions> = {
  name: 'greedy-reactive',
  summary: 'what many sites run: nearest task, individually shortest path, wait when blocked; can deadlock, so it measures what deadlocks cost',
  source: 'common practice',
  allowsRecovery: true,
  options: greedyReactiveOptions,
  optionDocs: greedyReactiveOptionDocs,
  create: (context) => new GreedyReactive(context),
};
