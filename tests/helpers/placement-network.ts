/**
 * A network ready for placement runs, built through the same services that uploads use, from the
 * demo files in data/demo: study area, exclusions, the soil-moisture layer, a one-layer recipe in
 * use, the sub-catchment zone set in use (shares measured), the two sensor types and the 14
 * sensors. For integration tests (their own database) and end-to-end tests (the app's database
 * and object store).
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { Readable } from 'node:stream';
import type { Knex } from 'knex';
import { createNetwork } from '../../src/lib/server/services/networks';
import { findNetwork, type NetworkRow } from '../../src/lib/server/repositories/networks';
import { uploadLayer } from '../../src/lib/server/services/layers';
import { saveRecipeVersion, useRecipeVersion } from '../../src/lib/server/services/importance';
import { parseAreaUpload, setArea } from '../../src/lib/server/services/areas';
import { createUploadedZoneSet, importanceForZones, useZoneSet } from '../../src/lib/server/services/zones';
import { importSensors } from '../../src/lib/server/services/sensors';
import type { ObjectStore } from '../../src/lib/server/storage/object-store';
import { seedDemoInventory } from '../../seeds/demo-inventory';

export const demoPath = (f: string) => path.resolve(import.meta.dirname, '../../data/demo', f);
const demoText = (f: string) => readFileSync(demoPath(f), 'utf8');

export interface PlacementNetwork {
	network: NetworkRow;
	layerId: number;
	recipeVersionId: number;
	zoneSetId: number;
}

export async function placementNetwork(db: Knex, store: ObjectStore, organisationId: number, analystId: number, name: string): Promise<PlacementNetwork> {
	const id = await createNetwork(db, organisationId, analystId, { name, description: '', crsEpsg: null, publicText: '' });
	await setArea(db, id, analystId, 1, parseAreaUpload('studyArea', demoText('study-area.geojson'), 'study-area.geojson'));
	await setArea(db, id, analystId, 2, parseAreaUpload('exclusions', demoText('exclusions.geojson'), 'exclusions.geojson'));
	const ctx = { networkId: id, organisationId, actorId: analystId };
	const layer = await uploadLayer(db, store, ctx, { name: 'Soil moisture', kind: 'soil_moisture', fileName: 'soil-moisture.tif' }, Readable.from([readFileSync(demoPath('soil-moisture.tif'))]), { maxBytes: 10 * 1024 * 1024, maxPixels: 25_000_000 });
	const v = await saveRecipeVersion(db, store, id, organisationId, analystId, { name: 'Dry ground', definition: { layers: [{ layerId: String(layer.id), transform: 'invert', weight: 1 }] } });
	await useRecipeVersion(db, id, organisationId, analystId, v.id);
	let network = (await findNetwork(db, id))!;
	const zoneSetId = await createUploadedZoneSet(db, network, analystId, 'Sub-catchments', demoText('zones.geojson'), 'zones.geojson', await importanceForZones(db, store, network));
	await useZoneSet(db, network, analystId, zoneSetId);
	await seedDemoInventory(db, id);
	network = (await findNetwork(db, id))!;
	const outcome = await importSensors(db, network, analystId, demoText('sensors.csv'), 'csv', 'sensors.csv');
	if (!outcome.ok) throw new Error('the demo sensors do not import');
	return { network: (await findNetwork(db, id))!, layerId: layer.id, recipeVersionId: v.id, zoneSetId };
}
