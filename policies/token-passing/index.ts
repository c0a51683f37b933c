import type { PolicyFactory } from '../../sim/policy.ts';
import { TokenPassing, tokenPassingOptionDocs, tokenPassingOptions, type TokenPassingOptions } from './token-passing.ts';

export const tokenPassing: PolicyFactory<TokenPassingOptions> = {
  name: 'token-passing',
  summary: 'decoupled: a free robot takes the token, picks the nearest task whose endpoints are free, plans it with space-time A* against reserved paths; parks otherwise',
  source: 'Ma, Li, Kumar, Koenig, AAMAS 2017',
  allowsRecovery: false,
  options: tokenPassingOptions as never,
  optionDocs: tokenPassingOptionDocs,
  create: (context, options) => new TokenPassing(context, options, false),
};
