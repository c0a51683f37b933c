import type { PolicyFactory } from '../../sim/policy.ts';
import { FlowBatch, flowBatchOptionDocs, flowBatchOptions, type FlowBatchOptions } from './flow-batch.ts';

export const flowBatch: PolicyFactory<FlowBatchOptions> = {
  name: 'flow-batch',
  summary: 'centralized: every epoch, assigns free robots to open tasks optimally over grid distances (with ageing), then plans them one by one against reserved paths; parks otherwise',
  source: 'assignment: Kuhn 1955, Jonker & Volgenant 1987; prioritized planning: Erdmann & Lozano-Perez 1987, Silver 2005',
  allowsRecovery: false,
  options: flowBatchOptions as never,
  optionDocs: flowBatchOptionDocs,
  create: (context, options) => new FlowBatch(context, options),
};
