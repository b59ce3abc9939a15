import { describe, expect, it } from 'vitest';
import { CliError, parsePlaceArgs } from '../../../src/cli/args';

const base = ['--importance', 'imp.tif'];

describe('parsePlaceArgs', () => {
	it('fills the documented defaults', () => {
		const a = parsePlaceArgs([...base, '--count', '5', '--radius', '150']);
		expect(a).toMatchObject({
			importance: 'imp.tif',
			band: 1,
			crs: null,
			count: 5,
			radius: 150,
			strategy: 'range-limited',
			maxIterations: 500,
			tolerance: null,
			seed: 1,
			out: null,
			zones: null,
			zoneGrid: null,
			minSpacing: null,
			maxTravel: null
		});
	});
	it('lets lloyd run without --radius (its step does not use one)', () => {
		expect(parsePlaceArgs([...base, '--count', '5', '--strategy', 'lloyd'])).toMatchObject({ strategy: 'lloyd', radius: null });
	});
	it('reads --min-spacing and --max-travel', () => {
		expect(parsePlaceArgs([...base, '--sensors', 's.geojson', '--min-spacing', '250', '--max-travel', '1200.5'])).toMatchObject({ minSpacing: 250, maxTravel: 1200.5 });
	});
	it('reads every option', () => {
		const a = parsePlaceArgs([
			...base, '--band', '2', '--crs', 'EPSG:32633', '--sensors', 's.geojson', '--strategy', 'zone-balanced',
			'--radius', '80.5', '--zone-grid', '4x3', '--study-area', 'a.geojson', '--exclusions', 'x.geojson',
			'--max-iterations', '0', '--tolerance', '0', '--seed', '42', '--out', 'o.geojson', '--cell-size', '25'
		]);
		expect(a).toMatchObject({ band: 2, crs: 'EPSG:32633', sensors: 's.geojson', strategy: 'zone-balanced', radius: 80.5,
			zoneGrid: { cols: 4, rows: 3 }, studyArea: 'a.geojson', exclusions: 'x.geojson', maxIterations: 0, tolerance: 0,
			seed: 42, out: 'o.geojson', cellSize: 25 });
	});
	it('returns help for --help even with other options', () => {
		expect(parsePlaceArgs(['--help'])).toBe('help');
		expect(parsePlaceArgs([...base, '--help'])).toBe('help');
	});
	const bad: Array<[string, string[], RegExp]> = [
		['no importance', ['--count', '3', '--radius', '1'], /--importance FILE is required/],
		['neither sensors nor count', [...base], /--sensors FILE or --count N/],
		['both sensors and count', [...base, '--sensors', 's', '--count', '3', '--radius', '1'], /not both/],
		['count without radius', [...base, '--count', '3'], /--count needs --radius M \(the sensing radius of the new sensors\) with --strategy range-limited/],
		['negative min spacing', [...base, '--count', '3', '--radius', '1', '--min-spacing=-5'], /--min-spacing must be a number >= 0/],
		['max travel for new sensors', [...base, '--count', '3', '--radius', '1', '--max-travel', '100'], /--max-travel limits how far existing sensors move: give --sensors FILE/],
		['count of zero', [...base, '--count', '0', '--radius', '1'], /--count must be an integer >= 1/],
		['fractional count', [...base, '--count', '2.5', '--radius', '1'], /--count must be an integer/],
		['negative radius', [...base, '--count', '2', '--radius=-4'], /--radius must be a number > 0/],
		['a dash value without =', [...base, '--count', '2', '--radius', '-4'], /--radius needs a value \(write a value starting with "-" as --radius=-1\)/],
		['unknown strategy', [...base, '--count', '2', '--radius', '4', '--strategy', 'greedy'], /--strategy must be one of lloyd, range-limited, zone-balanced/],
		['zone-balanced without zones', [...base, '--count', '2', '--radius', '4', '--strategy', 'zone-balanced'], /needs --zones FILE or --zone-grid/],
		['bad zone grid', [...base, '--count', '2', '--radius', '4', '--zone-grid', '4by3'], /--zone-grid must look like 4x3/],
		['zones and zone grid', [...base, '--count', '2', '--radius', '4', '--zone-grid', '2x2', '--zones', 'z'], /either --zones or --zone-grid/],
		['bad crs', [...base, '--count', '2', '--radius', '4', '--crs', 'UTM33'], /--crs must look like EPSG:32633/],
		['negative tolerance', [...base, '--count', '2', '--radius', '4', '--tolerance=-1'], /--tolerance must be a number >= 0/],
		['unknown option', [...base, '--count', '2', '--radius', '4', '--colour', 'red'], /Unknown option '--colour'/],
		['stray positional', [...base, '--count', '2', '--radius', '4', 'extra'], /unexpected argument "extra"/],
		['option without value', [...base, '--count'], /--count/]
	];
	for (const [label, argv, msg] of bad) {
		it(`refuses ${label} with a CliError of one line`, () => {
			let err: unknown;
			try {
				parsePlaceArgs(argv);
			} catch (e) {
				err = e;
			}
			expect(err).toBeInstanceOf(CliError);
			expect((err as Error).message).toMatch(msg);
			expect((err as Error).message).not.toContain('\n');
		});
	}
});
