import { Readable } from 'node:stream';
import type { ReadableStream as NodeWebStream } from 'node:stream/web';
import { json } from '@sveltejs/kit';
import { env } from '$env/dynamic/private';
import type { RequestHandler } from './$types';
import { getDb } from '$lib/server/db';
import { apiHandler } from '$lib/server/api/errors';
import { networkAccess } from '$lib/server/auth/network-access';
import { getObjectStore } from '$lib/server/storage/app-store';
import { acceptLayerUpload, layerLimits, listLayerViews, UploadTooLarge } from '$lib/server/services/layers';

/** GET /api/v1/networks/:id/layers */
export const GET: RequestHandler = apiHandler(async (event) => {
	const { network } = await networkAccess(event, 'layer.view');
	return json({ layers: await listLayerViews(getDb(), network.id) });
});

/**
 * POST /api/v1/networks/:id/layers?name=&kind=&units=&acquiredOn=&platform=&band=&fileName=
 * The raw request body is the GeoTIFF. 202 {layer, job} once it is stored: the layer is
 * `processing` and the job (GET /api/v1/networks/:id/jobs/:jobId) inspects it; a raster the job
 * refuses is removed and the job fails with the reason. 413 over LAYER_MAX_BYTES; 400 for bad
 * metadata (nothing is kept then).
 */
export const POST: RequestHandler = apiHandler(async (event) => {
	const { network, actor } = await networkAccess(event, 'layer.edit');
	const limits = layerLimits(env);
	const declared = Number(event.request.headers.get('content-length') ?? NaN);
	if (Number.isFinite(declared) && declared > limits.maxBytes) throw new UploadTooLarge(limits.maxBytes);
	const q = event.url.searchParams;
	const meta = Object.fromEntries(['name', 'kind', 'units', 'acquiredOn', 'platform', 'band', 'fileName'].filter((k) => q.has(k)).map((k) => [k, q.get(k)]));
	const webBody = event.request.body;
	const body = webBody ? Readable.fromWeb(webBody as unknown as NodeWebStream<Uint8Array>) : Readable.from([]);
	const accepted = await acceptLayerUpload(getDb(), getObjectStore(), { networkId: network.id, organisationId: network.organisation_id, actorId: actor.id }, meta, body, limits);
	return json(accepted, { status: 202 });
});
