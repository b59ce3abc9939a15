export {};
/**
 * `npm run bench [name ...]`: prints the figures of each benchmark. Benchmarks print numbers;
 * they are not timed tests and never fail on speed.
 * Each module under src/bench/ exports `run(args: string[]): Promise<void>`.
 */
const suites: Record<string, () => Promise<{ run: (args: string[]) => Promise<void> }>> = {
	lloyd: () => import('./lloyd'),
	ingest: () => import('./ingest'),
	jobs: () => import('./jobs'),
	'public-map': () => import('./public-map')
};

const wanted = process.argv.slice(2).filter((a) => !a.startsWith('-'));
// public-map needs a running app, so it runs only when named.
const names = wanted.length > 0 ? wanted : Object.keys(suites).filter((n) => n !== 'public-map');
for (const name of names) {
	const load = suites[name];
	if (!load) {
		console.error(`unknown benchmark "${name}"; known: ${Object.keys(suites).join(', ')}`);
		process.exit(2);
	}
	console.log(`\n## bench ${name}`);
	const mod = await load();
	await mod.run(process.argv.slice(2));
}
