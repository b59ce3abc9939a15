/**
 * `layer-processing`: inspection, statistics and preview of an uploaded layer, after the upload
 * request stored the file. Calls the layer service's processLayer with the CPU part in a pool
 * thread, which reads the stored file by byte ranges that this side serves from the object store
 * (layers/range-port.ts): memory is bounded by a few tiles and the preview, not by the file. A refused raster removes the layer (as a refused upload always did) and fails the job at
 * once with the reason; a layer whose processing fails otherwise is marked failed with the message.
 */
import { MessageChannel } from 'node:worker_threads';
import { LayerRejected } from '../../layers/errors';
import { serveRanges } from '../../layers/range-port';
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
	// A few decoded tiles, the histogram and the preview's accumulator: not the file, not the band.
	limits: { timeMs: 10 * 60_000, memoryMb: Number(process.env.JOBS_LAYER_MEMORY_MB ?? 512) },
	maxAttempts: 3,
	async handler({ payload, db, store, runInThread, reportProgress, signal }) {
		reportProgress({ step: 'inspecting' });
		const limits = layerLimits(process.env);
		await refusalsFail(() =>
			processLayer(db, store, payload, payload.layerId, limits, async (reader, opts) => {
				const channel = new MessageChannel();
				const stop = serveRanges(channel.port1, reader);
				try {
					const reply = await runInThread<AnalyseReply>('analyseLayer', { port: channel.port2, ...opts }, { transferList: [channel.port2], signal });
					if (!reply.ok) throw new LayerRejected(reply.code as LayerRejected['code'], reply.message);
					return { metadata: reply.metadata, png: reply.png };
				} finally {
					stop();
				}
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
