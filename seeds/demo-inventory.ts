/**
 * The two demo sensor types of a network (idempotent: check, then insert).
 *  - soil moisture probe: a point probe senses a few centimetres around its rods (Ferré et al. 1998,
 *    WRR); its siting radius is what it represents, a user setting set by what the spatial
 *    correlation of the soil moisture allows (common practice, no source): tens of metres in a
 *    field, more across a catchment. The demo's moisture varies over kilometres (data/demo: a
 *    valley about 4 km wide, value noise on a 9 km lattice), so the demo analyst lets a probe stand
 *    for the ground within 1 km (demo value, invented). With 30 m, 14 sensors over the 490 km²
 *    catchment would represent about 0.01 % of it and a range-limited run could not move them.
 *    Relocatable; 45 person-minutes to dig out, move and reinstall one probe (demo value, invented).
 *  - cosmic-ray neutron sensor: horizontal sensing radius about 130–240 m (Köhli et al. 2015,
 *    WRR); 150 m as a default. Fixed (a mast with power), relocation effort left empty.
 */
import type { Knex } from 'knex';

export const DEMO_SENSOR_TYPES = [
	{ name: 'soil moisture probe', radius_m: 1000, footprint: 'point', mobility: 'relocatable', relocation_minutes: 45, notes: 'Representative radius set by the analyst: the demo soil moisture varies over kilometres. The probe itself senses a few centimetres.' },
	{ name: 'cosmic-ray neutron sensor', radius_m: 150, footprint: 'area', mobility: 'fixed', relocation_minutes: null, notes: 'Sensing radius about 130–240 m, shrinking in wetter soil (Köhli et al. 2015).' }
] as const;

export async function seedDemoInventory(knex: Knex | Knex.Transaction, networkId: number): Promise<void> {
	for (const t of DEMO_SENSOR_TYPES) {
		const found = await knex('sensor_types').select('id').where({ network_id: networkId, name: t.name }).first();
		if (!found) await knex('sensor_types').insert({ ...t, network_id: networkId });
	}
}
