/**
 * Starts `npm run worker`'s entry (src/ops/worker.ts) as a child process, for `npm start`, `npm test`
 * and the fault tests, and stops it with SIGTERM (the worker hands back its jobs), then SIGKILL.
 */
import { spawn, type ChildProcess, type StdioOptions } from 'node:child_process';
import path from 'node:path';

const root = path.resolve(import.meta.dirname, '../..');

export interface WorkerProcess {
	child: ChildProcess;
	stop(timeoutMs?: number): Promise<void>;
}

/** `entry` defaults to src/ops/worker.ts (the fault tests pass an entry with their own job kinds). */
export function startWorkerProcess(env: NodeJS.ProcessEnv, stdio: StdioOptions = 'inherit', entry = path.join(root, 'src', 'ops', 'worker.ts')): WorkerProcess {
	const child = spawn(process.execPath, ['--import', 'tsx', entry], { cwd: root, stdio, env: { ...process.env, ...env } });
	return {
		child,
		stop(timeoutMs = 25_000) {
			return new Promise<void>((resolve) => {
				if (child.exitCode !== null || child.signalCode !== null) return resolve();
				const t = setTimeout(() => child.kill('SIGKILL'), timeoutMs);
				child.once('exit', () => {
					clearTimeout(t);
					resolve();
				});
				child.kill('SIGTERM');
			});
		}
	};
}
