import { describe, expect, it } from 'vitest';
import { place, zoneGrid } from '../../../src/lib/engine';
import type { PlacementOptions, SensorInput } from '../../../src/lib/engine';
import { gridFrom, sensor } from './grids';

describe('place() is a pure function', () => {
	const grid = gridFrom(30, 20, 10, (u, v) => 1 + Math.sin(u / 5) + v / 10, (u, v) => !(u > 12 && u < 15 && v > 5 && v < 12));
	const zones = zoneGrid(grid, 2, 2);
	const sensors: SensorInput[] = [
		sensor(grid, 'A', 3.3, 4.1, 60),
		sensor(grid, 'B', 3.3, 4.1, 60), // coincident with A
		sensor(grid, 'C', 25.2, 15.7, 80, { mobility: 'fixed' }),
		sensor(grid, 'D', 40, 10, 60, { maxTravel: 150 }) // outside the grid
	];

	for (const strategy of ['lloyd', 'range-limited', 'zone-balanced'] as const) {
		it(`place(grid, zones, sensors, ${strategy}) never mutates its inputs`, () => {
			const before = {
				mass: grid.mass.slice(),
				feasible: grid.feasible.slice(),
				cellZone: zones.cellZone.slice(),
				ids: [...zones.ids],
				sensors: JSON.parse(JSON.stringify(sensors))
			};
			const options: PlacementOptions = { strategy, minSpacing: 15, maxIterations: 50 };
			const optionsCopy = { ...options };
			place(grid, zones, sensors, options);
			expect(grid.mass).toEqual(before.mass);
			expect(grid.feasible).toEqual(before.feasible);
			expect(zones.cellZone).toEqual(before.cellZone);
			expect(zones.ids).toEqual(before.ids);
			expect(JSON.parse(JSON.stringify(sensors))).toEqual(before.sensors);
			expect(options).toEqual(optionsCopy);
		});
	}

	it('place(…, same seed) returns the same result; another seed another start', () => {
		const a = place(grid, zones, [], { strategy: 'zone-balanced', count: 7, radius: 70, seed: 5 });
		const b = place(grid, zones, [], { strategy: 'zone-balanced', count: 7, radius: 70, seed: 5 });
		const c = place(grid, zones, [], { strategy: 'zone-balanced', count: 7, radius: 70, seed: 6 });
		expect(a).toEqual(b);
		expect(c.history[0].cost).not.toBe(a.history[0].cost);
	});
});
