/**
 * What a sensor type senses: `point` (a probe that senses centimetres around its rods; its radius
 * is the analyst's choice of how far one probe speaks for) or `area` (a large-footprint sensor such
 * as a cosmic-ray neutron sensor, whose radius is a physical footprint). The public map draws the
 * two with their own symbols. Existing types with a radius of 100 m or more are taken as area
 * sensors, the rule the public map used until now.
 */
import type { Knex } from 'knex';

export async function up(knex: Knex): Promise<void> {
	await knex.schema.alterTable('sensor_types', (t) => {
		t.enu('footprint', ['point', 'area']).notNullable().defaultTo('point');
	});
	await knex('sensor_types').where('radius_m', '>=', 100).update({ footprint: 'area' });
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.alterTable('sensor_types', (t) => {
		t.dropColumn('footprint');
	});
}
