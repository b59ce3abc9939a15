/** Small helpers for the set-up scripts: Debian packages, free ports, waiting. */
import { spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import net from 'node:net';

export function log(msg: string): void {
	console.log(`› ${msg}`);
}

export function commandExists(cmd: string): boolean {
	return spawnSync('sh', ['-c', `command -v ${cmd}`], { stdio: 'ignore' }).status === 0;
}

let aptUpdated = false;

/** Installs Debian packages when `probe` (a path or a command) is missing. */
export function ensureDebianPackages(probe: string, packages: string[]): void {
	const present = probe.startsWith('/') ? existsSync(probe) : commandExists(probe);
	if (present) return;
	if (!commandExists('apt-get')) {
		throw new Error(`${probe} is missing and apt-get is not available: install ${packages.join(' ')} by hand`);
	}
	const sudo = process.getuid && process.getuid() !== 0 ? ['sudo'] : [];
	const run = (args: string[]) => {
		const r = spawnSync(sudo[0] ?? args[0], sudo.length ? args : args.slice(1), {
			stdio: 'inherit',
			env: { ...process.env, DEBIAN_FRONTEND: 'noninteractive' }
		});
		if (r.status !== 0) throw new Error(`${args.join(' ')} failed`);
	};
	log(`installing Debian packages: ${packages.join(' ')}`);
	if (!aptUpdated) {
		run(['apt-get', '-o', 'DPkg::Lock::Timeout=600', 'update', '-qq']);
		aptUpdated = true;
	}
	run(['apt-get', '-o', 'DPkg::Lock::Timeout=600', 'install', '-y', '-qq', ...packages]);
}

/** A free TCP port on 127.0.0.1, chosen by the kernel. */
export function freePort(): Promise<number> {
	return new Promise((resolve, reject) => {
		const srv = net.createServer();
		srv.unref();
		srv.on('error', reject);
		srv.listen(0, '127.0.0.1', () => {
			const addr = srv.address();
			srv.close(() => (typeof addr === 'object' && addr ? resolve(addr.port) : reject(new Error('no port'))));
		});
	});
}

export function portInUse(port: number): Promise<boolean> {
	return new Promise((resolve) => {
		const sock = net.connect({ port, host: '127.0.0.1' });
		sock.once('connect', () => {
			sock.destroy();
			resolve(true);
		});
		sock.once('error', () => resolve(false));
	});
}

export const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

export async function waitFor(what: string, check: () => Promise<boolean>, timeoutMs = 30_000): Promise<void> {
	const end = Date.now() + timeoutMs;
	while (Date.now() < end) {
		if (await check()) return;
		await sleep(150);
	}
	throw new Error(`timed out waiting for ${what}`);
}
