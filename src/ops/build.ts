/** Builds the app when its sources changed since the last build (a hash of the inputs is kept in build/). */
import { spawnSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { existsSync, readdirSync, readFileSync, statSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { log } from './system';

const root = path.resolve(import.meta.dirname, '../..');
const inputs = ['src', 'static', 'svelte.config.js', 'vite.config.ts', 'tailwind.config.ts', 'package-lock.json', 'tsconfig.json'];

function hashTree(): string {
	const h = createHash('sha256');
	const walk = (p: string) => {
		if (!existsSync(p)) return;
		const st = statSync(p);
		if (st.isDirectory()) {
			for (const n of readdirSync(p).sort()) walk(path.join(p, n));
		} else {
			h.update(path.relative(root, p));
			h.update(readFileSync(p));
		}
	};
	for (const i of inputs) walk(path.join(root, i));
	return h.digest('hex');
}

export function buildIfChanged(force = false): void {
	const stamp = path.join(root, 'build', '.source-hash');
	const hash = hashTree();
	if (!force && existsSync(stamp) && readFileSync(stamp, 'utf8') === hash) {
		log('app build is up to date');
		return;
	}
	log('building the app (vite build)…');
	const r = spawnSync(path.join(root, 'node_modules', '.bin', 'vite'), ['build', '--logLevel', 'warn'], { cwd: root, stdio: 'inherit' });
	if (r.status !== 0) throw new Error('vite build failed');
	writeFileSync(stamp, hash);
}
