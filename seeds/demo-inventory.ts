/**
 * The two demo sensor types of a network (idempotent: check, then insert).
 *  - soil moisture probe: a point probe senses a few centimetres around its rods (Ferré et al. 1998,
 *    WRR); 30 m is a representative siting radius set by the user, what the spatial correlation
 *    of a field typically allows (common practice, no source). Relocatable; 45 person-minutes to
 *    dig out, move and reinstall one probe (demo value, invented).
 *  - cosmic-ray neutron sensor: horizontal sensing radius about 130–240 m (Köhli et al. 2015,
 *    WRR); 150 m as a default. Fixed (a mast with power), relocation effort left empty.
 */
import type { Knex } from 'knex';

export const DEMO_SENSOR_TYPES = [
	{ name: 'soil moisture probe', radius_m: 30, mobility: 'relocatable', relocation_minutes: 45, notes: 'Representative radius set by the analyst; the probe itself senses a few centimetres.' },
	{ name: 'cosmic-ray neutron sensor', radius_m: 150, mobility: 'fixed', relocation_minutes: null, notes: 'Sensing radius about 130–240 m, shrinking in wetter soil (Köhli et al. 2015).' }
] as const;

export async function seedDemoInventory(knex: Knex | Knex.Transaction, networkId: number): Promise<void> {
	for (const t of DEMO_SENSOR_TYPES) {
		const found = await knex('sensor_types').select('id').where({ network_id: networkId, name: t.name }).first();
		if (!found) await knex('sensor_types').insert({ ...t, network_id: networkId });
	}
}
