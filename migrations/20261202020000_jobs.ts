import type { Knex } from 'knex';

/**
 * The durable job queue: one row per job. Workers claim rows with SELECT … FOR UPDATE SKIP LOCKED
 * and hold them with a lease (lease_owner, lease_until) that they renew while they work; a job
 * whose lease ran out is claimed again. Times are the database's own clock (DATETIME(3), UTC), so
 * workers on other machines agree on them.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('jobs', (t) => {
		t.bigIncrements('id').primary();
		t.string('kind', 64).notNullable();
		t.integer('network_id').unsigned().nullable().references('networks.id').onDelete('CASCADE');
		t.json('payload').notNullable();
		t.enu('state', ['queued', 'running', 'finished', 'failed', 'cancelled']).notNullable().defaultTo('queued');
		t.integer('priority').notNullable().defaultTo(0);
		t.integer('attempts').unsigned().notNullable().defaultTo(0);
		t.integer('max_attempts').unsigned().notNullable().defaultTo(3);
		t.specificType('run_after', 'DATETIME(3)').notNullable().defaultTo(knex.raw('CURRENT_TIMESTAMP(3)'));
		t.string('lease_owner', 120).nullable();
		t.specificType('lease_until', 'DATETIME(3)').nullable();
		t.boolean('cancel_requested').notNullable().defaultTo(false);
		t.json('progress').nullable();
		t.json('result').nullable();
		t.string('error', 1000).nullable();
		t.string('idempotency_key', 191).nullable().unique();
		t.integer('created_by').unsigned().nullable().references('users.id').onDelete('SET NULL');
		t.specificType('created_at', 'DATETIME(3)').notNullable().defaultTo(knex.raw('CURRENT_TIMESTAMP(3)'));
		t.specificType('started_at', 'DATETIME(3)').nullable();
		t.specificType('finished_at', 'DATETIME(3)').nullable();
		t.specificType('updated_at', 'DATETIME(3)').notNullable().defaultTo(knex.raw('CURRENT_TIMESTAMP(3)'));
		// The claim query: queued jobs due now, and running jobs whose lease ran out.
		t.index(['state', 'run_after', 'priority'], 'jobs_claim');
		t.index(['state', 'lease_until'], 'jobs_lease');
		t.index(['network_id', 'kind', 'created_at'], 'jobs_network_kind');
	});
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTableIfExists('jobs');
}
