#!/usr/bin/env node
// Entry for the package's `bin`. The command line is TypeScript: it runs from one bundle that
// esbuild writes to node_modules/.cache/cairnfield/ whenever a source it was built from is newer
// (about half a second, once). A bundle starts in a fraction of the time a TypeScript loader
// needs on every run, which matters for a tool that ingests a raster in about a second. The
// packages it uses are bundled too (tree-shaken: of @turf/turf only the few functions used), so
// Node resolves and parses one file instead of hundreds; geotiff stays outside because its
// decoder pool starts worker threads from its own files, and it is loaded only when a raster is
// opened. If the bundle cannot be built, the sources run through tsx as before.
import { existsSync, mkdirSync, readFileSync, renameSync, statSync, writeFileSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '../..');
const entry = join(root, 'src/cli/cairnfield.ts');
const cache = join(root, 'node_modules/.cache/cairnfield');
const out = join(cache, 'cli.mjs');
const inputsFile = join(cache, 'cli.inputs.json');

function fresh() {
	if (!existsSync(out) || !existsSync(inputsFile)) return false;
	const built = statSync(out).mtimeMs;
	if (statSync(fileURLToPath(import.meta.url)).mtimeMs > built) return false; // the build settings changed
	try {
		return JSON.parse(readFileSync(inputsFile, 'utf8')).every((/** @type {string} */ f) => statSync(join(root, f)).mtimeMs <= built);
	} catch {
		return false; // a source was removed or renamed
	}
}

async function bundle() {
	const { build } = await import('esbuild');
	mkdirSync(cache, { recursive: true });
	const tmp = `${out}.${process.pid}.tmp`;
	const result = await build({
		entryPoints: [entry],
		bundle: true,
		platform: 'node',
		format: 'esm',
		target: 'node20',
		external: ['geotiff'],
		// Bundled CommonJS packages may require Node's built-ins.
		banner: { js: "import { createRequire as __createRequire } from 'node:module'; const require = __createRequire(import.meta.url);" },
		outfile: tmp,
		metafile: true,
		logLevel: 'silent',
		absWorkingDir: root
	});
	// Our sources by name; the bundled packages through npm's record of the installed tree,
	// which changes whenever a package is installed or updated.
	const sources = Object.keys(result.metafile.inputs).filter((f) => !f.startsWith('node_modules/'));
	writeFileSync(inputsFile, JSON.stringify([...sources, 'node_modules/.package-lock.json']));
	renameSync(tmp, out);
}

let bundled = fresh();
if (!bundled) {
	try {
		await bundle();
		bundled = true;
	} catch {
		bundled = false;
	}
}
if (bundled) {
	await import(pathToFileURL(out).href);
} else {
	const { register } = await import('tsx/esm/api');
	register();
	// @ts-ignore -- a .ts entry loaded through tsx at run time
	await import('./cairnfield.ts');
}
