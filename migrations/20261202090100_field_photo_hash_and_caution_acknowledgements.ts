import type { Knex } from 'knex';

/**
 * Offline field work, the rest of it.
 *
 * - field_task_photos.content_sha256: the SHA-256 of the photo's bytes, so a photo sent again under
 *   the same Idempotency-Key (a queue re-sending after a lost answer) is recognised as the same
 *   request, and another photo under a used key is refused. Null for photos stored before.
 * - field_caution_acknowledgements: a technician has read the field cautions of a network on a day
 *   (the UTC date of the moment they acknowledged, which a phone with no signal sends later). One
 *   row per user, network and day; the first acknowledgement of the day is the one kept.
 */
export async function up(knex: Knex): Promise<void> {
	await knex.schema.alterTable('field_task_photos', (t) => {
		t.specificType('content_sha256', 'CHAR(64)').nullable();
	});
	await knex.schema.createTable('field_caution_acknowledgements', (t) => {
		t.bigIncrements('id').primary();
		t.integer('user_id').unsigned().notNullable().references('users.id').onDelete('CASCADE');
		t.integer('network_id').unsigned().notNullable().references('networks.id').onDelete('CASCADE');
		t.date('day').notNullable();
		// When the technician acknowledged (the phone's clock, checked against the server's), and when it arrived.
		t.timestamp('acknowledged_at', { precision: 3 }).notNullable();
		t.timestamp('created_at', { precision: 3 }).notNullable().defaultTo(knex.raw('CURRENT_TIMESTAMP(3)'));
		t.unique(['user_id', 'network_id', 'day']);
		t.index(['network_id', 'day']);
	});
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTable('field_caution_acknowledgements');
	await knex.schema.alterTable('field_task_photos', (t) => {
		t.dropColumn('content_sha256');
	});
}
