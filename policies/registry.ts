/**
 * Every policy, by name. Adding a policy = one folder under policies/ exporting a
 * PolicyFactory, plus one line here; no engine code changes.
 */
import type { PolicyFactory } from '../sim/policy.ts';
import { InputError } from '../sim/errors.ts';
import { tokenPassing } from './token-passing/index.ts';
import { tokenPassingSwaps } from './token-passing-swaps/index.ts';
import { greedyReactive } from './greedy-reactive/index.ts';
import { pibt } from './pibt/index.ts';
import { flowBatch } from './flow-batch/index.ts';

export const policies: readonly PolicyFactory<any>[] = [tokenPassing, tokenPassingSwaps, flowBatch, greedyReactive, pibt];

export function policyNames(): string[] {
  return policies.map((p) => p.name);
}

export function findPolicy(name: string, field = 'policy.name'): PolicyFactory<any> {
  const found = policies.find((p) => p.name === name);
  if (!found) throw new InputError(`${field}: got ${JSON.stringify(name)}, expected one of ${policyNames().join(', ')}`);
  return found;
}

/** Validates a policy's options (the scenario's policy keys other than name); one-line error naming the key. */
export function parsePolicyOptions(factory: PolicyFactory<any>, options: Record<string, unknown>): unknown {
  const result = factory.options.safeParse(options);
  if (result.success) return result.data;
  const issue = result.error.issues[0];
  const key = issue.path.length > 0 ? issue.path.join('.') : (issue as { keys?: string[] }).keys?.join(', ') ?? '';
  const got = issue.path.length > 0 ? JSON.stringify(issue.path.reduce<any>((o, k) => (o == null ? o : o[k as never]), options)) : '';
  const expected = factory.optionDocs.map((d) => d.name).join(', ') || 'no options';
  throw new InputError(`policy.${key}: ${issue.message}${got ? ` (got ${got})` : ''}; ${factory.name} accepts ${expected}`);
}
