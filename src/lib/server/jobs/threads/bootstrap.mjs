// A pool thread: loads the TypeScript tasks through tsx, then runs one task per message.
import { register } from 'tsx/esm/api';
register();
const tasks = await import('./tasks.ts');

export default async function run({ task, input }) {
	const fn = tasks[task];
	if (typeof fn !== 'function') throw new Error(`no thread task called ${task}`);
	return fn(input);
}
