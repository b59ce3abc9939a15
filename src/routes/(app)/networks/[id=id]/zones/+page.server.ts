import { fail } from '@sveltejs/kit';
import type { Actions, PageServerLoad, RequestEvent } from './$types';
import { getDb } from '$lib/server/db';
import { networkAccess } from '$lib/server/auth/network-access';
import { roleAllows } from '$lib/server/auth/roles';
import { formFields, parseForm, serviceFailure } from '$lib/server/forms';
import { getObjectStore } from '$lib/server/storage/app-store';
import { areaView, parseAreaUpload, setArea } from '$lib/server/services/areas';
import { workingCrs } from '$lib/server/services/working-crs';
import { networkRecipeVersionId } from '$lib/server/repositories/recipes';
import {
	computedInput,
	createGridZoneSet,
	createUploadedZoneSet,
	GRID_PRESETS_M,
	gridInput,
	importanceForZones,
	removeZoneSet,
	useZoneSet,
	zoneSetViews
} from '$lib/server/services/zones';
import { queueComputedZones, queueZoneShares } from '$lib/server/services/zone-jobs';
import { ServiceError } from '$lib/server/services/errors';

/** Largest polygon file accepted (the parser also caps features and positions). */
const MAX_POLYGON_BYTES = 10 * 1024 * 1024;

export const load = (async (event) => {
	const { network, role } = await networkAccess(event, 'layer.view');
	const db = getDb();
	const area = areaView(network);
	return {
		area: {
			version: area.version,
			hasStudyArea: !!area.studyArea,
			parts: area.studyArea?.coordinates.length ?? 0,
			exclusions: area.exclusions.map((f) => f.properties.name)
		},
		workingCrs: await workingCrs(db, network),
		zoneSets: (await zoneSetViews(db, network)).map((s) => ({ ...s, createdAt: s.createdAt.toISOString() })),
		recipeVersionId: await networkRecipeVersionId(db, network.id),
		presetsKm: GRID_PRESETS_M.map((m) => m / 1000),
		canEditArea: roleAllows(role, 'area.edit'),
		canEditZones: roleAllows(role, 'zone.edit')
	};
}) satisfies PageServerLoad;

async function uploaded(event: RequestEvent, action: string): Promise<{ file: File; text: string; data: FormData } | ReturnType<typeof fail>> {
	const data = await event.request.formData();
	const file = data.get('file');
	if (!(file instanceof File) || file.size === 0) return fail(400, { action, errors: { file: 'Choose a GeoJSON or KML file.' } });
	if (file.size > MAX_POLYGON_BYTES) return fail(400, { action, errors: { file: 'The file is larger than 10 MB; simplify the polygons.' } });
	return { file, text: await file.text(), data };
}

function failure(err: unknown, action: string) {
	const f = serviceFailure(err, {});
	return fail(f.status, { ...f.data, action });
}

function versionOf(data: FormData): number {
	const v = Number(data.get('version'));
	if (!Number.isInteger(v) || v < 1) throw new ServiceError(400, 'invalid_input', 'Reload the page and try again.', '_');
	return v;
}

async function areaUpload(event: RequestEvent, kind: 'studyArea' | 'exclusions') {
	const { network, actor } = await networkAccess(event, 'area.edit');
	const u = await uploaded(event, kind);
	if (!('text' in u)) return u;
	try {
		await setArea(getDb(), network.id, actor.id, versionOf(u.data), parseAreaUpload(kind, u.text, u.file.name));
	} catch (err) {
		const field = err instanceof ServiceError && err.field === kind ? 'file' : undefined;
		if (field && err instanceof ServiceError) return fail(err.status, { action: kind, errors: { file: err.message } });
		return failure(err, kind);
	}
	return { action: kind, saved: kind === 'studyArea' ? `Study area taken from ${u.file.name}.` : `Exclusions taken from ${u.file.name}.` };
}

