import type { Knex } from 'knex';

/**
 * The working CRS decided once per network (services/working-crs.ts) and stored, so that the map,
 * the sensor table, zones and placement all use the same one; and the CRS of each recipe version's
 * importance grid, one of the inputs of that decision.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.alterTable('networks', (t) => {
		// Projected EPSG code in metres; null = not decided yet (nothing with a position).
		t.integer('working_epsg').unsigned().nullable();
	});
	await knex.schema.alterTable('importance_recipe_versions', (t) => {
		t.integer('grid_epsg').unsigned().nullable();
	});
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.alterTable('importance_recipe_versions', (t) => {
		t.dropColumn('grid_epsg');
	});
	await knex.schema.alterTable('networks', (t) => {
		t.dropColumn('working_epsg');
	});
}
