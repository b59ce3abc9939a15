/**
 * Argument parsing of `cairnfield place`, kept apart from any I/O so it can be tested directly.
 */
import { parseArgs } from 'node:util';
import { STRATEGIES, type Strategy } from '../lib/engine/types';

/** A usage error: the message is one line for stderr; exit code 2. */
export class CliError extends Error {
	constructor(message: string) {
		super(message);
		this.name = 'CliError';
	}
}

export interface PlaceArgs {
	importance: string;
	band: number;
	crs: string | null;
	sensors: string | null;
	count: number | null;
	strategy: Strategy;
	radius: number | null;
	minSpacing: number | null;
	maxTravel: number | null;
	zones: string | null;
	zoneGrid: { cols: number; rows: number } | null;
	studyArea: string | null;
	exclusions: string | null;
	maxIterations: number;
	tolerance: number | null;
	seed: number;
	cellSize: number | null;
	out: string | null;
}

export const PLACE_USAGE = `Usage: cairnfield place --importance FILE (--sensors FILE | --count N) [options]

Places sensors over an importance raster and writes a GeoJSON FeatureCollection (RFC 7946).

  --importance FILE     GeoTIFF of importance (non-negative; nodata, NaN and negatives count as 0)
  --band N              band of the GeoTIFF to use (default 1)
  --crs EPSG:N          working CRS (projected, metres); default: the raster's own CRS when
                        projected, otherwise the UTM zone of the area's centre
  --sensors FILE        GeoJSON FeatureCollection of Points (WGS 84 lon/lat) with properties
                        id (string), optional radius_m and mobility (fixed|relocatable|mobile)
  --count N             place N new sensors on ground that has none yet, instead
  --strategy S          lloyd | range-limited | zone-balanced (default range-limited)
  --radius M            sensing radius in metres for sensors without radius_m (and for --count);
                        lloyd does not need it: coverage is then not reported
  --min-spacing M       no sensor ends up closer than M metres to another
  --max-travel M        no existing sensor ends up farther than M metres from where it stands
  --zones FILE          GeoJSON zone polygons with property id; the zones' union bounds the
                        placement: importance outside every zone is left out, and a warning
                        says so when the zones hold less than 95 % of it
  --zone-grid CxR       or a regular grid of C columns by R rows of zones
  --study-area FILE     GeoJSON polygon(s): cells outside get no importance and no sensor
  --exclusions FILE     GeoJSON polygon(s): cells inside get no importance and no sensor
  --cell-size M         working-grid cell size in metres, never finer than the raster's pixels;
                        default the largest of: 1/10 of the smallest sensing radius, the size
                        that fits the study area (or raster) in a million cells, the pixel size
  --max-iterations N    default 500
  --tolerance M         stop when no sensor moved more than M metres in an iteration
                        (default 1 % of a cell); 0 runs every iteration
  --seed N              seed of the random first positions of new sensors (default 1)
  --out FILE            write the result there (default: standard output)
  --help                show this text

Warnings go to stderr as lines starting "cairnfield: warning:" and into placement.warnings.
Exit codes: 0 done, 2 bad input (one line on stderr, nothing written), 1 unexpected failure.`;

function positiveInt(name: string, v: string | undefined, min: number): number | null {
	if (v === undefined) return null;
	if (!/^\d+$/.test(v.trim())) throw new CliError(`--${name} must be an integer >= ${min}, got "${v}"`);
	const n = Number(v);
	if (n < min || !Number.isSafeInteger(n)) throw new CliError(`--${name} must be an integer >= ${min}, got "${v}"`);
	return n;
}

function number(name: string, v: string | undefined, opts: { positive?: boolean }): number | null {
	if (v === undefined) return null;
	const n = Number(v);
	if (v.trim() === '' || !Number.isFinite(n) || (opts.positive ? !(n > 0) : n < 0)) {
		throw new CliError(`--${name} must be a number ${opts.positive ? '> 0' : '>= 0'}, got "${v}"`);
	}
	return n;
}