export const actions = {
	studyArea: (event) => areaUpload(event, 'studyArea'),
	exclusions: (event) => areaUpload(event, 'exclusions'),
	clearExclusions: async (event) => {
		const { network, actor } = await networkAccess(event, 'area.edit');
		try {
			await setArea(getDb(), network.id, actor.id, versionOf(await event.request.formData()), { exclusions: null });
		} catch (err) {
			return failure(err, 'exclusions');
		}
		return { action: 'exclusions', saved: 'Exclusions removed.' };
	},
	uploadZones: async (event) => {
		const { network, actor } = await networkAccess(event, 'zone.edit');
		const u = await uploaded(event, 'uploadZones');
		if (!('text' in u)) return u;
		const name = String(u.data.get('name') ?? '').trim().slice(0, 200);
		try {
			const db = getDb();
			await createUploadedZoneSet(db, network, actor.id, name, u.text, u.file.name, await importanceForZones(db, getObjectStore(), network));
		} catch (err) {
			return failure(err, 'uploadZones');
		}
		return { action: 'uploadZones', saved: `Zones taken from ${u.file.name}.` };
	},
	gridZones: async (event) => {
		const { network, actor } = await networkAccess(event, 'zone.edit');
		const values = formFields(await event.request.formData(), ['name', 'cellSizeKm']);
		const parsed = parseForm(gridInput, values, ['name', 'cellSizeKm']);
		if (!parsed.ok) return fail(400, { ...parsed.failure.data, action: 'gridZones' });
		try {
			const db = getDb();
			await createGridZoneSet(db, network, actor.id, parsed.data.name, parsed.data.cellSizeKm, await importanceForZones(db, getObjectStore(), network));
		} catch (err) {
			return failure(err, 'gridZones');
		}
		return { action: 'gridZones', saved: `A ${parsed.data.cellSizeKm} km grid was laid over the study area.` };
	},
	computedZones: async (event) => {
		const { network, actor } = await networkAccess(event, 'zone.edit');
		const values = formFields(await event.request.formData(), ['name', 'k']);
		const parsed = parseForm(computedInput, values, ['name', 'k']);
		if (!parsed.ok) return fail(400, { ...parsed.failure.data, action: 'computedZones' });
		try {
			const job = await queueComputedZones(getDb(), network, actor.id, parsed.data.name, parsed.data.k);
			return { action: 'computedZones', job: { id: job.id, done: `${parsed.data.k} zones computed from the importance.` } };
		} catch (err) {
			return failure(err, 'computedZones');
		}
	},
	use: async (event) => {
		const { network, actor } = await networkAccess(event, 'zone.edit');
		const data = await event.request.formData();
		const id = Number(data.get('zoneSetId'));
		const stop = data.get('stop') === '1';
		if (!stop && (!Number.isInteger(id) || id < 1)) return fail(400, { action: 'sets', errors: { _: 'Choose a zone set.' } });
		try {
			await useZoneSet(getDb(), network, actor.id, stop ? null : id);
		} catch (err) {
			return failure(err, 'sets');
		}
		return { action: 'sets', saved: stop ? 'The network no longer uses a zone set.' : 'The network now uses this zone set.' };
	},
	measure: async (event) => {
		const { network, actor } = await networkAccess(event, 'zone.edit');
		const id = Number((await event.request.formData()).get('zoneSetId'));
		if (!Number.isInteger(id) || id < 1) return fail(400, { action: 'sets', errors: { _: 'Choose a zone set.' } });
		try {
			const job = await queueZoneShares(getDb(), network, actor.id, id);
			return { action: 'sets', job: { id: job.id, done: 'Shares measured with the current importance.' } };
		} catch (err) {
			return failure(err, 'sets');
		}
	},
	delete: async (event) => {
		const { network, actor } = await networkAccess(event, 'zone.edit');
		const id = Number((await event.request.formData()).get('zoneSetId'));
		if (!Number.isInteger(id) || id < 1) return fail(400, { action: 'sets', errors: { _: 'Choose a zone set.' } });
		try {
			await removeZoneSet(getDb(), network, actor.id, id);
		} catch (err) {
			return failure(err, 'sets');
		}
		return { action: 'sets', saved: 'Zone set removed.' };
	}
} satisfies Actions;
