/**
 * Proposals end to end in the services, on a network built from the demo files: a run queued as a
 * job and finished by a worker becomes a revision; revisions never change; four eyes; one winner
 * when two reviewers decide at once; the plan and its superseded history; audit entries; e-mail
 * through the outbox with SMTP down and back.
 */
import { createHash } from 'node:crypto';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import nodemailer from 'nodemailer';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { registerJobKind, runQueuedJobs, closeThreadPools } from '../../src/lib/server/jobs';
import { proposalRunKind } from '../../src/lib/server/jobs/kinds/proposal-run';
import { createProposal, getProposalView, getRevisionView, listProposalViews } from '../../src/lib/server/services/proposals';
import { DEMO_PROPOSALS, seedDemoProposals } from '../../seeds/demo-proposals';
import { snapshotHash } from '../../src/lib/server/services/placement';
import { getRunView, queueRuns, runNow, PROPOSAL_RUN, ALL_STRATEGIES } from '../../src/lib/server/services/runs';
import { currentPlanView, decideRevision, networkHistory, submitRevision } from '../../src/lib/server/services/reviews';
import { deliverOutbox, retryDelayMs } from '../../src/lib/server/mail/deliver';
import { readMailbox } from '../../src/lib/server/mail/dev-inbox';
import { startFakeSmtp } from '../../src/ops/fake-smtp';
import { freePort } from '../../src/ops/system';
import { createTestDatabase, jsonValue, makeMember, type TestDb } from '../helpers/db';
import { demoPath, placementNetwork, type PlacementNetwork } from '../helpers/placement-network';
import { fsTestStore, type TestStore } from './layers-support';

const ORIGIN = 'https://cairnfield.example.org';

