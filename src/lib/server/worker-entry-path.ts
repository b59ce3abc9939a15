import { existsSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

/**
 * The absolute path of a worker bootstrap file under src/lib/server: beside the calling module in the
 * source tree, or under the project root when running from a production build (which bundles the
 * caller elsewhere). `here` is the caller's import.meta.url.
 */
export function workerEntryPath(here: string, relative: string): string {
	const beside = path.join(path.dirname(fileURLToPath(here)), path.basename(relative));
	if (existsSync(beside)) return beside;
	const fromRoot = path.resolve(process.cwd(), 'src/lib/server', relative);
	if (existsSync(fromRoot)) return fromRoot;
	throw new Error(`worker entry ${relative} not found (run the server from the project folder)`);
}
