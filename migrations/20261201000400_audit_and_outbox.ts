import type { Knex } from 'knex';

export async function up(knex: Knex): Promise<void> {
	await knex.schema.createTable('audit_log', (t) => {
		t.bigIncrements('id').primary();
		t.integer('organisation_id').unsigned().nullable().references('organisations.id').onDelete('SET NULL');
		t.integer('actor_user_id').unsigned().nullable().references('users.id').onDelete('SET NULL');
		t.string('action', 64).notNullable();
		t.string('object_type', 64).notNullable();
		t.string('object_id', 64).nullable();
		t.json('before').nullable();
		t.json('after').nullable();
		t.timestamp('created_at', { precision: 3 }).notNullable().defaultTo(knex.raw('CURRENT_TIMESTAMP(3)'));
		t.index(['organisation_id', 'created_at']);
		t.index(['object_type', 'object_id']);
	});
	// E-mail is written here in the same transaction as the change that causes it, then delivered.
	await knex.schema.createTable('outbox_messages', (t) => {
		t.bigIncrements('id').primary();
		t.string('to_address', 254).notNullable();
		t.string('subject', 300).notNullable();
		t.text('text_body').notNullable();
		t.text('html_body').nullable();
		t.enu('status', ['pending', 'sent', 'failed']).notNullable().defaultTo('pending');
		t.integer('attempts').unsigned().notNullable().defaultTo(0);
		t.text('last_error').nullable();
		t.timestamp('created_at', { precision: 3 }).notNullable().defaultTo(knex.raw('CURRENT_TIMESTAMP(3)'));
		t.timestamp('sent_at').nullable();
		t.index(['status', 'id']);
	});
}

export async function down(knex: Knex): Promise<void> {
	await knex.schema.dropTable('outbox_messages');
	await knex.schema.dropTable('audit_log');
}
