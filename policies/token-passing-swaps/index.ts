import type { PolicyFactory } from '../../sim/policy.ts';
import { TokenPassing, tokenPassingOptionDocs, tokenPassingOptions, type TokenPassingOptions } from '../token-passing/token-passing.ts';

export const tokenPassingSwaps: PolicyFactory<TokenPassingOptions> = {
  name: 'token-passing-swaps',
  summary: 'token passing, plus taking a not-yet-picked task from a robot that would reach its pickup later; the displaced robot asks again',
  source: 'Ma, Li, Kumar, Koenig, AAMAS 2017',
  allowsRecovery: false,
  options: tokenPassingOptions as never,
  optionDocs: tokenPassingOptionDocs,
  create: (context, options) => new TokenPassing(context, options, true),
};