describe('proposals, revisions, review and plan', () => {
	let t: TestDb;
	let s: TestStore;
	let net: PlacementNetwork;
	let analyst: { id: number; name: string; email: string };
	let reviewerA: { id: number; name: string; email: string };
	let reviewerB: { id: number; name: string; email: string };
	let admin: { id: number; name: string; email: string };
	let proposalId: number;

	beforeAll(async () => {
		t = await createTestDatabase();
		s = await fsTestStore();
		const a = await makeMember(t.db, 'analyst');
		const member = async (role: 'reviewer' | 'admin') => {
			const m = await makeMember(t.db, role, a.organisationId);
			return { id: m.userId, name: `Test ${role}`, email: m.email };
		};
		analyst = { id: a.userId, name: 'Test analyst', email: a.email };
		reviewerA = await member('reviewer');
		reviewerB = await member('reviewer');
		admin = await member('admin');
		net = await placementNetwork(t.db, s.store, a.organisationId, a.userId, 'Proposals check');
		proposalId = await createProposal(t.db, net.network, analyst.id, { title: 'Spring redeployment' });
		registerJobKind(proposalRunKind);
	}, 120_000);
	afterAll(async () => {
		await closeThreadPools();
		await s?.close();
		await t?.drop();
	});

	it('a queued run is a job; once a worker finishes it, it has a revision with the snapshot of its inputs', async () => {
		const [run] = await queueRuns(t.db, net.network, analyst.id, proposalId, { strategy: 'range-limited', maxIterations: 40 });
		expect(run).toMatchObject({ state: 'queued', strategy: 'range-limited' });
		await runQueuedJobs(t.db, s.store, { kinds: [PROPOSAL_RUN], timeoutMs: 90_000 });
		const done = await getRunView(t.db, net.network.id, run.id);
		expect(done.state).toBe('finished');
		expect(done.revisionId).toBeGreaterThan(0);
		expect(done.progress.history.length).toBeGreaterThan(1);

		const r = await getRevisionView(t.db, net.network.id, done.revisionId!);
		expect(r).toMatchObject({ proposalId, number: 1, state: 'draft', strategy: 'range-limited' });
		// The layer's content hash is the SHA-256 of the uploaded file's bytes.
		const fileHash = createHash('sha256').update(readFileSync(demoPath('soil-moisture.tif'))).digest('hex');
		expect(r.inputs.layers).toEqual([{ id: net.layerId, name: 'Soil moisture', sha256: fileHash }]);
		expect(r.inputs.recipeVersion.id).toBe(net.recipeVersionId);
		expect(r.inputs.zoneSet?.id).toBe(net.zoneSetId);
		// data/demo/sensors.csv: 14 sensors, one of them faulty, so 13 take part by default (12 − 1 probes move, 2 anchor).
		expect(r.inputs.sensors).toHaveLength(13);
		expect(r.inputs.sensors.filter((x) => x.role === 'anchor')).toHaveLength(2);
		expect(r.targets.type).toBe('FeatureCollection');
		expect(r.targets.features).toHaveLength(13);
		// Entry 0 of the history is the start: the same state as the "before" figures.
		expect(r.history[0].cost).toBeCloseTo(r.metrics.before!.cost, 6);
		expect(r.metrics.cost).toBeLessThanOrEqual(r.metrics.before!.cost * (1 + 1e-9));
		// Total planar travel is the sum of the assignment's straight moves.
		expect(r.metrics.totalPlanarM).toBeCloseTo(r.moves.reduce((sum, m) => sum + Math.hypot(m.to.x - m.from.x, m.to.y - m.from.y), 0), 3);
		// UTM distortion stays within its scale factor range 0.9996–1.0010 near the zone's centre
		// (Snyder 1987, Map Projections: A Working Manual, USGS PP 1395, p. 57: k0 = 0.9996).
		if (r.metrics.totalPlanarM > 0) expect(r.metrics.totalGeodesicM / r.metrics.totalPlanarM).toBeGreaterThan(0.999);
		if (r.metrics.totalPlanarM > 0) expect(r.metrics.totalGeodesicM / r.metrics.totalPlanarM).toBeLessThan(1.0011);
		// Every moved sensor appears once in the route.
		expect(new Set(r.route.order)).toEqual(new Set(r.moves.filter((m) => m.planarM > 1e-6).map((m) => m.id)));
		expect(r.contentHash).toMatch(/^[0-9a-f]{64}$/);
	}, 120_000);

	it('a revision never changes: the database refuses edits of its snapshot, and its hash matches what is stored', async () => {
		const [row] = await t.db('revisions').select('id', 'content_hash', 'strategy', 'engine_version', 'inputs', 'parameters', 'outputs', 'metrics').where({ proposal_id: proposalId }).orderBy('id');
		const stored = { strategy: row.strategy, engineVersion: row.engine_version, inputs: jsonValue(row.inputs), parameters: jsonValue(row.parameters), outputs: jsonValue(row.outputs), metrics: jsonValue(row.metrics) };
		expect(snapshotHash(stored as Parameters<typeof snapshotHash>[0])).toBe(row.content_hash);
		await expect(t.db('revisions').where({ id: row.id }).update({ metrics: JSON.stringify({ cost: 0 }) })).rejects.toThrow(/never changes/);
		await expect(t.db('revisions').where({ id: row.id }).update({ strategy: 'lloyd' })).rejects.toThrow(/never changes/);
		const after = await t.db('revisions').select('content_hash', 'metrics', 'strategy').where({ id: row.id }).first();
		expect(after.content_hash).toBe(row.content_hash);
		expect(after.strategy).toBe('range-limited');
		// Running again makes a new revision; the first stays as it was.
		const second = await runNow(t.db, s.store, net.network, analyst.id, proposalId, { strategy: 'range-limited', maxIterations: 40 });
		const r2 = await getRevisionView(t.db, net.network.id, second);
		expect(r2.number).toBe(2);
		expect((await t.db('revisions').select('content_hash').where({ id: row.id }).first()).content_hash).toBe(row.content_hash);
	}, 120_000);

	it('"compare all three" queues one run per strategy on the same inputs', async () => {
		const runs = await queueRuns(t.db, net.network, analyst.id, proposalId, { strategy: 'lloyd', maxIterations: 30 }, ALL_STRATEGIES);
		expect(runs.map((r) => r.strategy)).toEqual(['lloyd', 'range-limited', 'zone-balanced']);
		await runQueuedJobs(t.db, s.store, { kinds: [PROPOSAL_RUN], timeoutMs: 120_000 });
		const views = await Promise.all(runs.map((r) => getRunView(t.db, net.network.id, r.id)));
		expect(views.map((v) => v.state)).toEqual(['finished', 'finished', 'finished']);
		const revs = await Promise.all(views.map((v) => getRevisionView(t.db, net.network.id, v.revisionId!)));
		const sensorsOf = (r: (typeof revs)[number]) => JSON.stringify(r.inputs.sensors);
		expect(sensorsOf(revs[1])).toBe(sensorsOf(revs[0]));
		expect(sensorsOf(revs[2])).toBe(sensorsOf(revs[0]));
		// Zone-balanced reports σ per zone (four sub-catchments in data/demo/zones.geojson).
		expect(revs[2].metrics.zones).toHaveLength(4);
		// The four zones partition the catchment (data/demo/README.md), so they hold nearly all the importance.
		expect(revs[2].metrics.zones.reduce((a, z) => a + z.mass, 0)).toBeGreaterThan(0.9);
	}, 180_000);

	it('bad run input is refused at once with a clear message, and nothing is queued', async () => {
		const before = await t.db('jobs').count({ n: '*' }).first();
		await expect(queueRuns(t.db, net.network, analyst.id, proposalId, { strategy: 'voronoi' })).rejects.toMatchObject({ status: 400, field: 'strategy' });
		await expect(queueRuns(t.db, net.network, analyst.id, proposalId, { strategy: 'lloyd', maxIterations: -1 })).rejects.toMatchObject({ status: 400, field: 'maxIterations' });
		await expect(queueRuns(t.db, net.network, analyst.id, proposalId, { strategy: 'zone-balanced', zoneSetId: null })).rejects.toMatchObject({ status: 422, code: 'no_zones' });
		await expect(queueRuns(t.db, net.network, analyst.id, 999999, { strategy: 'lloyd' })).rejects.toMatchObject({ status: 404 });
		expect((await t.db('jobs').count({ n: '*' }).first())!.n).toBe(before!.n);
	});

	it('four eyes: the author cannot approve their own revision, whatever their roles', async () => {
		const rev = await runNow(t.db, s.store, net.network, admin.id, proposalId, { strategy: 'lloyd', maxIterations: 10 });
		await submitRevision(t.db, net.network, admin, rev, { note: 'Lloyd for the lowest cost' }, ORIGIN);
		await expect(decideRevision(t.db, net.network, admin, rev, { decision: 'approve', comment: 'mine' }, ORIGIN)).rejects.toMatchObject({ status: 403, code: 'four_eyes' });
		expect((await getRevisionView(t.db, net.network.id, rev)).state).toBe('submitted');
		expect(await t.db('reviews').where({ revision_id: rev })).toHaveLength(0);
		// Another reviewer may reject it (a reason is required).
		await expect(decideRevision(t.db, net.network, reviewerA, rev, { decision: 'reject', comment: '' }, ORIGIN)).rejects.toMatchObject({ status: 400, field: 'comment' });
		await decideRevision(t.db, net.network, reviewerA, rev, { decision: 'reject', comment: 'Too many long carries.' }, ORIGIN);
		expect((await getRevisionView(t.db, net.network.id, rev)).state).toBe('rejected');
		// A decided revision is read-only: submitting it again is refused.
		await expect(submitRevision(t.db, net.network, admin, rev, {}, ORIGIN)).rejects.toMatchObject({ status: 409 });
	}, 60_000);

	it('two reviewers approving at once: one wins, the other gets 409, and nothing else changes', async () => {
		const rev = (await getProposalView(t.db, net.network.id, proposalId)).revisions.find((r) => r.state === 'draft')!.id;
		await submitRevision(t.db, net.network, analyst, rev, { note: 'Zone-balanced keeps every sub-catchment served.' }, ORIGIN);
		const mailBefore = await t.db('outbox_messages').count({ n: '*' }).first();
		const auditBefore = await t.db('audit_log').count({ n: '*' }).first();
		const outcomes = await Promise.allSettled([
			decideRevision(t.db, net.network, reviewerA, rev, { decision: 'approve', comment: 'A' }, ORIGIN),
			decideRevision(t.db, net.network, reviewerB, rev, { decision: 'approve', comment: 'B' }, ORIGIN)
		]);
		const won = outcomes.filter((o) => o.status === 'fulfilled');
		const lost = outcomes.filter((o) => o.status === 'rejected') as PromiseRejectedResult[];
		expect(won).toHaveLength(1);
		expect(lost).toHaveLength(1);
		expect(lost[0].reason).toMatchObject({ status: 409, code: 'not_submitted' });
		expect(await t.db('reviews').where({ revision_id: rev })).toHaveLength(1);
		expect(await t.db('plans').where({ revision_id: rev })).toHaveLength(1);
		// One decision e-mail to the author; one audit entry for the decision and one for the plan's field tasks, once.
		expect(Number((await t.db('outbox_messages').count({ n: '*' }).first())!.n)).toBe(Number(mailBefore!.n) + 1);
		expect(Number((await t.db('audit_log').count({ n: '*' }).first())!.n)).toBe(Number(auditBefore!.n) + 2);
		expect(await t.db('audit_log').where({ action: 'tasks.create', object_id: String((await t.db('plans').where({ revision_id: rev }).first()).id) })).toHaveLength(1);
		const plan = await currentPlanView(t.db, net.network.id);
		expect(plan).toMatchObject({ revisionId: rev, state: 'current' });
	}, 60_000);

	it('a newer approval supersedes the plan; its revision becomes superseded and the history shows both', async () => {
		const first = (await currentPlanView(t.db, net.network.id))!;
		const rev = await runNow(t.db, s.store, net.network, analyst.id, proposalId, { strategy: 'range-limited', maxIterations: 10 });
		await submitRevision(t.db, net.network, analyst, rev, {}, ORIGIN);
		await decideRevision(t.db, net.network, reviewerB, rev, { decision: 'approve', comment: 'Fewer moves.' }, ORIGIN);
		const now = (await currentPlanView(t.db, net.network.id))!;
		expect(now.revisionId).toBe(rev);
		expect((await getRevisionView(t.db, net.network.id, first.revisionId)).state).toBe('superseded');
		const { plans, events } = await networkHistory(t.db, net.network);
		expect(plans.map((p) => [p.revisionId, p.state])).toEqual([
			[rev, 'current'],
			[first.revisionId, 'superseded']
		]);
		expect(plans[1].supersededBy).toBe(plans[0].id);
		expect(events.some((e) => e.action === 'revision.approve' && e.comment === 'Fewer moves.')).toBe(true);
		expect(events.some((e) => e.action === 'plan.supersede')).toBe(true);
		// The database holds one current plan per network at most.
		await expect(t.db('plans').insert({ network_id: net.network.id, revision_id: (await runNow(t.db, s.store, net.network, analyst.id, proposalId, { strategy: 'lloyd', maxIterations: 1 })), state: 'current' })).rejects.toThrow(/Duplicate/);
	}, 60_000);

	it('e-mail goes through the outbox: written with the change, kept while SMTP is down, delivered when it is back, links from the origin', async () => {
		const rev = await runNow(t.db, s.store, net.network, analyst.id, proposalId, { strategy: 'lloyd', maxIterations: 5 });
		await t.db('outbox_messages').update({ status: 'sent' }); // earlier tests' mail is not this test's business
		await submitRevision(t.db, net.network, analyst, rev, { note: 'Check the mail.' }, ORIGIN);
		const queued = await t.db('outbox_messages').where({ status: 'pending' });
		// Both reviewers and the admin hold revision.review; the analyst who submitted is not mailed.
		expect(queued.map((m: { to_address: string }) => m.to_address).sort()).toEqual([reviewerA.email, reviewerB.email, admin.email].sort());
		for (const m of queued) {
			expect(m.text_body).toContain(`${ORIGIN}/networks/${net.network.id}/proposals/${proposalId}/revisions/${rev}`);
			expect(m.html_body).toContain(`href="${ORIGIN}/networks/`);
		}

		// SMTP down: a port with nothing listening.
		const port = await freePort();
		const send = (transport: nodemailer.Transporter) => (row: { to_address: string; subject: string; text_body: string | null; html_body: string | null }) =>
			transport.sendMail({ from: 'test@cairnfield.test', to: row.to_address, subject: row.subject, text: row.text_body ?? '', html: row.html_body ?? undefined });
		const down = nodemailer.createTransport({ host: '127.0.0.1', port, ignoreTLS: true, connectionTimeout: 2000 });
		expect(await deliverOutbox(t.db, send(down))).toBe(0);
		let rows = await t.db('outbox_messages').whereIn('id', queued.map((m: { id: number }) => m.id));
		expect(rows.every((r: { status: string; attempts: number }) => r.status === 'pending' && r.attempts === 1)).toBe(true);
		// Backoff: an immediate second pass does not try again.
		expect(retryDelayMs(1)).toBe(5000);
		expect(await deliverOutbox(t.db, send(down))).toBe(0);
		rows = await t.db('outbox_messages').whereIn('id', queued.map((m: { id: number }) => m.id));
		expect(rows.every((r: { attempts: number }) => r.attempts === 1)).toBe(true);

		// SMTP back, and the wait is over.
		const dir = mkdtempSync(path.join(tmpdir(), 'cf-mail-'));
		const smtp = await startFakeSmtp(port, dir);
		try {
			await t.db('outbox_messages').whereIn('id', queued.map((m: { id: number }) => m.id)).update({ next_attempt_at: t.db.raw('CURRENT_TIMESTAMP(3) - INTERVAL 1 SECOND') });
			const up = nodemailer.createTransport({ host: '127.0.0.1', port, ignoreTLS: true });
			expect(await deliverOutbox(t.db, send(up))).toBe(queued.length);
			const mails = readMailbox(dir);
			expect(mails.map((m) => m.to[0]).sort()).toEqual(queued.map((m: { to_address: string }) => m.to_address).sort());
			expect(mails[0].text).toContain(`${ORIGIN}/networks/`);
			expect(mails[0].html).toContain('<a href=');
		} finally {
			await smtp.close();
			rmSync(dir, { recursive: true, force: true });
		}
	}, 60_000);

	it('a failed decision writes no e-mail and no audit entry (same transaction)', async () => {
		const rev = await runNow(t.db, s.store, net.network, analyst.id, proposalId, { strategy: 'lloyd', maxIterations: 1 });
		const mail = Number((await t.db('outbox_messages').count({ n: '*' }).first())!.n);
		const audit = Number((await t.db('audit_log').count({ n: '*' }).first())!.n);
		await expect(decideRevision(t.db, net.network, reviewerA, rev, { decision: 'approve', comment: '' }, ORIGIN)).rejects.toMatchObject({ status: 409 });
		expect(Number((await t.db('outbox_messages').count({ n: '*' }).first())!.n)).toBe(mail);
		expect(Number((await t.db('audit_log').count({ n: '*' }).first())!.n)).toBe(audit);
	}, 60_000);
});

