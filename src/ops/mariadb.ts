/**
 * A private MariaDB server on loopback, owned by `npm start` (persistent, under data/) or by
 * `npm test` (throwaway, under /dev/shm or the temp dir). Debian's mariadb-server is installed
 * when absent. See STACK notes in DEVELOPERS.md.
 */
import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, rmSync } from 'node:fs';
import path from 'node:path';
import { ensureDebianPackages, log, waitFor } from './system';

export interface MariaDbServer {
	port: number;
	socket: string;
	pid: number;
	stop(): Promise<void>;
	/** Runs SQL as the server's root user over the socket. */
	sql(statements: string): void;
}

export interface MariaDbOptions {
	datadir: string;
	/** Folder for the socket, pid and log (kept short: socket paths must stay under 107 chars). */
	rundir: string;
	port: number;
	small?: boolean;
}

export function ensureMariaDbInstalled(): void {
	ensureDebianPackages('mariadbd', ['mariadb-server', 'mariadb-client']);
	// Debian puts mariadbd in /usr/sbin, which is not on every PATH.
	if (!process.env.PATH?.split(':').includes('/usr/sbin')) process.env.PATH = `${process.env.PATH}:/usr/sbin`;
}

function alive(pid: number): boolean {
	try {
		process.kill(pid, 0);
		return true;
	} catch {
		return false;
	}
}

export async function startMariaDb(opts: MariaDbOptions): Promise<MariaDbServer> {
	ensureMariaDbInstalled();
	mkdirSync(opts.rundir, { recursive: true });
	const socket = path.join(opts.rundir, 'mysqld.sock');
	const pidFile = path.join(opts.rundir, 'mysqld.pid');
	const logFile = path.join(opts.rundir, 'mysqld.err');
	if (socket.length > 100) throw new Error(`socket path too long for MariaDB: ${socket}`);

	// A server left running by an earlier run that was killed hard: stop it first.
	if (existsSync(pidFile)) {
		const old = Number(readFileSync(pidFile, 'utf8').trim());
		if (old > 0 && alive(old)) {
			log(`stopping a MariaDB left running (pid ${old})`);
			process.kill(old, 'SIGTERM');
			await waitFor('the old MariaDB to stop', async () => !alive(old), 30_000);
		}
	}

	if (!existsSync(path.join(opts.datadir, 'mysql'))) {
		log(`creating MariaDB datadir ${opts.datadir}`);
		mkdirSync(opts.datadir, { recursive: true });
		const r = spawnSync(
			'mariadb-install-db',
			['--no-defaults', `--datadir=${opts.datadir}`, '--skip-test-db', '--auth-root-authentication-method=socket'],
			{ encoding: 'utf8' }
		);
		if (r.status !== 0) {
			rmSync(opts.datadir, { recursive: true, force: true });
			throw new Error(`mariadb-install-db failed: ${r.stderr || r.stdout}`);
		}
	}

	const args = [
		'--no-defaults',
		`--datadir=${opts.datadir}`,
		`--socket=${socket}`,
		`--port=${opts.port}`,
		'--bind-address=127.0.0.1',
		'--user=root',
		`--pid-file=${pidFile}`,
		`--log-error=${logFile}`,
		'--character-set-server=utf8mb4',
		'--collation-server=utf8mb4_unicode_ci',
		'--skip-name-resolve'
	];
	if (opts.small) args.push('--innodb-log-file-size=8M', '--innodb-buffer-pool-size=32M', '--innodb-flush-log-at-trx-commit=2');
	const child: ChildProcess = spawn('mariadbd', args, { stdio: 'ignore', detached: false });
	let exited = false;
	child.on('exit', () => (exited = true));
	const pid = child.pid!;

	const ping = () =>
		spawnSync('mariadb-admin', ['--no-defaults', `--socket=${socket}`, '--user=root', 'ping'], { stdio: 'ignore' }).status === 0;
	await waitFor(
		'MariaDB to accept connections',
		async () => {
			if (exited) {
				const tail = existsSync(logFile) ? readFileSync(logFile, 'utf8').split('\n').slice(-8).join('\n') : '';
				throw new Error(`MariaDB exited during start-up (port ${opts.port} in use?)\n${tail}`);
			}
			return ping();
		},
		45_000
	);

	const sql = (statements: string) => {
		const r = spawnSync('mariadb', ['--no-defaults', `--socket=${socket}`, '--user=root', '-e', statements], { encoding: 'utf8' });
		if (r.status !== 0) throw new Error(`SQL failed: ${r.stderr}`);
	};

	return {
		port: opts.port,
		socket,
		pid,
		sql,
		async stop() {
			if (exited) return;
			child.kill('SIGTERM');
			// A clean InnoDB shutdown takes well under a second here; crash recovery covers a kill.
			await waitFor('MariaDB to stop', async () => exited, 20_000).catch(() => child.kill('SIGKILL'));
		}
	};
}

/** Creates the database and an app user reachable over TCP from 127.0.0.1 and localhost. */
export function createAppDatabase(server: MariaDbServer, db: string, user: string, password: string, opts: { allDatabases?: boolean } = {}): void {
	const scope = opts.allDatabases ? '*.*' : `\`${db}\`.*`;
	const esc = password.replace(/'/g, "''");
	server.sql(
		[
			`CREATE DATABASE IF NOT EXISTS \`${db}\` CHARACTER SET utf8mb4 COLLATE utf8mb4_unicode_ci;`,
			...['127.0.0.1', 'localhost'].flatMap((host) => [
				`CREATE USER IF NOT EXISTS '${user}'@'${host}' IDENTIFIED BY '${esc}';`,
				`ALTER USER '${user}'@'${host}' IDENTIFIED BY '${esc}';`,
				`GRANT ALL PRIVILEGES ON ${scope} TO '${user}'@'${host}';`
			]),
			'FLUSH PRIVILEGES;'
		].join('\n')
	);
}
