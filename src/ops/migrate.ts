/** `npm run migrate [latest|rollback|down-all|status]` against DATABASE_URL. */
import path from 'node:path';
import { createDb, migrationConfig } from '../lib/server/db/knex';

const cmd = process.argv[2] ?? 'latest';
const url = process.env.DATABASE_URL;
if (!url) {
	console.error('DATABASE_URL is not set. `npm start` prints the one it uses.');
	process.exit(2);
}
const db = createDb(url, 2);
const cfg = migrationConfig(path.resolve(import.meta.dirname, '../../migrations'));
try {
	if (cmd === 'latest') console.log((await db.migrate.latest(cfg))[1]);
	else if (cmd === 'rollback') console.log((await db.migrate.rollback(cfg))[1]);
	else if (cmd === 'down-all') console.log((await db.migrate.rollback(cfg, true))[1]);
	else if (cmd === 'status') console.log(await db.migrate.list(cfg));
	else {
		console.error('usage: npm run migrate [latest|rollback|down-all|status]');
		process.exitCode = 2;
	}
} finally {
	await db.destroy();
}
