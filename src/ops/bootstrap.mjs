#!/usr/bin/env node
// `npm start` and `npm test` land here first. Plain Node with no dependencies: it installs the
// project's packages when they are missing or older than package-lock.json, then hands over to the
// TypeScript entry (start.ts or test.ts) through tsx.
import { spawnSync, spawn } from 'node:child_process';
import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { createHash } from 'node:crypto';
import { fileURLToPath } from 'node:url';
import path from 'node:path';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');
const entry = process.argv[2];
if (entry !== 'start' && entry !== 'test') {
	console.error('usage: node src/ops/bootstrap.mjs start|test');
	process.exit(2);
}

// node_modules is current when it was installed from this very package-lock.json (by content).
const lock = path.join(root, 'package-lock.json');
const stamp = path.join(root, 'node_modules', '.cairnfield-lock-hash');
const lockHash = createHash('sha256').update(readFileSync(lock)).digest('hex');
const stale = !existsSync(stamp) || readFileSync(stamp, 'utf8').trim() !== lockHash;
if (stale) {
	console.log('› installing packages (npm ci)…');
	const r = spawnSync('npm', ['ci', '--no-audit', '--no-fund'], { cwd: root, stdio: 'inherit' });
	if (r.status !== 0) {
		console.error('npm ci failed');
		process.exit(r.status ?? 1);
	}
	writeFileSync(stamp, lockHash + '\n');
}

// Node with tsx's loader (not the tsx command, whose second Ctrl-C kills the child at once and
// would cut the orderly shutdown of MariaDB short).
const child = spawn(process.execPath, ['--import', 'tsx', path.join(root, 'src', 'ops', `${entry}.ts`), ...process.argv.slice(3)], {
	cwd: root,
	stdio: 'inherit'
});
// Ctrl-C reaches the whole foreground process group; a signal sent to this process alone is passed
// on. The child's handlers are idempotent, so receiving one twice is harmless.
for (const sig of ['SIGINT', 'SIGTERM']) process.on(sig, () => child.kill(sig));
child.on('exit', (code, signal) => process.exit(code ?? (signal ? 130 : 1)));