/** Parse the arguments after `place`. Returns 'help' when --help was asked for. */
export function parsePlaceArgs(argv: string[]): PlaceArgs | 'help' {
	let values: Record<string, string | boolean | undefined>;
	let positionals: string[];
	try {
		const parsed = parseArgs({
			args: argv,
			strict: true,
			allowPositionals: true,
			options: {
				importance: { type: 'string' },
				band: { type: 'string' },
				crs: { type: 'string' },
				sensors: { type: 'string' },
				count: { type: 'string' },
				strategy: { type: 'string' },
				radius: { type: 'string' },
				'min-spacing': { type: 'string' },
				'max-travel': { type: 'string' },
				zones: { type: 'string' },
				'zone-grid': { type: 'string' },
				'study-area': { type: 'string' },
				exclusions: { type: 'string' },
				'cell-size': { type: 'string' },
				'max-iterations': { type: 'string' },
				tolerance: { type: 'string' },
				seed: { type: 'string' },
				out: { type: 'string' },
				help: { type: 'boolean' }
			}
		});
		values = parsed.values;
		positionals = parsed.positionals;
	} catch (e) {
		const msg = e instanceof Error ? e.message.split('\n')[0] : String(e);
		const ambiguous = /^Option '(--[\w-]+)(?:[^']*)' argument is ambiguous/.exec(msg);
		if (ambiguous) {
			throw new CliError(`${ambiguous[1]} needs a value (write a value starting with "-" as ${ambiguous[1]}=-1)`);
		}
		throw new CliError(`${msg.replace(/\. To specify a positional argument.*$/, '')} (see --help)`);
	}
	if (values.help) return 'help';
	if (positionals.length > 0) throw new CliError(`unexpected argument "${positionals[0]}" (see --help)`);
	const str = (k: string) => values[k] as string | undefined;

	const importance = str('importance');
	if (!importance) throw new CliError('--importance FILE is required (see --help)');
	const sensors = str('sensors') ?? null;
	const count = positiveInt('count', str('count'), 1);
	if (sensors && count !== null) throw new CliError('give either --sensors or --count, not both');
	if (!sensors && count === null) throw new CliError('give --sensors FILE or --count N');

	const strategy = (str('strategy') ?? 'range-limited') as Strategy;
	if (!STRATEGIES.includes(strategy)) throw new CliError(`--strategy must be one of ${STRATEGIES.join(', ')}, got "${strategy}"`);

	const radius = number('radius', str('radius'), { positive: true });
	// Lloyd's step moves each sensor to the centroid of its whole Voronoi cell: the radius plays no part.
	if (count !== null && radius === null && strategy !== 'lloyd') {
		throw new CliError(`--count needs --radius M (the sensing radius of the new sensors) with --strategy ${strategy}`);
	}
	const minSpacing = number('min-spacing', str('min-spacing'), {});
	const maxTravel = number('max-travel', str('max-travel'), {});
	if (maxTravel !== null && !sensors) throw new CliError('--max-travel limits how far existing sensors move: give --sensors FILE');

	const zones = str('zones') ?? null;
	const gridText = str('zone-grid');
	let zoneGrid: PlaceArgs['zoneGrid'] = null;
	if (gridText !== undefined) {
		const m = /^\s*(\d+)\s*[xX×]\s*(\d+)\s*$/.exec(gridText);
		if (!m || Number(m[1]) < 1 || Number(m[2]) < 1) throw new CliError(`--zone-grid must look like 4x3 (columns x rows), got "${gridText}"`);
		zoneGrid = { cols: Number(m[1]), rows: Number(m[2]) };
	}
	if (zones && zoneGrid) throw new CliError('give either --zones or --zone-grid, not both');
	if (strategy === 'zone-balanced' && !zones && !zoneGrid) throw new CliError('--strategy zone-balanced needs --zones FILE or --zone-grid CxR');

	const crs = str('crs') ?? null;
	if (crs !== null && !/^\s*(epsg:)?\d{4,6}\s*$/i.test(crs)) throw new CliError(`--crs must look like EPSG:32633, got "${crs}"`);

	return {
		importance,
		band: positiveInt('band', str('band'), 1) ?? 1,
		crs,
		sensors,
		count,
		strategy,
		radius,
		minSpacing,
		maxTravel,
		zones,
		zoneGrid,
		studyArea: str('study-area') ?? null,
		exclusions: str('exclusions') ?? null,
		maxIterations: positiveInt('max-iterations', str('max-iterations'), 0) ?? 500,
		tolerance: number('tolerance', str('tolerance'), {}),
		seed: positiveInt('seed', str('seed'), 0) ?? 1,
		cellSize: number('cell-size', str('cell-size'), { positive: true }),
		out: str('out') ?? null
	};
}