describe('the demo stage of proposals', () => {
	let t: TestDb;
	let s: TestStore;
	afterAll(async () => {
		await s?.close();
		await t?.drop();
	});

	it('leaves an approved plan, three revisions one per strategy, and one waiting for the reviewer; twice is once', async () => {
		t = await createTestDatabase();
		s = await fsTestStore();
		const a = await makeMember(t.db, 'analyst');
		const r = await makeMember(t.db, 'reviewer', a.organisationId);
		const { network } = await placementNetwork(t.db, s.store, a.organisationId, a.userId, 'Demo stage');
		const actors = { networkId: network.id, analyst: { id: a.userId, name: 'Analyst' }, reviewer: { id: r.userId, name: 'Reviewer' } };
		const lines: string[] = [];
		await seedDemoProposals(t.db, s.store, actors, ORIGIN, (l) => lines.push(l));
		const proposals = await listProposalViews(t.db, network.id);
		const plan = proposals.find((p) => p.title === DEMO_PROPOSALS.plan.title)!;
		const spring = proposals.find((p) => p.title === DEMO_PROPOSALS.spring.title)!;
		expect(plan.revisions.map((x) => x.state)).toEqual(['approved']);
		expect((await currentPlanView(t.db, network.id))!.revisionId).toBe(plan.revisions[0].id);
		expect(spring.revisions.map((x) => x.strategy)).toEqual(['lloyd', 'range-limited', 'zone-balanced']);
		expect(spring.revisions.map((x) => x.state)).toEqual(['draft', 'draft', 'submitted']);
		expect(spring.choiceNote).toBe(DEMO_PROPOSALS.spring.note);
		// The reviewer's e-mail waits in the outbox.
		expect(await t.db('outbox_messages').where({ to_address: r.email, status: 'pending' }).andWhere('subject', 'like', 'Review wanted: Spring redeployment%')).toHaveLength(1);
		await seedDemoProposals(t.db, s.store, actors, ORIGIN, (l) => lines.push(l));
		expect(await t.db('revisions').where({ network_id: network.id })).toHaveLength(4);
		expect(lines).toEqual([]);
	}, 120_000);

	it('says so and does nothing while the network has no recipe or sensors', async () => {
		const a = await makeMember(t.db, 'analyst');
		const id = (await t.db('networks').insert({ organisation_id: a.organisationId, slug: 'empty', name: 'Empty', description: '', public_text: '' }))[0];
		const lines: string[] = [];
		await seedDemoProposals(t.db, s.store, { networkId: id, analyst: { id: a.userId, name: 'A' }, reviewer: { id: a.userId, name: 'A' } }, ORIGIN, (l) => lines.push(l));
		expect(lines[0]).toMatch(/skipped/);
		expect(await t.db('proposals').where({ network_id: id })).toHaveLength(0);
	});
});
