import type { Knex } from 'knex';

/**
 * What an analyst prepares before any placement: raster layers, importance recipes (immutable
 * versions), sensor types and sensors, zone sets with their zones. Geometry is GeoJSON (RFC 7946,
 * WGS 84) in JSON columns; sensors also keep a POINT with a spatial index for map queries.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('layers', (t) => {
		t.increments('id').primary();
		t.integer('network_id').unsigned().notNullable().references('networks.id').onDelete('CASCADE');
		t.string('name', 200).notNullable();
		t.enu('kind', ['soil_moisture', 'vegetation_index', 'elevation', 'other']).notNullable();
		t.string('units', 50).notNullable().defaultTo('');
		t.date('acquired_on').nullable();
		t.enu('platform', ['satellite', 'aircraft', 'drone', 'model', 'other']).notNullable().defaultTo('other');
		t.enu('status', ['uploading', 'processing', 'ready', 'failed']).notNullable().defaultTo('uploading');
		t.string('error', 500).nullable();
		t.string('original_name', 255).notNullable().defaultTo('');
		t.bigInteger('size_bytes').unsigned().notNullable().defaultTo(0);
		t.string('storage_key', 200).nullable();
		t.string('preview_key', 200).nullable();
		t.integer('band').unsigned().notNullable().defaultTo(1);
		t.integer('width').unsigned().nullable();
		t.integer('height').unsigned().nullable();
		t.integer('band_count').unsigned().nullable();
		t.integer('epsg').unsigned().nullable();
		t.double('resolution_x').nullable();
		t.double('resolution_y').nullable();
		t.double('nodata').nullable();
		t.json('footprint').nullable();
		t.json('transform').nullable();
		t.double('stat_min').nullable();
		t.double('stat_max').nullable();
		t.double('stat_mean').nullable();
		t.double('stat_std').nullable();
		t.bigInteger('valid_count').unsigned().nullable();
		t.json('histogram').nullable();
		t.integer('created_by').unsigned().nullable().references('users.id').onDelete('SET NULL');
		t.timestamp('created_at').notNullable().defaultTo(knex.fn.now());
		t.timestamp('updated_at').notNullable().defaultTo(knex.fn.now());
		t.index(['network_id', 'created_at']);
	});

	await knex.schema.createTable('importance_recipes', (t) => {
		t.increments('id').primary();
		t.integer('network_id').unsigned().notNullable().references('networks.id').onDelete('CASCADE');
		t.string('name', 200).notNullable();
		t.integer('latest_version').unsigned().notNullable().defaultTo(0);
		t.timestamp('created_at').notNullable().defaultTo(knex.fn.now());
		t.unique(['network_id', 'name']);
	});
	// Each version is immutable: a later proposal cites exactly the one it used.
	await knex.schema.createTable('importance_recipe_versions', (t) => {
		t.increments('id').primary();
		t.integer('recipe_id').unsigned().notNullable().references('importance_recipes.id').onDelete('CASCADE');
		t.integer('version').unsigned().notNullable();
		t.json('definition').notNullable();
		t.string('note', 500).notNullable().defaultTo('');
		t.string('surface_key', 200).nullable();
		t.integer('created_by').unsigned().nullable().references('users.id').onDelete('SET NULL');
		t.timestamp('created_at').notNullable().defaultTo(knex.fn.now());
		t.unique(['recipe_id', 'version']);
	});

	await knex.schema.createTable('sensor_types', (t) => {
		t.increments('id').primary();
		t.integer('network_id').unsigned().notNullable().references('networks.id').onDelete('CASCADE');
		t.string('name', 100).notNullable();
		t.double('radius_m').notNullable();
		t.enu('mobility', ['fixed', 'relocatable', 'mobile']).notNullable();
		// Person-minutes to move one sensor of this type, for planning field work.
		t.integer('relocation_minutes').unsigned().nullable();
		t.string('notes', 1000).notNullable().defaultTo('');
		t.timestamp('created_at').notNullable().defaultTo(knex.fn.now());
		t.unique(['network_id', 'name']);
	});

	await knex.schema.createTable('sensors', (t) => {
		t.increments('id').primary();
		t.integer('network_id').unsigned().notNullable().references('networks.id').onDelete('CASCADE');
		t.string('code', 64).notNullable();
		t.string('serial', 100).notNullable().defaultTo('');
		t.integer('sensor_type_id').unsigned().notNullable().references('sensor_types.id').onDelete('RESTRICT');
		t.double('lon').notNullable();
		t.double('lat').notNullable();
		t.specificType('position', 'POINT REF_SYSTEM_ID=4326 NOT NULL');
		t.enu('status', ['active', 'faulty', 'retired']).notNullable().defaultTo('active');
		t.date('installed_on').nullable();
		t.text('notes').notNullable();
		t.integer('version').unsigned().notNullable().defaultTo(1);
		t.timestamp('created_at').notNullable().defaultTo(knex.fn.now());
		t.timestamp('updated_at').notNullable().defaultTo(knex.fn.now());
		t.unique(['network_id', 'code']);
		t.index(['network_id', 'status']);
	});
	await knex.raw('CREATE SPATIAL INDEX sensors_position_sidx ON sensors (position)');

	await knex.schema.createTable('zone_sets', (t) => {
		t.increments('id').primary();
		t.integer('network_id').unsigned().notNullable().references('networks.id').onDelete('CASCADE');
		t.string('name', 200).notNullable();
		t.enu('kind', ['uploaded', 'grid', 'computed']).notNullable();
		t.json('params').nullable();
		t.integer('recipe_version_id').unsigned().nullable().references('importance_recipe_versions.id').onDelete('SET NULL');
		t.integer('created_by').unsigned().nullable().references('users.id').onDelete('SET NULL');
		t.timestamp('created_at').notNullable().defaultTo(knex.fn.now());
	});
	await knex.schema.createTable('zones', (t) => {
		t.increments('id').primary();
		t.integer('zone_set_id').unsigned().notNullable().references('zone_sets.id').onDelete('CASCADE');
		t.string('code', 64).notNullable();
		t.string('name', 200).notNullable().defaultTo('');
		t.json('geometry').notNullable();
		// Share of the importance mass in this zone (0..1), for the recipe version the set was measured with.
		t.double('importance_share').nullable();
		t.unique(['zone_set_id', 'code']);
	});

	await knex.schema.alterTable('networks', (t) => {
		// What the network currently works with; placement runs copy these into their revisions.
		t.integer('recipe_version_id').unsigned().nullable().references('importance_recipe_versions.id').onDelete('SET NULL');
		t.integer('zone_set_id').unsigned().nullable().references('zone_sets.id').onDelete('SET NULL');
	});
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.alterTable('networks', (t) => {
		t.dropForeign(['zone_set_id']);
		t.dropForeign(['recipe_version_id']);
		t.dropColumn('zone_set_id');
		t.dropColumn('recipe_version_id');
	});
	await knex.schema.dropTable('zones');
	await knex.schema.dropTable('zone_sets');
	await knex.schema.dropTable('sensors');
	await knex.schema.dropTable('sensor_types');
	await knex.schema.dropTable('importance_recipe_versions');
	await knex.schema.dropTable('importance_recipes');
	await knex.schema.dropTable('layers');
}
