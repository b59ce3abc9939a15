/**
 * `layer-processing`: inspection, statistics and preview of an uploaded layer, after the upload
 * request stored the file. Calls the layer service's processLayer with the CPU part in a pool
 * thread. A refused raster removes the layer (as a refused upload always did) and fails the job at
 * once with the reason; a layer whose processing fails otherwise is marked failed with the message.
 */
import { LayerRejected } from '../../layers/errors';
import { layerLimits, processLayer, type LayerAnalysis } from '../../services/layers';
import type { JobKind } from '../registry';
import { refusalsFail } from './refusals';

export interface LayerProcessingPayload {
	networkId: number;
	organisationId: number;
	actorId: number;
	layerId: number;
}

/** Also named in services/layers.ts, which queues it. */
export const LAYER_PROCESSING = 'layer-processing';

type AnalyseReply = ({ ok: true } & LayerAnalysis) | { ok: false; code: string; message: string };

export const layerProcessingKind: JobKind<LayerProcessingPayload, { layerId: number }> = {
	kind: LAYER_PROCESSING,
	// 25 million Float64 cells are 200 MB, plus the file and the preview's working copies.
	limits: { timeMs: 10 * 60_000, memoryMb: Number(process.env.JOBS_LAYER_MEMORY_MB ?? 1536) },
	maxAttempts: 3,
	async handler({ payload, db, store, runInThread, reportProgress }) {
		reportProgress({ step: 'inspecting' });
		const limits = layerLimits(process.env);
		await refusalsFail(() =>
			processLayer(db, store, payload, payload.layerId, limits, async (bytes, opts) => {
				const reply = await runInThread<AnalyseReply>('analyseLayer', { bytes, ...opts });
				if (!reply.ok) throw new LayerRejected(reply.code as LayerRejected['code'], reply.message);
				return { metadata: reply.metadata, png: reply.png };
			})
		);
		reportProgress({ step: 'done' });
		return { layerId: payload.layerId };
	},
	async onFailed(trx, job, outcome) {
		const p = job.payload as LayerProcessingPayload;
		await trx('layers')
			.where({ id: p.layerId, network_id: p.networkId })
			.whereNot({ status: 'ready' })
			.update({ status: 'failed', error: (outcome.message ?? 'Processing failed.').slice(0, 500), updated_at: trx.fn.now() });
	}
};
