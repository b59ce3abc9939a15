/**
 * A proposal run's working grid on the demo network follows the cell-size rule of the command
 * line, an explicit cell size overrides it, and the revision records the choice.
 *
 * The surface of this network is the soil-moisture layer alone: 1 km pixels in EPSG:32754
 * (data/demo/README.md; `gdalinfo data/demo/soil-moisture.tif`: Pixel Size = (1000,-1000)). The
 * smallest radius taking part is the neutron sensors' 150 m (the demo probes stand for 1 km,
 * seeds/demo-inventory.ts). By the rule, 150 m / 10 = 15 m and the budget's √(area / 10⁶) ≈ 27 m
 * are both finer than the pixels, so the pixels decide: 1000 m.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeThreadPools, registerJobKind, runQueuedJobs } from '../../src/lib/server/jobs';
import { proposalRunKind } from '../../src/lib/server/jobs/kinds/proposal-run';
import { createProposal, getRevisionView } from '../../src/lib/server/services/proposals';
import { preparePlacement } from '../../src/lib/server/services/placement';
import { createSensorType } from '../../src/lib/server/services/sensor-types';
import { getRunView, queueRuns, PROPOSAL_RUN } from '../../src/lib/server/services/runs';
import { createTestDatabase, makeMember, type TestDb } from '../helpers/db';
import { placementNetwork, type PlacementNetwork } from '../helpers/placement-network';
import { fsTestStore, type TestStore } from './layers-support';

describe('the working grid of a proposal run', () => {
	let t: TestDb;
	let s: TestStore;
	let net: PlacementNetwork;
	let analystId: number;
	let proposalId: number;

	beforeAll(async () => {
		t = await createTestDatabase();
		s = await fsTestStore();
		const a = await makeMember(t.db, 'analyst');
		analystId = a.userId;
		net = await placementNetwork(t.db, s.store, a.organisationId, a.userId, 'Cell size check');
		proposalId = await createProposal(t.db, net.network, analystId, { title: 'Cell sizes' });
		registerJobKind(proposalRunKind);
	}, 120_000);
	afterAll(async () => {
		await closeThreadPools();
		await s?.close();
		await t?.drop();
	});

	const runToRevision = async (params: Record<string, unknown>) => {
		const [run] = await queueRuns(t.db, net.network, analystId, proposalId, { strategy: 'lloyd', maxIterations: 5, ...params });
		await runQueuedJobs(t.db, s.store, { kinds: [PROPOSAL_RUN], timeoutMs: 90_000 });
		const done = await getRunView(t.db, net.network.id, run.id);
		expect(done.state).toBe('finished');
		return getRevisionView(t.db, net.network.id, done.revisionId!);
	};

	it('without a cell size, takes the rule’s size for the smallest radius taking part, and records why', async () => {
		const r = await runToRevision({});
		expect(r.inputs.cellSize).toMatchObject({ rule: 'pixel', chosenM: 1000, pixelM: 1000, smallestRadiusM: 150, requestedM: null, budgetCells: 1_000_000 });
		expect(r.inputs.cellSize!.reason).toMatch(/pixel size \(1000 m\)/);
		expect(r.inputs.grid.cellSizeM).toBe(1000);
		expect(Math.min(...r.inputs.sensors.map((x) => x.radiusM))).toBe(150);
	}, 120_000);

	it('follows the sensors taking part: new sensors of a 20 km type alone give cells of 1/10 of that radius', async () => {
		// 20 000 m / 10 = 2000 m, coarser than the 1000 m pixels and the ≈ 27 m budget size: the radius decides.
		const typeId = await createSensorType(t.db, net.network.organisation_id, net.network.id, analystId, { name: 'wide-area scintillometer', radiusM: 20_000, mobility: 'relocatable', relocationMinutes: null, notes: '' });
		const prep = await preparePlacement(t.db, s.store, net.network.id, { strategy: 'lloyd', sensorIds: [], addCount: 2, addTypeId: typeId, maxIterations: 0 });
		expect(prep.inputs.cellSize).toMatchObject({ rule: 'radius', chosenM: 2000, smallestRadiusM: 20_000, requestedM: null });
		expect(prep.grid.cellSize).toBe(2000);
	}, 60_000);

	it('an explicit cell size overrides the rule and is recorded', async () => {
		const r = await runToRevision({ cellSize: 2500 });
		expect(r.inputs.cellSize).toMatchObject({ rule: 'requested', chosenM: 2500, requestedM: 2500, smallestRadiusM: 150 });
		expect(r.parameters.cellSize).toBe(2500);
		expect(r.inputs.grid.cellSizeM).toBe(2500);
		// The same study area at 2.5 times the cell side needs about 1/2.5 of the cells across.
		expect(r.inputs.grid.width).toBeLessThanOrEqual(Math.ceil(29 / 2.5) + 1);
	}, 120_000);

	it('a cell size finer than the surface pixels is raised to the pixels, and the revision says it was asked for', async () => {
		const r = await runToRevision({ cellSize: 250 });
		expect(r.inputs.cellSize).toMatchObject({ rule: 'pixel', chosenM: 1000, requestedM: 250 });
		expect(r.inputs.cellSize!.reason).toMatch(/250 m was asked for/);
	}, 120_000);
});
