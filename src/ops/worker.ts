/**
 * `npm run worker`: a job worker process. Runs on any machine that reaches the database and the
 * object store; start as many as the load needs. Settings: see ./worker-main.ts.
 */
import { registerBuiltInJobKinds } from '../lib/server/jobs/kinds';
import { runWorkerProcess } from './worker-main';

runWorkerProcess(registerBuiltInJobKinds);
