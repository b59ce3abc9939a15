/**
 * The authorization matrix: every page, form action and API route, with every role and
 * anonymously, against the expected status. Inputs to actions are deliberately invalid, so an
 * allowed caller gets 400 (validation) and nothing changes, while a refused one gets 403 (or a
 * redirect to sign-in / 401 when anonymous). Keep it in step with src/lib/server/auth/route-access.ts.
 */
import { expect, test, type APIRequestContext } from '@playwright/test';
import { contextFor, type DemoRole } from './support';

type Who = 'anon' | DemoRole;
const WHO: Who[] = ['anon', 'admin', 'analyst', 'reviewer', 'technician'];

interface Check {
	name: string;
	method: 'GET' | 'POST' | 'DELETE';
	path: string;
	form?: Record<string, string>;
	json?: unknown;
	expect: Record<Who, number>;
}

const page = (anon: number, admin: number, analyst: number, reviewer: number, technician: number) => ({ anon, admin, analyst, reviewer, technician });
const signedIn = (status: number) => page(303, status, status, status, status);
const adminOnly = (ok: number) => page(303, ok, 403, 403, 403);
const api = (anon: number, admin: number, analyst: number, reviewer: number, technician: number) => page(anon, admin, analyst, reviewer, technician);

const checks: Check[] = [
	{ name: 'front page', method: 'GET', path: '/', expect: page(200, 303, 303, 303, 303) },
	{ name: 'sign-in page', method: 'GET', path: '/signin', expect: page(200, 303, 303, 303, 303) },
	{ name: 'password reset page', method: 'GET', path: '/reset', expect: page(200, 200, 200, 200, 200) },
	{ name: 'reset link page (bad token)', method: 'GET', path: '/reset/not-a-token', expect: page(200, 200, 200, 200, 200) },
	{ name: 'invitation page (bad token)', method: 'GET', path: '/invite/not-a-token', expect: page(200, 200, 200, 200, 200) },
	// Off under NODE_ENV=production, as the tests run the app (see devInboxDir).
	{ name: 'development inbox', method: 'GET', path: '/dev/inbox', expect: page(404, 404, 404, 404, 404) },
	{ name: 'unknown page', method: 'GET', path: '/no-such-page', expect: page(404, 404, 404, 404, 404) },
	{ name: 'network list', method: 'GET', path: '/networks', expect: signedIn(200) },
	{ name: 'new network page', method: 'GET', path: '/networks/new', expect: adminOnly(200) },
	{ name: 'network overview', method: 'GET', path: '/networks/1', expect: signedIn(200) },
	{ name: 'missing network', method: 'GET', path: '/networks/999999', expect: page(303, 404, 404, 404, 404) },
	{ name: 'non-numeric network id', method: 'GET', path: '/networks/abc', expect: page(404, 404, 404, 404, 404) },
	{ name: 'profile', method: 'GET', path: '/profile', expect: signedIn(200) },
	{ name: 'user administration', method: 'GET', path: '/admin/users', expect: adminOnly(200) },
	{ name: 'audit log', method: 'GET', path: '/admin/audit', expect: adminOnly(200) },

	{ name: 'create network action', method: 'POST', path: '/networks/new', form: { name: '' }, expect: adminOnly(400) },
	{ name: 'edit network action', method: 'POST', path: '/networks/1?/update', form: { name: '', version: '1' }, expect: page(303, 400, 400, 403, 403) },
	{ name: 'publish network action', method: 'POST', path: '/networks/1?/publication', form: { publication: 'nonsense', version: '1' }, expect: page(303, 400, 403, 403, 403) },
	{ name: 'invite action', method: 'POST', path: '/admin/users?/invite', form: { email: 'not-an-address', role: 'admin' }, expect: adminOnly(400) },
	{ name: 'role action', method: 'POST', path: '/admin/users?/role', form: { userId: 'x', role: 'admin' }, expect: adminOnly(400) },
	{ name: 'remove action', method: 'POST', path: '/admin/users?/remove', form: { userId: 'x' }, expect: adminOnly(400) },
	{ name: 'withdraw invitation action', method: 'POST', path: '/admin/users?/withdraw', form: { invitationId: 'x' }, expect: adminOnly(400) },
	{ name: 'rename action', method: 'POST', path: '/profile?/name', form: { name: '' }, expect: signedIn(400) },
	{ name: 'change password action', method: 'POST', path: '/profile?/password', form: { current: 'x', password: 'a', confirm: 'b' }, expect: signedIn(400) },

	{ name: 'API list networks', method: 'GET', path: '/api/v1/networks', expect: api(401, 200, 200, 200, 200) },
	{ name: 'API create network', method: 'POST', path: '/api/v1/networks', json: { name: '' }, expect: api(401, 400, 403, 403, 403) },
	{ name: 'API get network', method: 'GET', path: '/api/v1/networks/1', expect: api(401, 200, 200, 200, 200) },
	{ name: 'API get missing network', method: 'GET', path: '/api/v1/networks/999999', expect: api(401, 404, 404, 404, 404) },
	{ name: 'API update network', method: 'POST', path: '/api/v1/networks/1', json: { version: 'x' }, expect: api(401, 400, 400, 403, 403) },
	{ name: 'API unknown route', method: 'GET', path: '/api/v1/nothing-here', expect: api(404, 404, 404, 404, 404) },

	// Map
	{ name: 'map page', method: 'GET', path: '/networks/1/map', expect: signedIn(200) },
	{ name: 'map page of a missing network', method: 'GET', path: '/networks/999999/map', expect: page(303, 404, 404, 404, 404) },
	{ name: 'API network map', method: 'GET', path: '/api/v1/networks/1/map', expect: api(401, 200, 200, 200, 200) },
	{ name: 'API map of a missing network', method: 'GET', path: '/api/v1/networks/999999/map', expect: api(401, 404, 404, 404, 404) },
	// The demo network has no importance recipe yet: every member gets the 404 that says so.
	{ name: 'API map importance PNG (the seeded demo recipe)', method: 'GET', path: '/api/v1/networks/1/map/importance.png', expect: api(401, 200, 200, 200, 200) },
	// (map rows end)

	// Layers and importance (layer.view: admin, analyst, reviewer; layer.edit and recipe.edit: analyst)
	{ name: 'layers page', method: 'GET', path: '/networks/1/layers', expect: page(303, 200, 200, 200, 403) },
	{ name: 'importance page', method: 'GET', path: '/networks/1/importance', expect: page(303, 200, 200, 200, 403) },
	{ name: 'API list layers', method: 'GET', path: '/api/v1/networks/1/layers', expect: api(401, 200, 200, 200, 403) },
	{ name: 'API list layers of a missing network', method: 'GET', path: '/api/v1/networks/999999/layers', expect: api(401, 404, 404, 404, 404) },
	{ name: 'API upload layer (no metadata)', method: 'POST', path: '/api/v1/networks/1/layers', json: {}, expect: api(401, 403, 400, 403, 403) },
	{ name: 'API get missing layer', method: 'GET', path: '/api/v1/networks/1/layers/999999', expect: api(401, 404, 404, 404, 403) },
	{ name: 'API preview of missing layer', method: 'GET', path: '/api/v1/networks/1/layers/999999/preview.png', expect: api(401, 404, 404, 404, 403) },
	{ name: 'API delete missing layer', method: 'DELETE', path: '/api/v1/networks/1/layers/999999', expect: api(401, 403, 404, 403, 403) },
	{ name: 'API list recipes', method: 'GET', path: '/api/v1/networks/1/recipes', expect: api(401, 200, 200, 200, 403) },
	{ name: 'API create recipe (no name)', method: 'POST', path: '/api/v1/networks/1/recipes', json: {}, expect: api(401, 403, 400, 403, 403) },
	{ name: 'API preview recipe (no layers)', method: 'POST', path: '/api/v1/networks/1/recipes/preview', json: {}, expect: api(401, 403, 400, 403, 403) },
	{ name: 'API current recipe version', method: 'GET', path: '/api/v1/networks/1/recipes/current', expect: api(401, 200, 200, 200, 403) },
	{ name: 'API use recipe version (no id)', method: 'POST', path: '/api/v1/networks/1/recipes/current', json: {}, expect: api(401, 403, 400, 403, 403) },
	{ name: 'API get missing recipe', method: 'GET', path: '/api/v1/networks/1/recipes/999999', expect: api(401, 404, 404, 404, 403) },
	{ name: 'API delete missing recipe', method: 'DELETE', path: '/api/v1/networks/1/recipes/999999', expect: api(401, 403, 404, 403, 403) },
	{ name: 'API versions of missing recipe', method: 'GET', path: '/api/v1/networks/1/recipes/999999/versions', expect: api(401, 404, 404, 404, 403) },
	{ name: 'API add version (no definition)', method: 'POST', path: '/api/v1/networks/1/recipes/999999/versions', json: {}, expect: api(401, 403, 400, 403, 403) },
	// (layers and importance rows end)
	{ name: 'API get missing job', method: 'GET', path: '/api/v1/networks/1/jobs/999999', expect: api(401, 404, 404, 404, 403) },
	{ name: 'API cancel missing job', method: 'DELETE', path: '/api/v1/networks/1/jobs/999999', expect: api(401, 404, 404, 404, 403) },
	{ name: 'API get job of a missing network', method: 'GET', path: '/api/v1/networks/999999/jobs/1', expect: api(401, 404, 404, 404, 404) },
	// (jobs rows end)

	// Sensors, study area and zones (sensor.view / sensor.edit; layer.view / area.edit / zone.edit)
	{ name: 'sensors page', method: 'GET', path: '/networks/1/sensors', expect: signedIn(200) },
	{ name: 'sensors page, sorted, filtered, paged', method: 'GET', path: '/networks/1/sensors?sort=lon&dir=desc&status=active&q=x&page=2&perPage=10', expect: signedIn(200) },
	{ name: 'add sensor type action', method: 'POST', path: '/networks/1/sensors?/createType', form: { name: '' }, expect: page(303, 400, 400, 403, 403) },
	{ name: 'edit sensor type action', method: 'POST', path: '/networks/1/sensors?/updateType', form: { typeId: 'x' }, expect: page(303, 400, 400, 403, 403) },
	{ name: 'remove sensor type action', method: 'POST', path: '/networks/1/sensors?/deleteType', form: { typeId: 'x' }, expect: page(303, 400, 400, 403, 403) },
	{ name: 'add sensor action', method: 'POST', path: '/networks/1/sensors?/create', form: { code: '' }, expect: page(303, 400, 400, 403, 403) },
	{ name: 'edit sensor action', method: 'POST', path: '/networks/1/sensors?/update', form: { sensorId: 'x' }, expect: page(303, 400, 400, 403, 403) },
	{ name: 'remove sensor action', method: 'POST', path: '/networks/1/sensors?/delete', form: { sensorId: 'x' }, expect: page(303, 400, 400, 403, 403) },
	{ name: 'import sensors action', method: 'POST', path: '/networks/1/sensors?/import', form: {}, expect: page(303, 400, 400, 403, 403) },
	{ name: 'area & zones page', method: 'GET', path: '/networks/1/zones', expect: page(303, 200, 200, 200, 403) },
	{ name: 'upload study area action', method: 'POST', path: '/networks/1/zones?/studyArea', form: { version: '1' }, expect: page(303, 400, 400, 403, 403) },
	{ name: 'upload exclusions action', method: 'POST', path: '/networks/1/zones?/exclusions', form: { version: '1' }, expect: page(303, 400, 400, 403, 403) },
	{ name: 'remove exclusions action', method: 'POST', path: '/networks/1/zones?/clearExclusions', form: { version: 'x' }, expect: page(303, 400, 400, 403, 403) },
	{ name: 'upload zones action', method: 'POST', path: '/networks/1/zones?/uploadZones', form: {}, expect: page(303, 403, 400, 403, 403) },
	{ name: 'grid zones action', method: 'POST', path: '/networks/1/zones?/gridZones', form: { cellSizeKm: 'x' }, expect: page(303, 403, 400, 403, 403) },
	{ name: 'computed zones action', method: 'POST', path: '/networks/1/zones?/computedZones', form: { k: 'x' }, expect: page(303, 403, 400, 403, 403) },
	{ name: 'use zone set action', method: 'POST', path: '/networks/1/zones?/use', form: { zoneSetId: 'x' }, expect: page(303, 403, 400, 403, 403) },
	{ name: 'measure zone set action', method: 'POST', path: '/networks/1/zones?/measure', form: { zoneSetId: 'x' }, expect: page(303, 403, 400, 403, 403) },
	{ name: 'remove zone set action', method: 'POST', path: '/networks/1/zones?/delete', form: { zoneSetId: 'x' }, expect: page(303, 403, 400, 403, 403) },
	{ name: 'API list sensor types', method: 'GET', path: '/api/v1/networks/1/sensor-types', expect: api(401, 200, 200, 200, 200) },
	{ name: 'API create sensor type', method: 'POST', path: '/api/v1/networks/1/sensor-types', json: { name: '' }, expect: api(401, 400, 400, 403, 403) },
	{ name: 'API get missing sensor type', method: 'GET', path: '/api/v1/networks/1/sensor-types/999999', expect: api(401, 404, 404, 404, 404) },
	{ name: 'API update sensor type', method: 'POST', path: '/api/v1/networks/1/sensor-types/999999', json: { name: '' }, expect: api(401, 400, 400, 403, 403) },
	{ name: 'API list sensors', method: 'GET', path: '/api/v1/networks/1/sensors?sort=code&perPage=10', expect: api(401, 200, 200, 200, 200) },
	{ name: 'API export sensors CSV', method: 'GET', path: '/api/v1/networks/1/sensors?format=csv', expect: api(401, 200, 200, 200, 200) },
	{ name: 'API export sensors GeoJSON', method: 'GET', path: '/api/v1/networks/1/sensors?format=geojson', expect: api(401, 200, 200, 200, 200) },
	{ name: 'API create sensor', method: 'POST', path: '/api/v1/networks/1/sensors', json: { code: '' }, expect: api(401, 400, 400, 403, 403) },
	{ name: 'API get missing sensor', method: 'GET', path: '/api/v1/networks/1/sensors/999999', expect: api(401, 404, 404, 404, 404) },
	{ name: 'API update sensor', method: 'POST', path: '/api/v1/networks/1/sensors/999999', json: { version: 'x' }, expect: api(401, 400, 400, 403, 403) },
	{ name: 'API list zone sets', method: 'GET', path: '/api/v1/networks/1/zone-sets', expect: api(401, 200, 200, 200, 403) },
	{ name: 'API create zone set', method: 'POST', path: '/api/v1/networks/1/zone-sets', json: { kind: 'nonsense' }, expect: api(401, 403, 400, 403, 403) },
	{ name: 'API get missing zone set', method: 'GET', path: '/api/v1/networks/1/zone-sets/999999', expect: api(401, 404, 404, 404, 403) },
	{ name: 'API use zone set', method: 'POST', path: '/api/v1/networks/1/zone-sets/999999', json: { inUse: 'x' }, expect: api(401, 403, 400, 403, 403) },
	{ name: 'API get area', method: 'GET', path: '/api/v1/networks/1/area', expect: api(401, 200, 200, 200, 200) },
	{ name: 'API set area', method: 'POST', path: '/api/v1/networks/1/area', json: { version: 'x' }, expect: api(401, 400, 400, 403, 403) },
	// (sensors rows end)

	// Proposals, revisions, review, plan (proposal.view: admin, analyst, reviewer; proposal.edit: analyst;
	// revision.review: admin, reviewer; plan.view: everyone). Actions on a missing proposal: an allowed
	// caller's invalid form is refused, then the page it would render does not exist (404).
	{ name: 'proposals page', method: 'GET', path: '/networks/1/proposals', expect: page(303, 200, 200, 200, 403) },
	{ name: 'missing proposal page', method: 'GET', path: '/networks/1/proposals/999999', expect: page(303, 404, 404, 404, 403) },
	{ name: 'missing revision page', method: 'GET', path: '/networks/1/proposals/999999/revisions/999999', expect: page(303, 404, 404, 404, 403) },
	{ name: 'compare page of a missing proposal', method: 'GET', path: '/networks/1/proposals/999999/compare?r=1', expect: page(303, 404, 404, 404, 403) },
	{ name: 'history page', method: 'GET', path: '/networks/1/history', expect: signedIn(200) },
	{ name: 'create proposal action', method: 'POST', path: '/networks/1/proposals?/create', form: { title: '' }, expect: page(303, 403, 400, 403, 403) },
	{ name: 'run action (no strategy)', method: 'POST', path: '/networks/1/proposals/999999?/run', form: { maxIterations: 'x' }, expect: page(303, 403, 404, 403, 403) },
	{ name: 'run all action (bad iterations)', method: 'POST', path: '/networks/1/proposals/999999?/runAll', form: { maxIterations: '-1' }, expect: page(303, 403, 404, 403, 403) },
	{ name: 'cancel run action', method: 'POST', path: '/networks/1/proposals/999999?/cancel', form: { runId: 'x' }, expect: page(303, 403, 404, 403, 403) },
	{ name: 'submit revision action (note too long)', method: 'POST', path: '/networks/1/proposals/999999/revisions/999999?/submit', form: { note: 'x'.repeat(5001) }, expect: page(303, 403, 404, 403, 403) },
	{ name: 'review action (no decision)', method: 'POST', path: '/networks/1/proposals/999999/revisions/999999?/review', form: { decision: 'x' }, expect: page(303, 404, 403, 404, 403) },
	{ name: 'choice note action (no note)', method: 'POST', path: '/networks/1/proposals/999999/compare?/note', form: {}, expect: page(303, 403, 404, 403, 403) },
	{ name: 'API list proposals', method: 'GET', path: '/api/v1/networks/1/proposals', expect: api(401, 200, 200, 200, 403) },
	{ name: 'API create proposal (no title)', method: 'POST', path: '/api/v1/networks/1/proposals', json: { title: '' }, expect: api(401, 403, 400, 403, 403) },
	{ name: 'API get missing proposal', method: 'GET', path: '/api/v1/networks/1/proposals/999999', expect: api(401, 404, 404, 404, 403) },
	{ name: 'API runs of a missing proposal', method: 'GET', path: '/api/v1/networks/1/proposals/999999/runs', expect: api(401, 404, 404, 404, 403) },
	{ name: 'API queue run (no strategy)', method: 'POST', path: '/api/v1/networks/1/proposals/999999/runs', json: {}, expect: api(401, 403, 400, 403, 403) },
	{ name: 'API get missing run', method: 'GET', path: '/api/v1/networks/1/runs/999999', expect: api(401, 404, 404, 404, 403) },
	{ name: 'API cancel missing run', method: 'DELETE', path: '/api/v1/networks/1/runs/999999', expect: api(401, 403, 404, 403, 403) },
	{ name: 'API get missing revision', method: 'GET', path: '/api/v1/networks/1/revisions/999999', expect: api(401, 404, 404, 404, 403) },
	{ name: 'API submit revision (note too long)', method: 'POST', path: '/api/v1/networks/1/revisions/999999/submit', json: { note: 'x'.repeat(5001) }, expect: api(401, 403, 400, 403, 403) },
	{ name: 'API review revision (no decision)', method: 'POST', path: '/api/v1/networks/1/revisions/999999/reviews', json: { decision: 'x' }, expect: api(401, 400, 403, 400, 403) },
	{ name: 'API plan of a missing network', method: 'GET', path: '/api/v1/networks/999999/plan', expect: api(401, 404, 404, 404, 404) },
	// (proposals rows end)

	// Field tasks (task.view: everyone, technicians their own only; task.assign: admin, analyst; task.work: technician)
	// and the public map (anyone; the demo network is published).
	{ name: 'field tasks page', method: 'GET', path: '/networks/1/tasks', expect: page(303, 200, 200, 403, 403) },
	{ name: 'field tasks page of a missing network', method: 'GET', path: '/networks/999999/tasks', expect: page(303, 404, 404, 404, 404) },
	{ name: 'assign action (no task)', method: 'POST', path: '/networks/1/tasks?/assign', form: { taskId: 'x', assigneeId: '' }, expect: page(303, 400, 400, 403, 403) },
	{ name: 'spread action (nobody)', method: 'POST', path: '/networks/1/tasks?/spread', form: {}, expect: page(303, 400, 400, 403, 403) },
	{ name: 'my route page', method: 'GET', path: '/networks/1/field', expect: page(303, 403, 403, 403, 200) },
	{ name: 'printable task sheet', method: 'GET', path: '/networks/1/field/print', expect: page(303, 403, 403, 403, 200) },
	{ name: 'task update action (no key)', method: 'POST', path: '/networks/1/field?/update', form: { taskId: '999999', state: 'started' }, expect: page(303, 403, 403, 403, 400) },
	{ name: 'acknowledge cautions action', method: 'POST', path: '/networks/1/field?/acknowledge', form: {}, expect: page(303, 403, 403, 403, 303) },
	{ name: 'API my tasks', method: 'GET', path: '/api/v1/networks/1/tasks?assignee=me', expect: api(401, 200, 200, 200, 200) },
	{ name: 'API everyone’s tasks', method: 'GET', path: '/api/v1/networks/1/tasks', expect: api(401, 200, 200, 200, 403) },
	{ name: 'API tasks of a missing network', method: 'GET', path: '/api/v1/networks/999999/tasks?assignee=me', expect: api(401, 404, 404, 404, 404) },
	{ name: 'API my route as GPX', method: 'GET', path: '/api/v1/networks/1/tasks.gpx?assignee=me', expect: api(401, 200, 200, 200, 200) },
	{ name: 'API assign tasks (nothing chosen)', method: 'POST', path: '/api/v1/networks/1/tasks/assignments', json: {}, expect: api(401, 400, 400, 403, 403) },
	{ name: 'API task update (no Idempotency-Key)', method: 'POST', path: '/api/v1/networks/1/tasks/999999/updates', json: { state: 'started' }, expect: api(401, 403, 403, 403, 400) },
	{ name: 'API add a photo to a missing task', method: 'POST', path: '/api/v1/networks/1/tasks/999999/photos', json: {}, expect: api(401, 403, 403, 403, 404) },
	{ name: 'API acknowledge cautions (bad date)', method: 'POST', path: '/api/v1/networks/1/cautions/acknowledgements', json: { acknowledgedAt: 'yesterday' }, expect: api(401, 403, 403, 403, 400) },
	{ name: 'API acknowledge cautions of a missing network', method: 'POST', path: '/api/v1/networks/999999/cautions/acknowledgements', json: {}, expect: api(401, 404, 404, 404, 404) },
	{ name: 'API acknowledge cautions for someone else (unknown field)', method: 'POST', path: '/api/v1/networks/1/cautions/acknowledgements', json: { userId: 1 }, expect: api(401, 403, 403, 403, 400) },
	{ name: 'API missing task photo', method: 'GET', path: '/api/v1/networks/1/tasks/999999/photos/999999', expect: api(401, 404, 404, 404, 404) },
	{ name: 'public map', method: 'GET', path: '/map/vennarrow-vale', expect: page(200, 200, 200, 200, 200) },
	{ name: 'public map of an unknown network', method: 'GET', path: '/map/no-such-network', expect: page(404, 404, 404, 404, 404) },
	{ name: 'API public map', method: 'GET', path: '/api/v1/public/networks/vennarrow-vale', expect: api(200, 200, 200, 200, 200) },
	{ name: 'API public map of an unknown network', method: 'GET', path: '/api/v1/public/networks/no-such-network', expect: api(404, 404, 404, 404, 404) },
	{ name: 'API public importance PNG', method: 'GET', path: '/api/v1/public/networks/vennarrow-vale/importance.png', expect: api(200, 200, 200, 200, 200) },
	// (field rows end)

	// Last: it ends every session of each role (the contexts above are done with by then).
	{ name: 'sign out everywhere action', method: 'POST', path: '/profile?/signOutEverywhere', form: {}, expect: signedIn(303) }
];

