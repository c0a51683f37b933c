// Entry of a worker thread: worker threads do not inherit the main thread's TypeScript
// loader, so each registers tsx itself before loading the task module.
import { register } from 'tsx/esm/api';

register();
const task = await import('./replication-worker.ts');
export default task.default;
