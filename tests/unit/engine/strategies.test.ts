import { describe, expect, it } from 'vitest';
import { place, zoneGrid } from '../../../src/lib/engine';
import type { PlacementResult, SensorInput } from '../../../src/lib/engine';
import { gridFrom, sensor } from './grids';

// Method behaviour (facts of the method, common practice, no source): range-limited sensors
// only see mass within R, so a group that starts in one region cannot "see" a distant region;
// the zone-balanced form adds the pull that moves sensors to the zones that lack them.
// Set-up: 80 × 40 cells of 10 m; west half holds 60% of the mass, east half 40%.
const grid = gridFrom(80, 40, 10, (u) => (u < 40 ? 0.6 : 0.4));
const halves = zoneGrid(grid, 2, 1); // Z1 = west, Z2 = east
const westStart = Array.from({ length: 10 }, (_, i) => [14 + (i % 4) * 3.1 + 0.37 * i, 12 + Math.floor(i / 4) * 5.3 + 0.21 * i]);
const group = (radius: number): SensorInput[] => westStart.map(([u, v], i) => sensor(grid, `S${i + 1}`, u, v, radius));
const eastCount = (r: PlacementResult) => r.sensors.filter((s) => s.x - grid.x0 >= 400).length;

describe('place(…, range-limited)', () => {
	it('place(westEast6040, 10 sensors in the west, R = 40 m, range-limited) keeps every sensor in the west', () => {
		const r = place(grid, halves, group(40), { strategy: 'range-limited' });
		expect(r.converged).toBe(true);
		expect(eastCount(r)).toBe(0);
		expect(r.zones.map((z) => z.sensors)).toEqual([10, 0]);
		// Full-view Lloyd from the same start does reach the east.
		const lloyd = place(grid, halves, group(40), { strategy: 'lloyd' });
		expect(eastCount(lloyd)).toBe(4);
	});

	it('place(…, range-limited) leaves a sensor with no mass in reach where it is', () => {
		const g = gridFrom(50, 50, 10, (u, v) => (u > 40 && v > 40 ? 1 : 0));
		const lone = sensor(g, 'A', 5.5, 5.5, 30);
		const r = place(g, null, [lone], { strategy: 'range-limited' });
		expect(r.sensors[0].x).toBe(lone.x);
		expect(r.sensors[0].y).toBe(lone.y);
		expect(r.coverage).toBe(0);
		expect(r.converged).toBe(true);
	});
});

describe('place(…, zone-balanced)', () => {
	it('place(westEast6040, 10 sensors in the west, R = 40 m, zone-balanced) ends with 6 west and 4 east', () => {
		const r = place(grid, halves, group(40), { strategy: 'zone-balanced' });
		expect(r.converged).toBe(true);
		expect(r.zones.map((z) => z.sensors)).toEqual([6, 4]);
		expect(r.zones[0].mass).toBeCloseTo(0.6, 12);
		for (const z of r.zones) expect(Math.abs(z.sigma)).toBeLessThan(1e-12);
	});

	it('place(westEast6040, 10 sensors, R = 100 m, zone-balanced) ends 6/4 with a cost within 10% of full-view Lloyd', () => {
		// Range-limited alone stalls at 8/2 here (cost ≈ 1.8 × Lloyd's); zone-balanced measured
		// 1.085 × Lloyd's.
		const lloyd = place(grid, halves, group(100), { strategy: 'lloyd' });
		const ranged = place(grid, halves, group(100), { strategy: 'range-limited' });
		const balanced = place(grid, halves, group(100), { strategy: 'zone-balanced' });
		expect(lloyd.zones.map((z) => z.sensors)).toEqual([6, 4]);
		expect(ranged.zones[0].sensors).toBeGreaterThan(6);
		expect(balanced.zones.map((z) => z.sensors)).toEqual([6, 4]);
		expect(balanced.cost / lloyd.cost).toBeLessThan(1.1);
		expect(balanced.cost).toBeLessThan(ranged.cost);
	});

	it('place(balancedZones, zone-balanced) equals place(…, range-limited) when σ = 0 from the start', () => {
		// 6 sensors start in the west and 4 in the east: σ = 0 in both zones, so there is no pull.
		const start = [...westStart.slice(0, 6), [52.3, 9.1], [66.2, 12.7], [55.4, 29.8], [70.9, 31.3]];
		const sensors = start.map(([u, v], i) => sensor(grid, `S${i + 1}`, u, v, 40));
		const opts = { maxStep: 1e9 };
		const a = place(grid, halves, sensors, { strategy: 'zone-balanced', ...opts });
		const b = place(grid, halves, sensors, { strategy: 'range-limited', ...opts });
		expect(a.iterations).toBe(b.iterations);
		for (let i = 0; i < sensors.length; i++) {
			expect(a.sensors[i].x).toBeCloseTo(b.sensors[i].x, 9);
			expect(a.sensors[i].y).toBeCloseTo(b.sensors[i].y, 9);
		}
		expect(a.cost).toBeCloseTo(b.cost, 6);
	});

	it('place(…, zone-balanced) without zones is an EngineInputError', () => {
		expect(() => place(grid, null, group(40), { strategy: 'zone-balanced' })).toThrowError(/zone set/);
	});
});