const contexts = new Map<Who, APIRequestContext>();

test.beforeAll(async () => {
	for (const who of WHO) contexts.set(who, await contextFor(who === 'anon' ? null : who));
});
test.afterAll(async () => {
	for (const c of contexts.values()) await c.dispose();
});

for (const check of checks) {
	test(`${check.method} ${check.path} (${check.name})`, async () => {
		const got: Record<string, number> = {};
		for (const who of WHO) {
			const ctx = contexts.get(who)!;
			const res =
				check.method === 'GET'
					? await ctx.get(check.path, { headers: { accept: check.path.startsWith('/api/') ? 'application/json' : 'text/html' } })
					: check.method === 'DELETE'
						? await ctx.delete(check.path, { headers: { accept: 'application/json' } })
					: check.json !== undefined
						? await ctx.post(check.path, { data: check.json, headers: { accept: 'application/json' } })
						: await ctx.post(check.path, { form: check.form ?? {}, headers: { accept: 'text/html' } });
			got[who] = res.status();
			if (check.path.startsWith('/api/') && res.status() >= 400) {
				const body = await res.json();
				expect(body.error, `${who}: API error shape`).toMatchObject({ code: expect.any(String), message: expect.any(String) });
			}
		}
		expect(got).toEqual(check.expect);
	});
}

test('anonymous pages that need sign-in redirect to the sign-in page', async () => {
	const res = await contexts.get('anon')!.get('/admin/users', { headers: { accept: 'text/html' } });
	expect(res.status()).toBe(303);
	expect(res.headers()['location']).toBe('/signin?redirectTo=%2Fadmin%2Fusers');
});

test('session cookies are httpOnly and SameSite=Lax', async () => {
	const state = await contexts.get('analyst')!.storageState();
	const session = state.cookies.find((c) => c.name.includes('session-token'))!;
	expect(session.httpOnly).toBe(true);
	expect(session.sameSite).toBe('Lax');
});
