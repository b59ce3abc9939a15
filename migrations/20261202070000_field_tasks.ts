import type { Knex } from 'knex';

/**
 * Field work and the public map.
 *
 * - field_tasks: one move, installation or removal of an approved plan, with its target, the
 *   assigned technician and route order, its state (open → started → done | blocked; cancelled
 *   when a newer plan supersedes it) and what the technician recorded (as-installed position with
 *   its accuracy, the offset from the target and whether it exceeds the network's tolerance).
 * - field_task_updates: every state change a technician sent, keyed by the client's idempotency
 *   key (unique per network), with the answer it got: the same key again returns that answer.
 * - networks: the installation tolerance (metres, default 10) and the public map's
 *   generalisation grid (metres; null = exact positions). A published slug is unique across
 *   organisations, since /map/{slug} names no organisation.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('field_tasks', (t) => {
		t.increments('id').primary();
		t.integer('network_id').unsigned().notNullable().references('networks.id').onDelete('CASCADE');
		t.integer('plan_id').unsigned().notNullable().references('plans.id').onDelete('CASCADE');
		t.enu('kind', ['move', 'install', 'remove']).notNullable();
		// The inventory's sensor (null for an installation until it is done).
		t.integer('sensor_id').unsigned().nullable().references('sensors.id').onDelete('SET NULL');
		t.string('sensor_code', 64).notNullable();
		t.integer('sensor_type_id').unsigned().nullable().references('sensor_types.id').onDelete('SET NULL');
		// The plan's site id for moves and installations.
		t.string('site', 64).nullable();
		t.double('from_lon').nullable();
		t.double('from_lat').nullable();
		t.double('target_lon').notNullable();
		t.double('target_lat').notNullable();
		// Working-CRS metres of the point a route visits (the move's midpoint, else the target).
		t.double('route_x').notNullable();
		t.double('route_y').notNullable();
		// Geodesic distance (m) and initial bearing (degrees from true north) from → target; null without a from.
		t.double('distance_m').nullable();
		t.double('bearing_deg').nullable();
		t.enu('state', ['open', 'started', 'done', 'blocked', 'cancelled']).notNullable().defaultTo('open');
		t.integer('assignee_id').unsigned().nullable().references('users.id').onDelete('SET NULL');
		t.integer('route_order').unsigned().nullable();
		t.text('blocked_reason').nullable();
		t.text('note').notNullable();
		t.text('cancel_reason').nullable();
		t.double('installed_lon').nullable();
		t.double('installed_lat').nullable();
		t.double('installed_accuracy_m').nullable();
		t.double('offset_m').nullable();
		t.boolean('offset_flagged').notNullable().defaultTo(false);
		t.integer('version').unsigned().notNullable().defaultTo(1);
		t.timestamp('created_at', { precision: 3 }).notNullable().defaultTo(knex.raw('CURRENT_TIMESTAMP(3)'));
		t.timestamp('updated_at', { precision: 3 }).notNullable().defaultTo(knex.raw('CURRENT_TIMESTAMP(3)'));
		t.timestamp('done_at', { precision: 3 }).nullable();
		t.index(['network_id', 'plan_id', 'state']);
		t.index(['network_id', 'assignee_id', 'state']);
	});

	await knex.schema.createTable('field_task_updates', (t) => {
		t.bigIncrements('id').primary();
		t.integer('network_id').unsigned().notNullable().references('networks.id').onDelete('CASCADE');
		t.integer('task_id').unsigned().notNullable().references('field_tasks.id').onDelete('CASCADE');
		t.string('idempotency_key', 200).notNullable();
		t.specificType('request_hash', 'CHAR(64)').notNullable();
		t.integer('user_id').unsigned().nullable().references('users.id').onDelete('SET NULL');
		t.string('from_state', 16).notNullable();
		t.string('to_state', 16).notNullable();
		t.integer('status').unsigned().notNullable();
		t.json('response').notNullable();
		t.timestamp('created_at', { precision: 3 }).notNullable().defaultTo(knex.raw('CURRENT_TIMESTAMP(3)'));
		t.unique(['network_id', 'idempotency_key']);
		t.index(['task_id', 'id']);
	});

	await knex.schema.alterTable('networks', (t) => {
		t.double('install_tolerance_m').notNullable().defaultTo(10);
		t.double('public_grid_m').nullable();
	});
	await knex.raw("ALTER TABLE networks ADD COLUMN published_slug VARCHAR(64) AS (IF(publication = 'published', slug, NULL)) PERSISTENT, ADD UNIQUE KEY networks_published_slug (published_slug)");
}

export async function down(knex: Knex): Promise<void> {
	await knex.raw('ALTER TABLE networks DROP INDEX networks_published_slug, DROP COLUMN published_slug');
	await knex.schema.alterTable('networks', (t) => {
		t.dropColumn('public_grid_m');
		t.dropColumn('install_tolerance_m');
	});
	await knex.schema.dropTable('field_task_updates');
	await knex.schema.dropTable('field_tasks');
}
