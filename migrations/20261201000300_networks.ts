import type { Knex } from 'knex';

export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('networks', (t) => {
		t.increments('id').primary();
		t.integer('organisation_id').unsigned().notNullable().references('organisations.id').onDelete('CASCADE');
		t.string('slug', 64).notNullable();
		t.string('name', 200).notNullable();
		t.text('description').notNullable();
		// Working CRS for placement (a projected EPSG code, metres); null = choose from the data.
		t.integer('crs_epsg').unsigned().nullable();
		// GeoJSON (RFC 7946, WGS 84) MultiPolygon geometries.
		t.json('study_area').nullable();
		t.json('exclusions').nullable();
		t.enu('publication', ['private', 'published']).notNullable().defaultTo('private');
		t.text('public_text').notNullable();
		// Optimistic concurrency: every update bumps it and checks the one it read.
		t.integer('version').unsigned().notNullable().defaultTo(1);
		t.integer('created_by').unsigned().nullable().references('users.id').onDelete('SET NULL');
		t.timestamp('created_at').notNullable().defaultTo(knex.fn.now());
		t.timestamp('updated_at').notNullable().defaultTo(knex.fn.now());
		t.unique(['organisation_id', 'slug']);
	});
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTable('networks');
}
