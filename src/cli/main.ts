/**
 * The `cairnfield` command line. Bad input: exit code 2 and one line on stderr; nothing written.
 */
import { rename, writeFile, unlink } from 'node:fs/promises';
import { EngineInputError } from '../lib/engine';
import { RasterError } from '../lib/geo/geotiff';
import { CrsError } from '../lib/geo/crs';
import { GeoJsonError } from '../lib/geo/geojson';
import { WorkingGridError } from '../lib/geo/working-grid';
import { CliError, parsePlaceArgs, PLACE_USAGE } from './args';
import { runPlace } from './place-command';

const USAGE = `Usage: cairnfield <command> [options]

Commands:
  place     place sensors over an importance raster (cairnfield place --help)`;

/** Errors caused by the user's input: shown as one line, exit code 2. */
export function isInputError(e: unknown): e is Error {
	return (
		e instanceof CliError ||
		e instanceof RasterError ||
		e instanceof CrsError ||
		e instanceof GeoJsonError ||
		e instanceof WorkingGridError ||
		e instanceof EngineInputError
	);
}

function oneLine(text: string): string {
	return text.replace(/\s*\n\s*/g, ' ').trim();
}

async function writeAtomically(file: string, text: string): Promise<void> {
	const tmp = `${file}.${process.pid}.tmp`;
	try {
		await writeFile(tmp, text);
		await rename(tmp, file);
	} catch (e) {
		await unlink(tmp).catch(() => undefined);
		throw new CliError(`${file}: cannot be written (${(e as NodeJS.ErrnoException).code ?? String(e)})`);
	}
}

export interface Io {
	stdout: (text: string) => void;
	stderr: (text: string) => void;
}

const processIo: Io = {
	stdout: (t) => process.stdout.write(t),
	stderr: (t) => process.stderr.write(t)
};

/** Run the command line; returns the exit code. */
export async function main(argv: string[], io: Io = processIo): Promise<number> {
	const [command, ...rest] = argv;
	if (command === undefined || command === '--help' || command === '-h' || command === 'help') {
		(command === undefined ? io.stderr : io.stdout)(`${USAGE}\n`);
		return command === undefined ? 2 : 0;
	}
	try {
		if (command !== 'place') throw new CliError(`unknown command "${command}" (known: place)`);
		const args = parsePlaceArgs(rest);
		if (args === 'help') {
			io.stdout(`${PLACE_USAGE}\n`);
			return 0;
		}
		const doc = await runPlace(args);
		for (const w of doc.placement.warnings as string[]) io.stderr(`cairnfield: warning: ${oneLine(w)}\n`);
		const text = `${JSON.stringify(doc)}\n`;
		if (args.out) await writeAtomically(args.out, text);
		else io.stdout(text);
		return 0;
	} catch (e) {
		if (isInputError(e)) {
			io.stderr(`cairnfield: ${oneLine(e.message)}\n`);
			return 2;
		}
		io.stderr(`cairnfield: unexpected failure: ${oneLine(e instanceof Error ? e.message : String(e))}\n`);
		return 1;
	}
}
