/**
 * A network's working CRS, decided once and stored in networks.working_epsg, so that the sensor
 * table, the map, zones, the engine's working grid and every view of x/y agree.
 *
 * The rule itself is decideWorkingCrs (src/lib/geo/crs.ts): the explicit choice, else the
 * importance grid's own CRS when it has ground-true metres, else the UTM zone of the study area's
 * centre (or of the sensors' extent when there is no study area). It is decided again only when one
 * of those inputs changes: the explicit CRS (network edit), the study area, the recipe version in
 * use; those services call settleWorkingCrs inside their own transaction. A network that never went
 * through one of them (older rows) is settled on first use.
 */
import { CrsError, decideWorkingCrs } from '../../geo/crs';
import { boundsOf } from '../../geo/geometry';
import type { Db } from '../db';
import { setWorkingEpsg, workingCrsFacts, type NetworkRow } from '../repositories/networks';
import { asMultiPolygon } from '../../geo/polygons';

/** Decide the network's working CRS from its current facts and store it; null when nothing has a position. */
export async function settleWorkingCrs(db: Db, networkId: number): Promise<number | null> {
	const facts = await workingCrsFacts(db, networkId);
	if (!facts) return null;
	const epsg = decideFromFacts(facts);
	await setWorkingEpsg(db, networkId, epsg);
	return epsg;
}

/**
 * The working CRS the network would have with a recipe version of grid CRS `gridEpsg` in use (the
 * same rule; nothing stored): where a version's map image is drawn before anyone chooses it.
 */
export async function workingCrsWith(db: Db, networkId: number, gridEpsg: number | null): Promise<number | null> {
	const facts = await workingCrsFacts(db, networkId);
	return facts ? decideFromFacts({ ...facts, gridEpsg }) : null;
}

function decideFromFacts(facts: NonNullable<Awaited<ReturnType<typeof workingCrsFacts>>>): number | null {
	const area = asMultiPolygon(facts.studyArea);
	const box = (area && boundsOf([], area.coordinates)) ?? facts.sensorBox;
	const centreLonLat: [number, number] | null = box ? [(box[0] + box[2]) / 2, (box[1] + box[3]) / 2] : null;
	try {
		return decideWorkingCrs({ explicit: facts.crsEpsg, gridEpsg: facts.gridEpsg, centreLonLat });
	} catch (e) {
		// Outside the UTM grid (polar) with no explicit choice: no working CRS until one is chosen.
		if (e instanceof CrsError) return null;
		throw e;
	}
}

/** The network's working CRS (EPSG code), deciding and storing it the first time; null when it cannot be decided yet. */
export async function workingCrs(db: Db, network: Pick<NetworkRow, 'id' | 'working_epsg'>): Promise<number | null> {
	return network.working_epsg ?? (await settleWorkingCrs(db, network.id));
}
