import { describe, expect, it } from 'vitest';
import { arrowDegrees, formatSigma, planBounds, revisionOverlay, sigmaFill, standingOverlay, type RevisionForOverlay } from '../../../src/lib/components/map/plan-overlay';
import { chartData } from '../../../src/lib/components/proposals/chart-data';
import { cost, distance, percent } from '../../../src/lib/components/proposals/labels';

const rev: RevisionForOverlay = {
	inputs: {
		sensors: [
			{ code: 'P1', typeId: 1, role: 'moves', lon: 10, lat: 50, radiusM: 30 },
			{ code: 'N1', typeId: 2, role: 'anchor', lon: 10.1, lat: 50, radiusM: 150 },
			{ code: 'new-1', typeId: 1, role: 'new', lon: 10.2, lat: 50.1, radiusM: 30 }
		]
	},
	targets: {
		features: [
			{ geometry: { coordinates: [10.05, 50] }, properties: { site: 'P1', typeId: 1, mobility: 'relocatable', radiusM: 30 } },
			{ geometry: { coordinates: [10.1, 50] }, properties: { site: 'N1', typeId: 2, mobility: 'fixed', radiusM: 150 } },
			{ geometry: { coordinates: [10.2, 50.1] }, properties: { site: 'new-1', typeId: 1, mobility: 'relocatable', radiusM: 30 } }
		]
	},
	moves: [{ id: 'P1', target: 'P1', from: { lon: 10, lat: 50 }, to: { lon: 10.05, lat: 50 }, planarM: 3580 }],
	metrics: { zones: [{ id: 'Z1', sigma: 0.1 }], before: { zones: [{ id: 'Z1', sigma: -0.2 }] } }
};
const project = (lon: number, lat: number): [number, number] => [lon * 1000, lat * 1000];

describe('the plan overlay', () => {
	it('as it stands: current sensors only (not the new ones), σ before', () => {
		const o = standingOverlay(rev, project);
		expect(o.standing.map((s) => s.code)).toEqual(['P1', 'N1']);
		expect(o.arrows).toEqual([]);
		expect(o.zoneSigma).toEqual({ Z1: -0.2 });
	});
	it('a revision: an arrow per move, sites by kind, σ after', () => {
		const o = revisionOverlay(rev, project);
		expect(o.arrows).toEqual([{ id: 'P1', from: [10000, 50000], to: [10050, 50000] }]);
		expect(o.sites.map((s) => [s.code, s.kind])).toEqual([
			['P1', 'moved'],
			['N1', 'anchor'],
			['new-1', 'new']
		]);
		expect(o.zoneSigma).toEqual({ Z1: 0.1 });
	});
	it('frames the study area and every point, padded', () => {
		const b = planBounds(revisionOverlay(rev, project), [[[9000, 49000], [11000, 49000], [11000, 51000]]])!;
		expect(b[0]).toBeLessThan(9000);
		expect(b[3]).toBeGreaterThan(51000);
	});
	it('shades under-served zones ochre and over-served ones blue, stronger with |σ|', () => {
		expect(sigmaFill(-0.1).colour).toBe('#c98a12');
		expect(sigmaFill(0.1).colour).toBe('#0f5a7a');
		expect(sigmaFill(0.001).opacity).toBe(0);
		expect(sigmaFill(0.25).opacity).toBeGreaterThan(sigmaFill(0.05).opacity);
		expect(sigmaFill(1).opacity).toBe(sigmaFill(0.25).opacity);
	});
	it('points arrows on screen: east 0°, north −90° (CSS rotates clockwise, y down)', () => {
		expect(arrowDegrees([0, 0], [1, 0])).toBeCloseTo(0, 9);
		expect(arrowDegrees([0, 0], [0, 1])).toBeCloseTo(-90, 9);
		expect(arrowDegrees([0, 0], [-1, 0])).toBeCloseTo(-180, 9);
	});
	it('writes σ signed, with a true minus sign and a no-break space', () => {
		expect(formatSigma(0.042)).toBe('+4.2\u00a0%');
		expect(formatSigma(-0.03)).toBe('−3.0\u00a0%');
	});
});

describe('chart data and labels', () => {
	it('aligns series on the union of their iterations, cost in km² and coverage in %', () => {
		const { data, labels } = chartData(
			[
				{ label: 'A', colour: '#000', history: [{ iteration: 0, cost: 2e6, coverage: 0.5 }, { iteration: 2, cost: 1e6, coverage: 0.6 }] },
				{ label: 'B', colour: '#111', history: [{ iteration: 1, cost: 3e6, coverage: 0.1 }] }
			],
			true
		);
		expect(data[0]).toEqual([0, 1, 2]);
		expect(data[1]).toEqual([2, null, 1]);
		expect(data[2]).toEqual([50, null, 60]);
		expect(data[3]).toEqual([null, 3, null]);
		expect(labels.map((l) => l.kind)).toEqual(['cost', 'coverage', 'cost', 'coverage']);
	});
	it('formats figures without breaking a number from its unit', () => {
		expect(percent(0.1234)).toBe('12.3\u00a0%');
		expect(distance(1587.4)).toBe('1\u2009587\u00a0m');
		expect(distance(44_200)).toBe('44.2\u00a0km');
		expect(cost(14_700_000)).toBe('14.7\u00a0km²');
		expect(percent(null)).toBe('—');
	});
});
