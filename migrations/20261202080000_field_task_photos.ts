import type { Knex } from 'knex';

/**
 * Photos a technician takes for a field task. The image lives in the object store under
 * `object_key`; this row is its link to the task, written in one transaction with the audit entry.
 * `idempotency_key` (optional, unique per network) lets a device send the same photo again after
 * a lost answer without storing it twice.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('field_task_photos', (t) => {
		t.increments('id').primary();
		t.integer('network_id').unsigned().notNullable().references('networks.id').onDelete('CASCADE');
		t.integer('task_id').unsigned().notNullable().references('field_tasks.id').onDelete('CASCADE');
		t.string('object_key', 512).notNullable().unique();
		t.string('content_type', 32).notNullable();
		t.integer('bytes').unsigned().notNullable();
		t.integer('width').unsigned().notNullable();
		t.integer('height').unsigned().notNullable();
		t.string('idempotency_key', 200).nullable();
		t.integer('user_id').unsigned().nullable().references('users.id').onDelete('SET NULL');
		t.timestamp('created_at', { precision: 3 }).notNullable().defaultTo(knex.raw('CURRENT_TIMESTAMP(3)'));
		t.unique(['network_id', 'idempotency_key']);
		t.index(['task_id', 'id']);
	});
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTable('field_task_photos');
}
